// The device's IndexedDB library loads with the first use of the store, not with the sign-in page.
const load = () => import('./device-db').then((m) => m.deviceDb);

export const deviceDb = load;

/** The key–value storage TanStack Query's persister writes to. */
export const cacheStorage = {
  getItem: async (key: string) => (await (await load()).cache.get(key))?.value ?? null,
  setItem: async (key: string, value: string) => {
    await (await load()).cache.put({ key, value });
  },
  removeItem: async (key: string) => {
    await (await load()).cache.delete(key);
  },
};
