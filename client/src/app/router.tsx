import { createBrowserRouter, type RouteObject } from 'react-router-dom';

const page = (load: () => Promise<{ default: React.ComponentType }>) => async () => ({ Component: (await load()).default });

/** Routes inside the signed-in shell; features add theirs here (each page is its own lazy chunk). */
const appRoutes: RouteObject[] = [
  { index: true, lazy: page(() => import('./routes/overview')) },
  { path: 'admin/users', lazy: page(() => import('@client/features/admin/pages/users-page')) },
  { path: 'admin/organisations', lazy: page(() => import('@client/features/admin/pages/organisations-page')) },
  { path: 'admin/qualifications', lazy: page(() => import('@client/features/admin/pages/qualifications-page')) },
  { path: 'admin/settings', lazy: page(() => import('@client/features/admin/pages/settings-page')) },
  { path: 'calculator', lazy: page(() => import('@client/features/calculator/pages/calculator-page')) },
  { path: 'permits', lazy: page(() => import('@client/features/permits/pages/permits-page')) },
  { path: 'permits/new', lazy: page(() => import('@client/features/permits/pages/new-permit-page')) },
  {
    // The permit's summary, and its sections one tap away (/permits/:id/<section>), each its own chunk.
    path: 'permits/:id',
    lazy: page(() => import('@client/features/permits/pages/permit-page')),
    children: [
      { index: true, lazy: page(() => import('@client/features/permits/pages/permit-summary')) },
      { path: 'crew', lazy: page(() => import('@client/features/permits/pages/crew-page')) },
      { path: ':section', lazy: page(() => import('@client/features/permits/pages/permit-section-page')) },
    ],
  },
  // Task screens: one task each, for a phone in a gloved hand, one tap from the permit's summary.
  { path: 'permits/:id/gas-test', lazy: page(() => import('@client/features/permits/pages/gas-test-task-page')) },
  { path: 'permits/:id/check', lazy: page(() => import('@client/features/permits/pages/check-task-page')) },
  { path: 'permits/:id/steps/:stepId/:action', lazy: page(() => import('@client/features/permits/pages/step-task-page')) },
  { path: 'permits/:id/edit', lazy: page(() => import('@client/features/permits/pages/edit-permit-page')) },
  { path: 'pipelines', lazy: page(() => import('@client/features/assets/pages/pipelines-page')) },
  { path: 'pipelines/:id', lazy: page(() => import('@client/features/assets/pages/pipeline-page')) },
  { path: 'locks', lazy: page(() => import('@client/features/assets/pages/locks-page')) },
  { path: 'scan', lazy: page(() => import('@client/features/assets/pages/scan-page')) },
  { path: 'scan/:kind/:code', lazy: page(() => import('@client/features/assets/pages/scan-page')) },
  { path: 'board', lazy: page(() => import('@client/features/isolations/pages/board-page')) },
  { path: 'plan', lazy: page(() => import('@client/features/plan/pages/plan-page')) },
  { path: 'instruments', lazy: page(() => import('@client/features/gas-tests/pages/instruments-page')) },
  { path: 'certificates', lazy: page(() => import('@client/features/certificates/pages/certificates-page')) },
  { path: 'certificates/:id', lazy: page(() => import('@client/features/certificates/pages/certificate-page')) },
  { path: 'audit', lazy: page(() => import('@client/features/audit/pages/audit-page')) },
  { path: 'reports', lazy: page(() => import('@client/features/reports/pages/reports-page')) },
  { path: 'outbox', lazy: page(() => import('./routes/outbox')) },
  { path: '*', lazy: page(() => import('./routes/not-found')) },
];

export const router = createBrowserRouter([
  { path: '/sign-in', lazy: page(() => import('@client/features/auth/pages/sign-in')) },
  { path: '/forgot-password', lazy: page(() => import('@client/features/auth/pages/forgot-password')) },
  { path: '/reset-password', lazy: page(() => import('@client/features/auth/pages/reset-password')) },
  { path: '/accept-invitation', lazy: page(() => import('@client/features/auth/pages/accept-invitation')) },
  // The signed-in shell is its own chunk, so the sign-in page loads without it.
  { path: '/', lazy: async () => ({ Component: (await import('./layout')).AppLayout }), children: appRoutes },
]);
