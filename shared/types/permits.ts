import type { PermitState, WorkKind } from '../permit/states';
import type { PermitEvent } from '../permit/state-machine';
import type { SuspendedByKind } from '../permit/suspension';
import type { Moment } from './moment';
import type { PermitLockbox } from './crew';

// What the permit API answers, written once for the server and the client (`Time`: see ./moment.ts).

export interface ChecklistItem {
  key: string;
  label: string;
  required: boolean;
  confirmed: boolean;
  confirmedBy?: string | null;
  confirmedByName?: string | null;
  confirmedAt?: string | null;
}

/** One row of GET /api/permits. */
export interface PermitSummary<Time extends Moment = string> {
  id: string;
  number: string;
  state: PermitState;
  version: number;
  kinds: WorkKind[];
  title: string;
  pipelineId: string;
  pipelineName: string;
  fromPosition: number;
  toPosition: number;
  validFrom: Time;
  validTo: Time;
  contractorOrganisationId: string;
  contractorName: string;
  updatedAt: Time;
  nextGasTestDue: Time | null;
}

/** A permit's own record with the names of the people and places it refers to. */
export interface PermitRecord<Time extends Moment = string> {
  id: string;
  tenantId: string;
  number: string;
  state: PermitState;
  version: number;
  kinds: WorkKind[];
  title: string;
  scope: string;
  pipelineId: string;
  pipelineName: string;
  fromPosition: number;
  toPosition: number;
  jobReference: string | null;
  methodStatement: string;
  hazards: string;
  ppe: string[];
  checklist: ChecklistItem[];
  walkdown: ChecklistItem[];
  validFrom: Time;
  validTo: Time;
  contractorOrganisationId: string;
  contractorName: string;
  contractorLeadUserId: string | null;
  contractorLeadName: string | null;
  requesterUserId: string;
  requesterName: string;
  authoriserUserId: string | null;
  authoriserName: string | null;
  holderUserId: string | null;
  holderName: string | null;
  fireWatchMinutes: number;
  fireWatchPerson: string | null;
  gasTestWindowMinutes: number;
  gasTestIntervalMinutes: number;
  hotWorkEndedAt: Time | null;
  controlRoomAckAt: Time | null;
  rejectionReason: string | null;
  stateBeforeExpiry: PermitState | null;
  expiredFlag: boolean;
  createdAt: Time;
  updatedAt: Time;
  /** While suspended: who stopped the work (a person's name, or null when Holdpoint did), when and why. */
  suspendedByKind: SuspendedByKind | null;
  suspendedByName: string | null;
  suspendedAt: Time | null;
  suspensionReason: string | null;
}

/** An action on the permit page, with whether this caller may take it now and why not. */
export interface PermitAction {
  event: PermitEvent;
  label: string;
  allowed: boolean;
  reasons: string[];
  needsSignature: boolean;
  needsReason: boolean;
}

export interface PermitTimelineEvent<Time extends Moment = string> {
  /** A bigint in the database: the driver may hand it over as text. */
  seq: number | string;
  action: string;
  fromState: PermitState | null;
  toState: PermitState | null;
  actorName: string | null;
  actorRole: string | null;
  reason: string | null;
  data: Record<string, unknown>;
  occurredAt: Time;
  entityType: string;
}

export interface PermitSignature<Time extends Moment = string> {
  event: PermitEvent;
  signedName: string;
  passwordConfirmed: boolean;
  signedAt: Time;
  email: string;
}

/** GET /api/permits/:id, and the answer of every change made to a permit. */
export interface PermitDetail<Time extends Moment = string> extends PermitRecord<Time> {
  actions: PermitAction[];
  timeline: PermitTimelineEvent<Time>[];
  signatures: PermitSignature<Time>[];
  nextGasTestDue: string | null;
  /** Group lockout per person: who has a personal lock on the permit's lockbox now. */
  lockbox: PermitLockbox<Time>;
  /** Other permits whose work range overlaps this one on the same line: a warning, not a refusal. The first ten by number. */
  workOverlaps: WorkOverlap[];
  /** How many more overlapping permits there are beyond those in `workOverlaps` ("and 37 more"). */
  workOverlapsMore: number;
}

/** Another permit working on the same stretch of the same pipeline (simultaneous operations, HSE HSG250). */
export interface WorkOverlap {
  permitNumber: string;
  title: string;
  state: PermitState;
  fromPosition: number;
  toPosition: number;
  /** In plain words, e.g. "PW-2026-0003 (Coating repair) also works between 4.6 and 4.8 on this line". */
  message: string;
}
