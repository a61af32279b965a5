import type { CheckKind } from '../schemas/timed-checks.schema';
import { isInPlace } from '../isolations/step-rules';

/**
 * The checks a crew can record on a permit now: a vent check only where a vent of its plan is in
 * place, a plug check only where a plug is, the fire watch while hot work is under way.
 */
export function offeredCheckKinds(steps: readonly { kind: string; status: string }[], hotWorkUnderWay: boolean): CheckKind[] {
  const inPlace = (kind: string) => steps.some((s) => s.kind === kind && isInPlace(s.status));
  return [...(inPlace('vent') ? (['vent'] as const) : []), ...(inPlace('plug') ? (['plug'] as const) : []), ...(hotWorkUnderWay ? (['fire_watch'] as const) : [])];
}
