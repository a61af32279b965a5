/**
 * The rules of an isolation step, written once: the screens show a button only where these allow it
 * and the server refuses, with its own plain words, where they do not. Who may act is CASL's
 * (define-ability); these rules are about the permit's state and the step's own record.
 */
import type { IsolationPointKind } from '../schemas/assets.schema';
import type { AcknowledgeStepInput, StepKind } from '../schemas/isolation.schema';
import type { StepStatus } from '../types/isolations';
import type { PermitState } from '../permit/states';

/** An isolation is on the pipe once applied, verified by a second person or not yet. */
export const inPlaceStatuses: readonly StepStatus[] = ['applied', 'verified'];
export const isInPlace = (status: string) => (inPlaceStatuses as readonly string[]).includes(status);

/** The step kind a register point takes in a plan. */
export const stepKindForPoint: Record<IsolationPointKind, StepKind> = {
  block_valve: 'block_valve',
  vent: 'vent',
  drain: 'drain',
  plug_position: 'plug',
  // A stopple or mechanical plug is a line stop, an isolating device with its own record, not a mud plug.
  mechanical_plug_position: 'line_stop',
  blind_position: 'blind',
  isolator: 'isolator',
};

/** Kinds that take a personal lock and a danger tag when applied. */
export const lockedStepKinds: readonly StepKind[] = ['block_valve', 'isolator'];
export const takesLock = (kind: string) => (lockedStepKinds as readonly string[]).includes(kind);

/** Isolations go on after the contractor lead accepts the permit and before work starts. */
export const applyStates: readonly PermitState[] = ['accepted', 'isolated'];
/** Isolations come off after the contractor lead hands the permit back, or once it is cancelled. */
export const removeStates: readonly PermitState[] = ['work_complete', 'cancelled'];

export const stepActionNames = ['apply', 'verify', 'acknowledgeRemote', 'acknowledgeApplied', 'acknowledgeRemoved', 'acknowledgePlugWarnings', 'remove'] as const;
export type StepActionName = (typeof stepActionNames)[number];

/** The step action behind each acknowledgement the control room (or, for plug warnings, the authoriser) gives. */
export const acknowledgementAction: Record<AcknowledgeStepInput['what'], StepActionName> = {
  remote_inhibited: 'acknowledgeRemote',
  applied: 'acknowledgeApplied',
  removed: 'acknowledgeRemoved',
  plug_warnings: 'acknowledgePlugWarnings',
};

/**
 * Why a step action does not fit now, for the server to put in words:
 * - permit_state: the permit's state does not allow it;
 * - step_status: the step is not (or no longer) at the stage it needs;
 * - not_remote: the point cannot be operated remotely, so there is nothing to inhibit;
 * - no_warnings: the plug record has no warnings;
 * - already_done: it has been acknowledged already.
 */
export type StepRefusal = 'permit_state' | 'step_status' | 'not_remote' | 'no_warnings' | 'already_done';

type Stamp = string | Date | null;

/** What the rules read of a step: the API's step (times as text) and the server's row (times as Dates) both fit. */
export interface StepRecord {
  kind: string;
  status: StepStatus;
  remotelyOperable: boolean;
  remoteAckAt: Stamp;
  controlRoomAckAppliedAt: Stamp;
  controlRoomAckRemovedAt: Stamp;
  plugWarnings: readonly unknown[];
  plugWarningsAckAt: Stamp;
}

/** Null when the action fits the permit's state and the step's record now, else why not. */
export function stepActionRefusal(action: StepActionName, step: StepRecord, permitState: PermitState): StepRefusal | null {
  const inPlace = isInPlace(step.status);
  switch (action) {
    case 'apply':
      if (!applyStates.includes(permitState)) return 'permit_state';
      return step.status === 'planned' ? null : 'step_status';
    case 'verify':
      return step.status === 'applied' ? null : 'step_status';
    case 'acknowledgeRemote':
      if (!step.remotelyOperable) return 'not_remote';
      if (!inPlace) return 'step_status';
      return step.remoteAckAt ? 'already_done' : null;
    case 'acknowledgeApplied':
      if (!inPlace) return 'step_status';
      return step.controlRoomAckAppliedAt ? 'already_done' : null;
    case 'acknowledgeRemoved':
      if (step.status !== 'removed') return 'step_status';
      return step.controlRoomAckRemovedAt ? 'already_done' : null;
    case 'acknowledgePlugWarnings':
      if (step.kind !== 'plug' || !step.plugWarnings.length) return 'no_warnings';
      // Once the plug is out its warnings no longer hold anything up.
      if (step.status === 'removed') return 'step_status';
      return step.plugWarningsAckAt ? 'already_done' : null;
    case 'remove':
      if (!removeStates.includes(permitState)) return 'permit_state';
      return inPlace ? null : 'step_status';
  }
}

/** Which step actions the permit's state and the step's record allow now. */
export function stepActions(step: StepRecord, permitState: PermitState): Record<StepActionName, boolean> {
  const fit = {} as Record<StepActionName, boolean>;
  for (const action of stepActionNames) fit[action] = stepActionRefusal(action, step, permitState) === null;
  return fit;
}
