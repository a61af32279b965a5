import { QueryClient, type Query } from '@tanstack/react-query';
import type { MeResponse } from '@shared/types/auth';
import { ApiError } from './api-client';

/** How long what a person needs on site is kept on the device. */
export const KEPT_ON_DEVICE_MS = 24 * 60 * 60_000;

export const queryClient = new QueryClient({
  defaultOptions: {
    queries: {
      staleTime: 15_000,
      retry: (count, err) => !(err instanceof ApiError && err.status >= 400 && err.status < 500) && count < 2,
      refetchOnWindowFocus: true,
    },
    // A mutation must run offline too: the queue-aware ones keep their record in the outbox, the others say there is no connection.
    mutations: { networkMode: 'always' },
  },
});

/**
 * What is kept on the device for work without signal (query key prefixes): the person, their permits
 * with details and plans, gas tests, checks and limits, instruments, locks and tags, points, site settings.
 * A query may also opt in with `meta: { persist: true }`.
 */
const keptOnDevice = new Set(['auth', 'permits', 'gas-tests', 'instruments', 'inventory', 'isolation-points', 'attachments', 'meta', 'my-work']);

export function isKeptOnDevice(query: Pick<Query, 'queryKey' | 'meta' | 'state'>): boolean {
  if (query.state.status !== 'success') return false;
  return query.meta?.persist === true || keptOnDevice.has(String(query.queryKey[0]));
}

// Queries not on screen are otherwise dropped after 5 minutes, and with them the device's copy.
for (const prefix of keptOnDevice) queryClient.setQueryDefaults([prefix], { gcTime: KEPT_ON_DEVICE_MS });

export const ME_KEY = ['auth', 'me'] as const;
export const userOf = (data: unknown) => (data as MeResponse | null | undefined)?.user.id ?? null;

/**
 * The copy on the device belongs to one person: when nobody is signed in any more, or someone else is,
 * everything but the "me" answer is dropped (and so its stored copy, which follows the cache).
 */
export function keepCacheToOnePerson(client: QueryClient = queryClient): () => void {
  let owner = userOf(client.getQueryData(ME_KEY));
  return client.getQueryCache().subscribe((event) => {
    if (event.query.queryKey[0] !== ME_KEY[0] || event.query.queryKey[1] !== ME_KEY[1] || event.query.state.status !== 'success') return;
    // Restored from the device at start: whose copy it is.
    if (event.type === 'added') return void (owner = userOf(event.query.state.data));
    if (event.type !== 'updated') return;
    const next = userOf(event.query.state.data);
    if (next === owner) return;
    const had = owner;
    owner = next;
    if (had !== null || next === null) client.removeQueries({ predicate: (q) => q.queryKey[0] !== ME_KEY[0] });
  });
}
