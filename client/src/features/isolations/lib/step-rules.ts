import type { IsolationStep } from '@shared/types/isolations';

/** Where the schematic zooms first: the plan's points and the work range, with a margin. */
export function planRange(work: [number, number], steps: Pick<IsolationStep, 'position'>[]): [number, number] {
  const all = [work[0], work[1], ...steps.map((s) => s.position)];
  const lo = Math.min(...all);
  const hi = Math.max(...all);
  const pad = Math.max((hi - lo) * 0.15, 0.5);
  return [lo - pad, hi + pad];
}
