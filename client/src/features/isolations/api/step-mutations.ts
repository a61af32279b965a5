import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { AcknowledgeStepInput, ApplyStepInput, RemoveStepInput, VerifyStepInput } from '@shared/schemas/isolation.schema';
import type { IsolationPlan, IsolationStep } from '@shared/types/isolations';
import { api } from '@client/lib/api-client';
import { isolationPlanKey } from './get-isolation-plan';
import { boardKey } from './get-board';

interface StepBodies {
  apply: ApplyStepInput;
  verify: VerifyStepInput;
  acknowledge: AcknowledgeStepInput;
  remove: RemoveStepInput;
}

export type StepVerb = keyof StepBodies;

/**
 * POST /api/permits/:id/isolations/:stepId/<verb>. The answer replaces the step in the plan; the
 * permit (what still blocks Isolated), the board and the lock and tag lists are fetched again.
 */
export function useStepAction<V extends StepVerb>(verb: V) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ permitId, stepId, body }: { permitId: string; stepId: string; body: StepBodies[V] }) =>
      api.post<IsolationStep>(`/api/permits/${encodeURIComponent(permitId)}/isolations/${encodeURIComponent(stepId)}/${verb}`, body),
    onSuccess: (step) => {
      qc.setQueryData<IsolationPlan>(isolationPlanKey(step.permitId), (plan) => (plan ? { ...plan, items: plan.items.map((s) => (s.id === step.id ? step : s)) } : plan));
    },
    onSettled: (_step, _err, { permitId }) =>
      Promise.all([
        qc.invalidateQueries({ queryKey: ['permits', 'detail', permitId] }),
        qc.invalidateQueries({ queryKey: boardKey }),
        qc.invalidateQueries({ queryKey: ['inventory'] }),
      ]),
  });
}
