import { useSyncExternalStore } from 'react';

/** Whether this device can reach Holdpoint, and since when it could not. */
export interface ConnectionState {
  online: boolean;
  /** When the device went offline (ms since epoch); null while online. */
  offlineSince: number | null;
  /** When the connection last came back (ms since epoch); null until it has been lost once. */
  backOnlineAt: number | null;
}

const browserOnline = () => (typeof navigator === 'undefined' ? true : navigator.onLine !== false);

let state: ConnectionState = { online: browserOnline(), offlineSince: browserOnline() ? null : Date.now(), backOnlineAt: null };
const listeners = new Set<() => void>();

function set(next: ConnectionState) {
  state = next;
  for (const l of listeners) l();
}

/** A request failed without an answer (no signal, server out of reach): the device counts as offline. */
export function markOffline(at = Date.now()) {
  if (!state.online) return;
  set({ online: false, offlineSince: at, backOnlineAt: state.backOnlineAt });
}

/** An answer arrived, or the browser says the network is back. */
export function markOnline(at = Date.now()) {
  if (state.online || !browserOnline()) return;
  set({ online: true, offlineSince: null, backOnlineAt: at });
}

export const getConnection = () => state;
export const isOnline = () => state.online;

export function subscribeConnection(listener: () => void) {
  listeners.add(listener);
  return () => listeners.delete(listener);
}

if (typeof window !== 'undefined') {
  window.addEventListener('offline', () => markOffline());
  window.addEventListener('online', () => markOnline());
}

export const useConnection = () => useSyncExternalStore(subscribeConnection, getConnection, getConnection);
