import { queryOptions, useQuery } from '@tanstack/react-query';
import type { IsolationStepSummary } from '@shared/types/isolations';
import { api } from '@client/lib/api-client';

export const permitIsolationsKey = (permitId: string) => ['permits', 'detail', permitId, 'isolations'] as const;

export const getPermitIsolationsQueryOptions = (permitId: string) =>
  queryOptions({
    queryKey: permitIsolationsKey(permitId),
    queryFn: () => api.get<{ items: IsolationStepSummary[] }>(`/api/permits/${encodeURIComponent(permitId)}/isolations`),
  });

export const usePermitIsolations = (permitId: string) => useQuery(getPermitIsolationsQueryOptions(permitId));
