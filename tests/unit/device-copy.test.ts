import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { QueryClient } from '@tanstack/react-query';

// The device's key–value store, kept in memory here: what matters is what the copy holds and when.
const stored = new Map<string, string>();
vi.mock('@client/lib/outbox/device-store', () => ({
  cacheStorage: {
    getItem: async (key: string) => stored.get(key) ?? null,
    setItem: async (key: string, value: string) => void stored.set(key, value),
    removeItem: async (key: string) => void stored.delete(key),
  },
}));

const KEY = 'holdpoint-queries';
const permitKey = ['permits', 'p-1'];
const settle = () => new Promise((done) => setTimeout(done, 20));
const keptVersion = () => (JSON.parse(stored.get(KEY) ?? 'null') as { clientState: { queries: { queryKey: unknown[]; state: { data: { version: number } } }[] } } | null)?.clientState.queries.find((q) => q.queryKey[1] === 'p-1')?.state.data.version;

describe('the copy of permits kept on the device', () => {
  let stops: (() => void)[] = [];
  beforeEach(() => {
    stored.clear();
    vi.stubGlobal('navigator', { onLine: true });
    vi.stubGlobal('window', new EventTarget());
    vi.stubGlobal('document', Object.assign(new EventTarget(), { visibilityState: 'visible' }));
  });
  afterEach(() => {
    for (const stop of stops) stop();
    stops = [];
    vi.unstubAllGlobals();
  });

  it('FIXB 1: when the page is left within a second of a change, then the copy on the device already holds the change', async () => {
    const { startPersistence } = await import('@client/lib/query-persistence');
    const client = new QueryClient();
    stops.push(await startPersistence(client));
    client.setQueryData(permitKey, { version: 1 });
    await settle();
    client.setQueryData(permitKey, { version: 2 });
    await settle();
    // The person reloads at once (pagehide), before the once-a-second write comes round.
    window.dispatchEvent(new Event('pagehide'));
    await settle();
    expect(keptVersion()).toBe(2);
  });

  it('FIXB 1: when a reload with a connection already fetches a permit afresh, then the older copy on the device is not put on the screen meanwhile', async () => {
    stored.set(KEY, JSON.stringify({ buster: 'holdpoint-1', timestamp: Date.now(), clientState: { mutations: [], queries: [{ queryKey: permitKey, queryHash: JSON.stringify(permitKey), state: { data: { version: 1 }, dataUpdateCount: 1, dataUpdatedAt: Date.now() - 5_000, error: null, errorUpdateCount: 0, errorUpdatedAt: 0, fetchFailureCount: 0, fetchFailureReason: null, fetchMeta: null, isInvalidated: false, status: 'success', fetchStatus: 'idle' } }] } }));
    const { startPersistence } = await import('@client/lib/query-persistence');
    const client = new QueryClient();
    // The permit page asks the server for the permit as it is now; the answer has not come yet.
    let answer: (v: { version: number }) => void = () => undefined;
    const fresh = client.fetchQuery({ queryKey: permitKey, queryFn: () => new Promise<{ version: number }>((done) => (answer = done)) });
    stops.push(await startPersistence(client));
    expect(client.getQueryData(permitKey)).toBeUndefined();
    answer({ version: 2 });
    await fresh;
    expect(client.getQueryData(permitKey)).toEqual({ version: 2 });
  });

  it('when there is no connection at start, then the copy on the device is shown', async () => {
    vi.stubGlobal('navigator', { onLine: false });
    stored.set(KEY, JSON.stringify({ buster: 'holdpoint-1', timestamp: Date.now(), clientState: { mutations: [], queries: [{ queryKey: permitKey, queryHash: JSON.stringify(permitKey), state: { data: { version: 1 }, dataUpdateCount: 1, dataUpdatedAt: Date.now() - 5_000, error: null, errorUpdateCount: 0, errorUpdatedAt: 0, fetchFailureCount: 0, fetchFailureReason: null, fetchMeta: null, isInvalidated: false, status: 'success', fetchStatus: 'idle' } }] } }));
    const { startPersistence } = await import('@client/lib/query-persistence');
    const client = new QueryClient();
    stops.push(await startPersistence(client));
    expect(client.getQueryData(permitKey)).toEqual({ version: 1 });
  });
});
