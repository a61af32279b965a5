import type { PermitState } from '../permit/states';
import type { TimedCheckKind } from '../permit/due-times';
import type { AcknowledgeStepInput, StepCondition, StepKind } from '../schemas/isolation.schema';
import type { Moment } from './moment';

/** The permit an item of "My work" belongs to. */
export interface MyWorkPermitRef {
  id: string;
  number: string;
  title: string;
  state: PermitState;
  pipelineId: string;
  pipelineName: string;
}

/** What falls due next on a permit: a timed check (shared/permit/due-times.ts) or the end of its validity. */
export interface MyWorkDue<M extends Moment = string> {
  kind: TimedCheckKind | 'validity_end';
  dueAt: M;
  overdue: boolean;
}

/** A permit waiting for the person: to accept, sent back, to approve, to re-validate, live work. */
export interface MyWorkPermitItem<M extends Moment = string> {
  permit: MyWorkPermitRef;
  validTo: M;
  /** Why it is waiting, in words (the reason it was sent back or suspended). */
  reason: string | null;
  /** Live work: what falls due next, earliest first (at most one per kind). */
  due: MyWorkDue<M>[];
}

/** The step actions "My work" lists, each with its own task screen (technician) or acknowledgement (control room, authoriser). */
export type MyWorkStepAction = 'apply' | 'verify' | 'remove' | AcknowledgeStepInput['what'];

/** An isolation step waiting for the person. */
export interface MyWorkStepItem {
  permit: MyWorkPermitRef;
  stepId: string;
  label: string;
  kind: StepKind;
  condition: StepCondition;
  action: MyWorkStepAction;
}

/** A repeat gas test due on a live permit (the client counts down to `dueAt` in the site's zone). */
export interface MyWorkGasItem<M extends Moment = string> {
  permit: MyWorkPermitRef;
  dueAt: M;
  overdue: boolean;
}

/** Every list "My work" can hold, named once for the answer, the counts and the navigation. */
export const myWorkListKeys = [
  'toAccept', 'sentBack', 'liveWork',
  'stepsToApply', 'stepsToVerify', 'stepsToRemove',
  'gasTestsDue',
  'toApprove', 'plugWarnings', 'toRevalidate',
  'isolationsToAcknowledge', 'returnsToAcknowledge',
] as const;
export type MyWorkListKey = (typeof myWorkListKeys)[number];

/**
 * GET /api/my-work: what waits for the signed-in person in their active tenant, per role they hold.
 * A role's lists are null when the person does not hold it. Each list holds at most `limit` items;
 * `counts` are the whole numbers.
 */
export interface MyWork<M extends Moment = string> {
  lead: { toAccept: MyWorkPermitItem<M>[]; sentBack: MyWorkPermitItem<M>[]; liveWork: MyWorkPermitItem<M>[] } | null;
  technician: { stepsToApply: MyWorkStepItem[]; stepsToVerify: MyWorkStepItem[]; stepsToRemove: MyWorkStepItem[] } | null;
  gasTester: { gasTestsDue: MyWorkGasItem<M>[] } | null;
  authoriser: { toApprove: MyWorkPermitItem<M>[]; plugWarnings: MyWorkStepItem[]; toRevalidate: MyWorkPermitItem<M>[] } | null;
  controlRoom: { isolationsToAcknowledge: MyWorkStepItem[]; returnsToAcknowledge: MyWorkPermitItem<M>[] } | null;
  counts: Record<MyWorkListKey, number>;
  /** Everything waiting, all lists together. */
  total: number;
  limit: number;
  generatedAt: M;
}
