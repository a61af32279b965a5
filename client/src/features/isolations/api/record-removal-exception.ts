import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { RemovalExceptionInput } from '@shared/schemas/isolation.schema';
import type { IsolationPlan, IsolationStep } from '@shared/types/isolations';
import { api } from '@client/lib/api-client';
import { isolationPlanKey } from './get-isolation-plan';

/**
 * POST /api/permits/:id/isolations/:stepId/removal-exception: the authoriser's signed record that the
 * lock's owner is away. The answer replaces the step in the plan; the permit's timeline is fetched again.
 */
export function useRecordRemovalException() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ permitId, stepId, body }: { permitId: string; stepId: string; body: RemovalExceptionInput }) =>
      api.post<IsolationStep>(`/api/permits/${encodeURIComponent(permitId)}/isolations/${encodeURIComponent(stepId)}/removal-exception`, body),
    onSuccess: (step) => {
      qc.setQueryData<IsolationPlan>(isolationPlanKey(step.permitId), (plan) => (plan ? { ...plan, items: plan.items.map((s) => (s.id === step.id ? step : s)) } : plan));
    },
    onSettled: (_step, _err, { permitId }) => qc.invalidateQueries({ queryKey: ['permits', 'detail', permitId] }),
  });
}
