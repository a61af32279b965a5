import { queryOptions, useQuery } from '@tanstack/react-query';
import type { InventoryKind } from '@shared/assets/inventory-state';
import type { ScanResult } from '@shared/types/labels';
import { api } from '@client/lib/api-client';

/** What a scanned lock or tag label opens: the lock or tag, and the isolation and permit it is on now. */
export const getScanQueryOptions = (kind: InventoryKind, code: string) =>
  queryOptions({ queryKey: ['scan', kind, code], queryFn: () => api.get<ScanResult>(`/api/scan/${kind}/${encodeURIComponent(code)}`) });
export const useScan = (kind: InventoryKind, code: string, enabled = true) => useQuery({ ...getScanQueryOptions(kind, code), enabled });
