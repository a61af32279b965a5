import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { CheckData } from '@shared/schemas/timed-checks.schema';
import type { IsolationPlan } from '@shared/types/isolations';
import type { CheckRow, RecordedCheck } from '@shared/types/timed-checks';
import { isInPlace } from '@shared/isolations/step-rules';
import { api, qs } from '@client/lib/api-client';
import { gasKeys } from './keys';

export const getChecksQueryOptions = (permitId: string) =>
  queryOptions({ queryKey: gasKeys.checks(permitId), queryFn: () => api.get<Page<CheckRow>>(`/api/permits/${encodeURIComponent(permitId)}/checks${qs({ pageSize: 20 })}`) });
export const useChecks = (permitId: string) => useQuery(getChecksQueryOptions(permitId));

export function useRecordCheck(permitId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CheckData) => api.post<RecordedCheck>(`/api/permits/${encodeURIComponent(permitId)}/checks`, input),
    onSuccess: () => qc.invalidateQueries({ queryKey: gasKeys.permit(permitId) }),
  });
}

/** The vents and plugs in place on the permit (from the isolation plan), to say which one was checked. */
export const getPlanStepsQueryOptions = (permitId: string) =>
  queryOptions({
    queryKey: ['gas-tests', permitId, 'plan-steps'],
    queryFn: async () => (await api.get<IsolationPlan>(`/api/permits/${encodeURIComponent(permitId)}/isolations`)).items.filter((s) => ['vent', 'plug'].includes(s.kind) && isInPlace(s.status)),
    staleTime: 60_000,
  });
export const usePlanSteps = (permitId: string) => useQuery(getPlanStepsQueryOptions(permitId));
