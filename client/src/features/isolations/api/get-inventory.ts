import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { InventoryKind } from '@shared/assets/inventory-state';
import type { InventoryItem } from '@shared/assets/types';
import { api, qs } from '@client/lib/api-client';

const path: Record<InventoryKind, string> = { lock: '/api/locks', tag: '/api/tags' };

/** Locks or tags in the store, to put on an isolation; `q` narrows by number when the store holds more than a page. */
export const getInStoreQueryOptions = (kind: InventoryKind, q = '') =>
  queryOptions({
    // Under the register's 'inventory' key, so applying or removing an isolation refreshes both.
    queryKey: ['inventory', kind, { state: 'in_store', q, pageSize: 200, purpose: 'apply' }],
    queryFn: () => api.get<Page<InventoryItem>>(`${path[kind]}${qs({ state: 'in_store', q, pageSize: 200 })}`),
  });

export const useInStore = (kind: InventoryKind, q = '') => useQuery(getInStoreQueryOptions(kind, q));
