import { createBrowserRouter, type RouteObject } from 'react-router-dom';
import { AppLayout } from './layout';

const page = (load: () => Promise<{ default: React.ComponentType }>) => async () => ({ Component: (await load()).default });

/** Routes inside the signed-in shell; features add theirs here (each page is its own lazy chunk). */
const appRoutes: RouteObject[] = [
  { index: true, lazy: page(() => import('./routes/overview')) },
  { path: 'admin/users', lazy: page(() => import('@client/features/admin/pages/users-page')) },
  { path: 'admin/organisations', lazy: page(() => import('@client/features/admin/pages/organisations-page')) },
  { path: 'admin/qualifications', lazy: page(() => import('@client/features/admin/pages/qualifications-page')) },
  { path: '*', lazy: page(() => import('./routes/not-found')) },
];

export const router = createBrowserRouter([
  { path: '/sign-in', lazy: page(() => import('@client/features/auth/pages/sign-in')) },
  { path: '/forgot-password', lazy: page(() => import('@client/features/auth/pages/forgot-password')) },
  { path: '/reset-password', lazy: page(() => import('@client/features/auth/pages/reset-password')) },
  { path: '/accept-invitation', lazy: page(() => import('@client/features/auth/pages/accept-invitation')) },
  { path: '/', element: <AppLayout />, children: appRoutes },
]);
