/**
 * Who takes a lock off, and in which order isolations go on and come off; the screens and the server
 * read the same rules.
 * - OSHA 29 CFR 1910.147(e)(3): each lockout or tagout device is removed by the employee who applied
 *   it; (e)(3)(i)–(iii) allow removal under the employer's direction when that person is not at the
 *   facility, once that is verified, all reasonable efforts to reach them are made and they are told
 *   before they resume work there.
 * - HSE HSG253 (common practice): isolations go on in the planned order and come off in the reverse
 *   order of application, under the control of the permit.
 */
import type { StepStatus } from '../types/isolations';
import { isInPlace } from './step-rules';

/** A lockout or tagout device: a personal lock or a danger tag on the step. */
export const carriesDevice = (step: { lockId: string | null; tagId: string | null }) => step.lockId !== null || step.tagId !== null;

/**
 * Someone other than the person who holds the lock or tag may take it off only under the exception
 * procedure. The holder is whoever put it on, or whoever it was handed over to at a shift change
 * (OSHA 29 CFR 1910.147(f)(4)): from then on the oncoming person's own lock is on the point.
 */
export const removalNeedsException = (step: { lockId: string | null; tagId: string | null; heldBy: string | null }, userId: string) =>
  carriesDevice(step) && step.heldBy !== userId;

/** Only the person holding a lock or tag hands it over at a shift change; a step without one has nothing to hand over. */
export const mayHandOver = (step: { lockId: string | null; tagId: string | null; heldBy: string | null; status: StepStatus }, userId: string) =>
  carriesDevice(step) && isInPlace(step.status) && step.heldBy === userId;

interface OrderedStep {
  id: string;
  seq: number;
  status: StepStatus;
  appliedSeq: number | null;
}

/** Earlier steps of the plan not on yet, in plan order: applying this one now is out of the plan's order. */
export function earlierNotApplied<S extends OrderedStep>(step: S, steps: readonly S[]): S[] {
  return steps.filter((s) => s.seq < step.seq && s.status === 'planned').sort((a, b) => a.seq - b.seq);
}

/**
 * Steps of the same permit that went on after this one and are still on, last applied first. The
 * order is the counter taken when each step was applied, not the time typed for it: several steps
 * recorded in the same minute still have one order.
 */
export function appliedAfter<S extends OrderedStep>(step: S, steps: readonly S[]): S[] {
  const mine = step.appliedSeq;
  if (mine === null) return [];
  return steps.filter((s) => s.id !== step.id && isInPlace(s.status) && s.appliedSeq !== null && s.appliedSeq > mine).sort((a, b) => b.appliedSeq! - a.appliedSeq!);
}
