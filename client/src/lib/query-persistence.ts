import { dehydrate, hydrate, type QueryClient } from '@tanstack/react-query';
import { persistQueryClientSubscribe, type PersistedClient } from '@tanstack/react-query-persist-client';
import { createAsyncStoragePersister } from '@tanstack/query-async-storage-persister';
import { cacheStorage } from './outbox/device-store';
import { isKeptOnDevice, KEPT_ON_DEVICE_MS, ME_KEY, userOf } from './query-client';

const BUSTER = 'holdpoint-1';
const STORAGE_KEY = 'holdpoint-queries';

/**
 * Restores what the device kept (at most a day old) and keeps the copy up to date. Loaded after the
 * first screen, so the sign-in page carries neither this nor the IndexedDB library.
 */
export async function startPersistence(queryClient: QueryClient): Promise<() => void> {
  const persister = createAsyncStoragePersister({ storage: cacheStorage, key: STORAGE_KEY, throttleTime: 1_000 });
  try {
    const kept = await persister.restoreClient();
    if (kept) {
      const stale = kept.buster !== BUSTER || Date.now() - kept.timestamp > KEPT_ON_DEVICE_MS;
      const keptUser = userOf(kept.clientState.queries.find((q) => q.queryKey[0] === ME_KEY[0] && q.queryKey[1] === ME_KEY[1])?.state.data);
      const current = queryClient.getQueryData(ME_KEY);
      // Someone else is signed in by now: the previous person's copy is never shown.
      const otherPerson = current !== undefined && userOf(current) !== keptUser;
      if (stale || otherPerson) await persister.removeClient();
      else {
        // With a connection, an answer the screen already holds or is fetching afresh is newer than the
        // copy: the copy never replaces it (a reload would otherwise show, for a moment, the permit as it
        // was before the last change, and a form or action on it would work on that older version).
        const online = navigator.onLine;
        const cache = queryClient.getQueryCache();
        const queries = online ? kept.clientState.queries.filter((q) => !cache.get(q.queryHash)) : kept.clientState.queries;
        hydrate(queryClient, { ...kept.clientState, queries });
        // What the device kept is for when there is no signal. With a connection, each kept answer is
        // fetched afresh the first time a screen shows it (the copy shows meanwhile), so a reload never
        // keeps showing a permit as it was before the reload.
        const restored = new Set(queries.map((q) => q.queryHash));
        if (online) void queryClient.invalidateQueries({ predicate: (q) => restored.has(q.queryHash) });
      }
    }
  } catch {
    await persister.removeClient();
  }
  const stopSubscribing = persistQueryClientSubscribe({ queryClient, persister, buster: BUSTER, dehydrateOptions: { shouldDehydrateQuery: isKeptOnDevice } });
  // The copy is written at most once a second; a page left (reloaded, closed, put in the background)
  // within that second would keep a copy older than the screen. Write it at once instead.
  const saveNow = () => {
    const copy: PersistedClient = { buster: BUSTER, timestamp: Date.now(), clientState: dehydrate(queryClient, { shouldDehydrateQuery: isKeptOnDevice }) };
    void cacheStorage.setItem(STORAGE_KEY, JSON.stringify(copy)).catch(() => undefined);
  };
  const onHidden = () => {
    if (document.visibilityState === 'hidden') saveNow();
  };
  window.addEventListener('pagehide', saveNow);
  document.addEventListener('visibilitychange', onHidden);
  return () => {
    stopSubscribing();
    window.removeEventListener('pagehide', saveNow);
    document.removeEventListener('visibilitychange', onHidden);
  };
}
