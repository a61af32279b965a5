/// <reference types="vite-plugin-pwa/client" />
import { useSyncExternalStore } from 'react';
import { createRoot } from 'react-dom/client';
import { registerSW } from 'virtual:pwa-register';

// 'waiting': a new version is installed and waits for this page's word; 'in-use': another window took it,
// so this page runs the old code until it reloads. Either way only the person reloads: a page that reloaded
// by itself would lose what was typed into a form.
type UpdateState = 'none' | 'waiting' | 'in-use';

let state: UpdateState = 'none';
let reloadAsked = false;
let activateWaiting: (() => Promise<void>) | undefined;
const listeners = new Set<() => void>();
const setState = (next: UpdateState) => {
  state = next;
  for (const listener of listeners) listener();
};
const subscribe = (listener: () => void) => {
  listeners.add(listener);
  return () => listeners.delete(listener);
};

/**
 * Registers the service worker and mounts its update prompt (production builds only). main.tsx loads this
 * module a little after the page has loaded, so neither it nor the worker's download of the app competes
 * with the first screen on a slow link.
 */
export function registerAppShell() {
  if (!('serviceWorker' in navigator)) return;
  const host = document.createElement('div');
  document.body.append(host);
  createRoot(host).render(<AppUpdatePrompt />);
  activateWaiting = registerSW({
    immediate: true,
    onNeedRefresh: () => setState('waiting'),
    onNeedReload: () => (reloadAsked ? window.location.reload() : setState('in-use')),
  });
}

function reloadNow() {
  reloadAsked = true;
  // The waiting worker takes over first; the page reloads when it does (onNeedReload above).
  if (state === 'waiting' && activateWaiting) void activateWaiting();
  else window.location.reload();
}

function AppUpdatePrompt() {
  const current = useSyncExternalStore(subscribe, () => state);
  if (current === 'none') return null;
  return (
    <div role="status" className="fixed inset-x-3 bottom-3 z-50 mx-auto flex max-w-md flex-wrap items-center gap-2 rounded-card bg-brand-strong px-4 py-3 text-white shadow-lg">
      <p className="flex-1 font-medium">A new version of Holdpoint is ready.</p>
      <button type="button" className="min-h-11 rounded-md bg-signal px-4 font-semibold text-brand-strong" onClick={reloadNow}>
        Reload
      </button>
      <button type="button" className="min-h-11 rounded-md border border-white/40 px-3" onClick={() => setState('none')}>
        Later
      </button>
    </div>
  );
}
