import { StrictMode } from 'react';
import { createRoot } from 'react-dom/client';
import { RouterProvider } from 'react-router-dom';
import '@fontsource/noto-sans/400.css';
import '@fontsource/noto-sans/600.css';
import '@fontsource/noto-sans/700.css';
import './index.css';
import './app/prefetch-me';
import { AppProviders } from './app/providers';
import { router } from './app/router';

createRoot(document.getElementById('root')!).render(
  <StrictMode>
    <AppProviders>
      <RouterProvider router={router} />
    </AppProviders>
  </StrictMode>,
);

// The service worker and its update prompt: loaded a moment after the page, off the first screen's path.
if (import.meta.env.PROD)
  window.addEventListener('load', () => setTimeout(() => void import('./app/app-update').then((m) => m.registerAppShell()), 1_500), { once: true });
