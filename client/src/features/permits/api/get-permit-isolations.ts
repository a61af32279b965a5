import { queryOptions, useQuery } from '@tanstack/react-query';
import type { StepKind } from '@shared/schemas/isolation.schema';
import { api } from '@client/lib/api-client';

/** The few fields of an isolation step the permit page draws on the line. */
export interface IsolationStepSummary {
  id: string;
  seq: number;
  pointId: string | null;
  label: string;
  position: number;
  kind: StepKind;
  status: 'planned' | 'applied' | 'verified' | 'removed';
}

export const getPermitIsolationsQueryOptions = (permitId: string) =>
  queryOptions({
    queryKey: ['permits', 'detail', permitId, 'isolations'],
    queryFn: () => api.get<{ items: IsolationStepSummary[] }>(`/api/permits/${encodeURIComponent(permitId)}/isolations`),
  });

export const usePermitIsolations = (permitId: string) => useQuery(getPermitIsolationsQueryOptions(permitId));
