import { queryOptions, useQuery } from '@tanstack/react-query';
import type { IsolationPlan } from '@shared/types/isolations';
import { api } from '@client/lib/api-client';

/**
 * The same endpoint and cache entry the permit page reads for its summary of the plan, so a change
 * made here redraws the rest of the page too; invalidating the permit's key refreshes both.
 */
export const isolationPlanKey = (permitId: string) => ['permits', 'detail', permitId, 'isolations'] as const;

export const getIsolationPlanQueryOptions = (permitId: string) =>
  queryOptions({
    queryKey: isolationPlanKey(permitId),
    queryFn: () => api.get<IsolationPlan>(`/api/permits/${encodeURIComponent(permitId)}/isolations`),
  });

export const useIsolationPlan = (permitId: string) => useQuery(getIsolationPlanQueryOptions(permitId));
