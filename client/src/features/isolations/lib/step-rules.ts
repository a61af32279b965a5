import type { PermitState } from '@shared/permit/states';
import type { IsolationStep } from '../api/get-isolation-plan';

const inPlace = (s: Pick<IsolationStep, 'status'>) => s.status === 'applied' || s.status === 'verified';

/**
 * Which step actions the permit's state and the step's record allow now. The role check is CASL's
 * (<Can>); these are the same state rules the server applies, so no button leads to a sure refusal.
 */
export function stepActionsFit(step: IsolationStep, permitState: PermitState) {
  return {
    apply: step.status === 'planned' && (permitState === 'accepted' || permitState === 'isolated'),
    verify: step.status === 'applied',
    acknowledgeRemote: step.remotelyOperable && inPlace(step) && !step.remoteAckAt,
    acknowledgeApplied: inPlace(step) && !step.controlRoomAckAppliedAt,
    acknowledgeRemoved: step.status === 'removed' && !step.controlRoomAckRemovedAt,
    acknowledgePlugWarnings: step.kind === 'plug' && step.plugWarnings.length > 0 && !step.plugWarningsAckAt && step.status !== 'removed',
    remove: inPlace(step) && (permitState === 'work_complete' || permitState === 'cancelled'),
  };
}

/** Steps of the same permit applied after this one and still on: de-isolation runs in reverse order. */
export function appliedLater(step: IsolationStep, steps: IsolationStep[]): IsolationStep[] {
  if (!step.appliedAt) return [];
  const at = new Date(step.appliedAt).getTime();
  return steps
    .filter((s) => s.id !== step.id && inPlace(s) && s.appliedAt && new Date(s.appliedAt).getTime() > at)
    .sort((a, b) => new Date(b.appliedAt!).getTime() - new Date(a.appliedAt!).getTime());
}

/** Where the schematic zooms first: the plan's points and the work range, with a margin. */
export function planRange(work: [number, number], steps: Pick<IsolationStep, 'position'>[]): [number, number] {
  const all = [work[0], work[1], ...steps.map((s) => s.position)];
  const lo = Math.min(...all);
  const hi = Math.max(...all);
  const pad = Math.max((hi - lo) * 0.15, 0.5);
  return [lo - pad, hi + pad];
}
