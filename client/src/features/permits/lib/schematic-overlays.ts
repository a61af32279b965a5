import type { IsolationStepSummary } from '@shared/types/isolations';
import { isInPlace } from '@shared/isolations/step-rules';

/** What the schematic strip marks on the line for a permit: its work range, points held isolated, plugs in place. */
export function schematicOverlays(permit: { fromPosition: number; toPosition: number }, steps: IsolationStepSummary[]) {
  const inPlace = steps.filter((s) => isInPlace(s.status));
  return {
    workRange: [permit.fromPosition, permit.toPosition] as [number, number],
    isolatedPointIds: inPlace.filter((s) => s.pointId).map((s) => s.pointId as string),
    plugPositions: inPlace.filter((s) => s.kind === 'plug').map((s) => s.position),
  };
}
