import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import { checkKindLabels, type CheckData } from '@shared/schemas/timed-checks.schema';
import type { IsolationPlan } from '@shared/types/isolations';
import type { CheckRow, RecordedCheck } from '@shared/types/timed-checks';
import { isInPlace } from '@shared/isolations/step-rules';
import { api, qs } from '@client/lib/api-client';
import { sendOrQueue } from '@client/lib/outbox/send-or-queue';
import { gasKeys, permitsPrefix } from './keys';

export const getChecksQueryOptions = (permitId: string) =>
  queryOptions({ queryKey: gasKeys.checks(permitId), queryFn: () => api.get<Page<CheckRow>>(`/api/permits/${encodeURIComponent(permitId)}/checks${qs({ pageSize: 20 })}`) });
export const useChecks = (permitId: string) => useQuery(getChecksQueryOptions(permitId));

/** Offline, the check is kept on the device with the time it was made and sent when there is signal. */
export function useRecordCheck(permitId: string) {
  const qc = useQueryClient();
  const path = `/api/permits/${encodeURIComponent(permitId)}/checks`;
  return useMutation({
    mutationFn: (input: CheckData) =>
      sendOrQueue(
        { kind: 'check', title: checkKindLabels[input.kind], permitId, path, body: input, observedAt: input.checkedAt, invalidate: [gasKeys.permit(permitId), permitsPrefix] },
        (key) => api.post<RecordedCheck>(path, input, { idempotencyKey: key }),
      ),
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
