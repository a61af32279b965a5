import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { InventoryInput, InventoryPatch, InventoryQuery } from '@shared/schemas/assets.schema';
import type { InventoryKind } from '@shared/assets/inventory-state';
import type { InventoryItem } from '@shared/assets/types';
import type { PersonOption, UserRow } from '@shared/types/admin';
import { api, qs } from '@client/lib/api-client';

const path: Record<InventoryKind, string> = { lock: '/api/locks', tag: '/api/tags' };

export const getInventoryQueryOptions = (kind: InventoryKind, q: Partial<InventoryQuery>) =>
  queryOptions({ queryKey: ['inventory', kind, q], queryFn: () => api.get<Page<InventoryItem>>(`${path[kind]}${qs(q)}`), placeholderData: keepPreviousData });
export const useInventory = (kind: InventoryKind, q: Partial<InventoryQuery>) => useQuery(getInventoryQueryOptions(kind, q));

export function useCreateInventory(kind: InventoryKind) {
  const qc = useQueryClient();
  return useMutation({ mutationFn: (input: InventoryInput) => api.post<InventoryItem>(path[kind], input), onSuccess: () => qc.invalidateQueries({ queryKey: ['inventory', kind] }) });
}

export function useUpdateInventory(kind: InventoryKind) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, patch }: { id: string; patch: InventoryPatch }) => api.patch<InventoryItem>(`${path[kind]}/${id}`, patch),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['inventory', kind] }),
  });
}

/** People who can hold a lock: only callers who may list people get them (the server decides). */
export const getHoldersQueryOptions = () =>
  queryOptions({
    queryKey: ['inventory', 'holders'],
    queryFn: async (): Promise<PersonOption[]> => {
      const page = await api.get<Page<UserRow>>('/api/users?pageSize=200');
      return [...new Map(page.items.map((p) => [p.userId, { userId: p.userId, name: p.name }])).values()];
    },
    staleTime: 5 * 60_000,
  });
export const useHolders = (enabled: boolean) => useQuery({ ...getHoldersQueryOptions(), enabled });
