import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { LockTransferInput } from '@shared/schemas/lock-transfer.schema';
import type { IsolationPlan, IsolationStep } from '@shared/types/isolations';
import { api } from '@client/lib/api-client';
import { isolationPlanKey } from './get-isolation-plan';

/**
 * POST /api/permits/:id/isolations/:stepId/transfer: shift change on one isolation's lock. The answer
 * replaces the step in the plan; the store and the permit's timeline are fetched again.
 */
export function useTransferLock() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ permitId, stepId, body }: { permitId: string; stepId: string; body: LockTransferInput }) =>
      api.post<IsolationStep>(`/api/permits/${encodeURIComponent(permitId)}/isolations/${encodeURIComponent(stepId)}/transfer`, body),
    onSuccess: (step) => {
      qc.setQueryData<IsolationPlan>(isolationPlanKey(step.permitId), (plan) => (plan ? { ...plan, items: plan.items.map((s) => (s.id === step.id ? step : s)) } : plan));
    },
    onSettled: (_step, _err, { permitId }) => Promise.all([qc.invalidateQueries({ queryKey: ['inventory'] }), qc.invalidateQueries({ queryKey: ['permits', 'detail', permitId] })]),
  });
}
