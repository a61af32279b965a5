import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { AcknowledgeStepInput, ApplyStepInput, RemoveStepInput, VerifyStepInput } from '@shared/schemas/isolation.schema';
import type { IsolationPlan, IsolationStep } from '@shared/types/isolations';
import { api } from '@client/lib/api-client';
import { isQueued, newIdempotencyKey, sendOrQueue, type Queued } from '@client/lib/outbox/send-or-queue';
import { isolationPlanKey } from './get-isolation-plan';
import { boardKey } from './get-board';

interface StepBodies {
  apply: ApplyStepInput;
  verify: VerifyStepInput;
  acknowledge: AcknowledgeStepInput;
  remove: RemoveStepInput;
}

export type StepVerb = keyof StepBodies;

const stepPath = (permitId: string, stepId: string, verb: StepVerb) => `/api/permits/${encodeURIComponent(permitId)}/isolations/${encodeURIComponent(stepId)}/${verb}`;

/**
 * POST /api/permits/:id/isolations/:stepId/<verb>. The answer replaces the step in the plan; the
 * permit (what still blocks Isolated), the board and the lock and tag lists are fetched again.
 * Offline, an application or verification is kept in the outbox with the time it was done.
 */
export function useStepAction<V extends StepVerb>(verb: V) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: async ({ permitId, stepId, body }: { permitId: string; stepId: string; body: StepBodies[V] }): Promise<IsolationStep | Queued> => {
      const path = stepPath(permitId, stepId, verb);
      const send = (key: string) => api.post<IsolationStep>(path, body, { idempotencyKey: key });
      // Applying and verifying are observations on site and may wait on the device; the others need the server there and then.
      if (verb !== 'apply' && verb !== 'verify') return send(newIdempotencyKey());
      const label = qc.getQueryData<IsolationPlan>(isolationPlanKey(permitId))?.items.find((s) => s.id === stepId)?.label;
      // Taken now, when it was done: a record sent later keeps this time.
      const now = new Date().toISOString();
      const observedAt = verb === 'apply' ? ((body as ApplyStepInput).appliedAt ?? now) : ((body as VerifyStepInput).verifiedAt ?? now);
      const timed = { ...body, [verb === 'apply' ? 'appliedAt' : 'verifiedAt']: observedAt };
      return sendOrQueue(
        {
          kind: verb === 'apply' ? 'step_apply' : 'step_verify',
          title: `${verb === 'apply' ? 'Isolation applied' : 'Isolation verified'}${label ? `: ${label}` : ''}`,
          permitId,
          path,
          body: timed,
          observedAt,
          invalidate: [['permits', 'detail', permitId], boardKey, ['inventory']],
        },
        send,
      );
    },
    onSuccess: (result) => {
      if (isQueued(result)) return;
      const step: IsolationStep = result;
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
