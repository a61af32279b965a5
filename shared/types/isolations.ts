import type { PlugWarningCode } from '../calc/mud-plug';
import type { AsBuiltLineStop, PlanStepInput, StepCondition, StepKind } from '../schemas/isolation.schema';
import type { IsolationPlanReadiness } from './isolation-proving';
import type { Moment } from './moment';

// What the isolation API answers (`Time`: see ./moment.ts).

export type StepStatus = 'planned' | 'applied' | 'verified' | 'removed';

export interface PlugAsBuilt {
  bentoniteLb: number;
  waterLb: number;
  lengthIn: number;
  builtAt: string;
}

/** One step of a permit's isolation plan with its record, as GET /api/permits/:id/isolations answers. */
export interface IsolationStep<Time extends Moment = string> {
  id: string;
  permitId: string;
  seq: number;
  pointId: string | null;
  label: string;
  position: number;
  kind: StepKind;
  condition: StepCondition;
  status: StepStatus;
  remotelyOperable: boolean;
  lockId: string | null;
  lockNumber: string | null;
  tagId: string | null;
  tagNumber: string | null;
  appliedBy: string | null;
  appliedByName: string | null;
  appliedAt: Time | null;
  /** The applied time was written down after the event. */
  appliedEnteredLate: boolean;
  photoAttachmentId: string | null;
  remoteAckAt: Time | null;
  remoteAckByName: string | null;
  verifiedBy: string | null;
  verifiedByName: string | null;
  verifiedAt: Time | null;
  verificationMethod: string | null;
  verificationReading: number | null;
  verificationUnit: string | null;
  verificationNotes: string | null;
  removedByName: string | null;
  removedAt: Time | null;
  removalNote: string | null;
  controlRoomAckAppliedAt: Time | null;
  controlRoomAckRemovedAt: Time | null;
  plugDiameterIn: number | null;
  plugAsBuilt: PlugAsBuilt | null;
  plugWarnings: { code: PlugWarningCode; message: string }[];
  plugWarningsAckAt: Time | null;
  /** A line stop or mechanical plug as set. */
  lineStopAsBuilt: AsBuiltLineStop | null;
  /** The order the step really went on within its permit (1, 2, …); null while planned. */
  appliedSeq: number | null;
  /** Why it went on before an earlier step of the plan. */
  appliedOutOfOrderReason: string | null;
  /** An authoriser's record that the person who put the lock or tag on is away, so someone else may take it off. */
  exceptionRecordedAt: Time | null;
  exceptionAuthoriserId: string | null;
  exceptionAuthoriserName: string | null;
  /** Taken off by someone other than its applier, under that record. */
  removedUnderException: boolean;
  /** Who holds the lock or tag now: the applier, or whoever it was last handed over to at a shift change. */
  heldBy: string | null;
  heldByName: string | null;
  /** When it was last handed over at a shift change (null: never). */
  handedOverAt: Time | null;
}

/** GET and PUT /api/permits/:id/isolations. */
export interface IsolationPlan<Time extends Moment = string> {
  items: IsolationStep<Time>[];
  /** Where the plan stands against Isolated: devices per side of the work, the hold tests, the authoriser's signature. */
  readiness: IsolationPlanReadiness<Time>;
  /** Points of this plan that another permit holds in place in a way this plan would undo: refused at plan save, approval and apply. */
  conflicts: PointNeighbour[];
  /** Points this plan and another permit both hold closed: allowed, shown so both crews know the valve is shared. */
  shared: PointNeighbour[];
}

/** Another permit's hold on a point of this plan (simultaneous operations, HSE HSG250). */
export interface PointNeighbour {
  pointId: string;
  label: string;
  permitNumber: string;
  /** The condition the other permit holds the point in. */
  held: StepCondition;
  /** In plain words, e.g. "CR-VT-196 is held open by PW-2026-0002". */
  message: string;
}

/** The few fields of a step the permit page draws on the line. */
export type IsolationStepSummary = Pick<IsolationStep, 'id' | 'seq' | 'pointId' | 'label' | 'position' | 'kind' | 'status'>;

/** GET /api/permits/:id/isolations/proposal: a first plan for the cut, nothing saved. */
export interface PlanProposal {
  steps: (PlanStepInput & { label: string; position: number })[];
  warnings: string[];
  insideDiameterIn: number | null;
}
