/**
 * What an isolation plan needs before the permit may count as Isolated, written once for the plan
 * editor, the permit page and the lifecycle guards.
 *
 * - Only energy-isolating devices count (OSHA 29 CFR 1910.147(b): a device that physically prevents
 *   the transmission or release of energy: a line valve, a blind, a block, a circuit breaker or
 *   disconnect). Vents and drains release pressure and mud (bentonite) plugs hold back vapour; none
 *   of them isolates, and a check valve is never one (HSE HSG253).
 * - Every side of the work from which product can reach it has at least one device that stops
 *   product in the line, unless the plan declares that side a dead end with a reason.
 * - The isolated section is proved dead (HSE HSG253): a pressure reading at a bleed or vent, held
 *   for the site's time without build-up. A valve whose position was checked is not proved by that.
 */
import type { StepKind } from '../schemas/isolation.schema';

/** Kinds of step that are energy-isolating devices. */
export const isolatingStepKinds: readonly StepKind[] = ['block_valve', 'blind', 'line_stop', 'isolator'];
/** Of those, the ones that stop product in the line and so close a side of the work (an electrical isolator stops a pump, not the product standing in the line). */
export const lineIsolatingStepKinds: readonly StepKind[] = ['block_valve', 'blind', 'line_stop'];
/** Where the section's pressure can be read to prove it dead. */
export const bleedStepKinds: readonly StepKind[] = ['vent', 'drain'];

export const isIsolatingKind = (kind: string) => (isolatingStepKinds as readonly string[]).includes(kind);
export const closesLine = (kind: string) => (lineIsolatingStepKinds as readonly string[]).includes(kind);
export const isBleedKind = (kind: string) => (bleedStepKinds as readonly string[]).includes(kind);

export const workSides = ['upstream', 'downstream'] as const;
export type WorkSide = (typeof workSides)[number];
/** Where each side lies, in the words of the line's positions. */
export const sideWhere: Record<WorkSide, string> = { upstream: 'at or before the start of the work range', downstream: 'at or beyond the end of the work range' };

export interface WorkRange {
  from: number;
  to: number;
}

/** A side the plan declares has no product source, with the reason; null where product can come from. */
export type DeadEnds = Record<WorkSide, string | null>;
export const noDeadEnds: DeadEnds = { upstream: null, downstream: null };

/** Which sides of the work a device at this position closes: upstream at or before the start, downstream at or beyond the end. */
export function sidesClosedBy(position: number, range: WorkRange): WorkSide[] {
  const sides: WorkSide[] = [];
  if (position <= range.from) sides.push('upstream');
  if (position >= range.to) sides.push('downstream');
  return sides;
}

export interface CoverageStep {
  kind: string;
  position: number;
  /** Applied and verified by a second person. */
  verified: boolean;
}

export interface SideCover {
  side: WorkSide;
  deadEnd: string | null;
  /** Line-isolating devices planned on this side. */
  planned: number;
  /** Of those, applied and verified by a second person. */
  verified: number;
}

export function coverSides(steps: readonly CoverageStep[], range: WorkRange, deadEnds: DeadEnds): SideCover[] {
  return workSides.map((side) => {
    const on = steps.filter((s) => closesLine(s.kind) && sidesClosedBy(s.position, range).includes(side));
    return { side, deadEnd: deadEnds[side], planned: on.length, verified: on.filter((s) => s.verified).length };
  });
}

export type ProvingState = 'none' | 'running' | 'failed' | 'proved';

/** The latest hold test of the section. */
export interface ProvingSummary {
  state: ProvingState;
  /** The vent or drain it was read at. */
  at: string | null;
  /** Why it failed, in words. */
  failure: string | null;
}

export interface IsolationReadiness {
  /** Isolating devices in the plan. */
  devices: number;
  sides: SideCover[];
  proving: ProvingSummary;
}

/** What the plan itself lacks: shown while it is drawn up, and refused at Isolated. */
export function planGaps(devices: number, sides: readonly SideCover[]): string[] {
  const gaps: string[] = [];
  if (devices === 0)
    gaps.push('The plan has no isolating device. Vents, drains and mud plugs are not isolations: plan a block valve to be closed, locked and tagged, a blind, a line stop or an electrical isolator.');
  for (const s of sides) {
    if (s.deadEnd || s.planned) continue;
    gaps.push(`No isolating device ${s.side} of the work: plan a block valve, a blind or a line stop ${sideWhere[s.side]}, or declare that side a dead end and say why no product can come from it.`);
  }
  return gaps;
}

/** Everything the isolations still lack before the authoriser may sign them in place, in words for the crew; empty when nothing does. */
export function readinessGaps(r: IsolationReadiness): string[] {
  const gaps = planGaps(r.devices, r.sides);
  for (const s of r.sides) if (!s.deadEnd && s.planned && !s.verified) gaps.push(`The isolating device ${s.side} of the work is not yet applied and verified by a second person.`);
  switch (r.proving.state) {
    case 'none':
      gaps.push('Section not proved dead: once the isolating devices are on, read the pressure at a vent or drain and hold it for the site’s hold time without build-up.');
      break;
    case 'running':
      gaps.push(`Section not proved dead yet: the hold test at ${r.proving.at} is running; record its end reading once the hold time is up.`);
      break;
    case 'failed':
      gaps.push(`Section not proved dead: the last hold test at ${r.proving.at} failed (${r.proving.failure}). Find the isolation that lets pressure through, then test again.`);
      break;
    case 'proved':
      break;
  }
  return gaps;
}

/** Said until the authoriser has signed (HSE HSG250: the issuer signs that the isolations are in place before work starts). */
export const signatureMissing = 'Isolations-in-place signature missing: the authoriser signs that the isolations are made and proved.';
