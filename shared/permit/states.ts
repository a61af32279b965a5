/** Permit states, in plain words of our own. */
export const permitStates = [
  'draft',
  'requested',
  'approved',
  'accepted',
  'isolated',
  'live',
  'suspended',
  'work_complete',
  'returned_to_service',
  'closed',
  'cancelled',
  'expired',
] as const;
export type PermitState = (typeof permitStates)[number];

export const permitStateLabels: Record<PermitState, string> = {
  draft: 'Draft',
  requested: 'Requested',
  approved: 'Approved',
  accepted: 'Accepted',
  isolated: 'Isolated',
  live: 'Live work',
  suspended: 'Suspended',
  work_complete: 'Work complete',
  returned_to_service: 'Returned to service',
  closed: 'Closed',
  cancelled: 'Cancelled',
  expired: 'Expired',
};

/**
 * Colour meaning per ISO 3864 / ANSI Z535: red = stop/danger, yellow = caution, green = safe
 * condition, blue = information. Grey for records that are finished.
 */
export type SafetyTone = 'danger' | 'caution' | 'safe' | 'info' | 'neutral';
export const permitStateTone: Record<PermitState, SafetyTone> = {
  draft: 'neutral',
  requested: 'info',
  approved: 'info',
  accepted: 'info',
  isolated: 'caution',
  live: 'caution',
  suspended: 'danger',
  work_complete: 'caution',
  returned_to_service: 'safe',
  closed: 'neutral',
  cancelled: 'neutral',
  expired: 'danger',
};

export const workKinds = ['hot_work', 'cold_work', 'confined_space', 'excavation'] as const;
export type WorkKind = (typeof workKinds)[number];
export const workKindLabels: Record<WorkKind, string> = {
  hot_work: 'Hot work',
  cold_work: 'Cold work',
  confined_space: 'Confined-space entry',
  excavation: 'Excavation',
};

/** The qualification a contractor lead must hold to accept a permit of each kind of work. */
export const qualificationForKind: Record<WorkKind, string> = {
  hot_work: 'hot_work_holder',
  cold_work: 'cold_work_holder',
  confined_space: 'confined_space_entry',
  excavation: 'excavation',
};

/*
 * Which states share a rule, written once here for the screens, the services and the SQL (passed in
 * as parameters). Each list is one rule; two lists holding the same states today stay apart when
 * their reasons differ.
 */

const holding = ['accepted', 'isolated', 'live', 'suspended', 'work_complete'] as const satisfies readonly PermitState[];
/** States in which the permit's isolations must stay in place. */
export const holdsIsolations: readonly PermitState[] = holding;
/** The permit states the live board shows and can be filtered by: those in which isolations can be on. */
export const boardPermitStates = [...holding, 'cancelled'] as const satisfies readonly PermitState[];
export type BoardPermitState = (typeof boardPermitStates)[number];

/** The permit's work is over, one way or another. */
export const finishedStates: readonly PermitState[] = ['returned_to_service', 'closed', 'cancelled'];
/** Closed for good: what was true at close-out stays the record, so it takes no new files. */
export const closedStates: readonly PermitState[] = ['closed', 'cancelled'];
/** The limits the permit's gas tests are judged against can no longer change. */
export const limitsFixedStates: readonly PermitState[] = [...finishedStates, 'expired'];

/** The permit and its isolation plan change only while a draft: they are reviewed together and frozen once sent. */
export const editableStates: readonly PermitState[] = ['draft'];

/** The crew is on the job: gas tests and checks may be recorded and the before-work checklist confirmed. */
export const workOpenStates: readonly PermitState[] = ['accepted', 'isolated', 'live', 'suspended'];
/** Work has started and not been handed back: hot work can stop, the fire watch runs, shifts hand over, a gas test is a repeat test. */
export const workUnderWayStates: readonly PermitState[] = ['live', 'suspended'];
/** Work is going on: repeat gas tests fall due, and a failing test or check suspends the permit. */
export const liveStates: readonly PermitState[] = ['live'];
/** Work is stopped and waits to go on: the reason it stopped and who stopped it are shown with the permit. */
export const suspendedStates: readonly PermitState[] = ['suspended'];
/** Waiting for the authoriser's re-validation: expired before work started, or suspended (which ones, `awaitsAuthoriser` in suspension.ts). */
export const revalidationStates: readonly PermitState[] = ['suspended', 'expired'];
/** The isolations are signed in place and not handed back: vent and plug checks fall due whether the work is going on or stopped. */
export const isolationCheckStates: readonly PermitState[] = ['isolated', 'live', 'suspended'];
/** Before the isolations are signed in place (an expired permit may go back to one of these when re-validated). */
export const beforeIsolatedStates: readonly PermitState[] = ['draft', 'requested', 'approved', 'accepted', 'expired'];
/** Sent for approval and not yet handed back: another permit's work on the same stretch of line is flagged to both authorisers. */
export const workOverlapStates: readonly PermitState[] = ['requested', 'approved', ...holding];
/** The isolations are signed in place and work is not handed back: the crew may put personal locks on the permit's lockbox. */
export const crewSignOnStates: readonly PermitState[] = ['isolated', 'live', 'suspended'];
/** A permit may take on another permit's isolation certificate while it is still being planned, before its own isolations count. */
export const certificateLinkStates: readonly PermitState[] = ['draft', 'requested', 'approved', 'accepted'];
/** Once here a permit no longer relies on its isolation certificate; a certificate nothing relies on and whose isolations are off is returned. */
export const certificateReleaseStates: readonly PermitState[] = ['returned_to_service', 'closed', 'cancelled'];

/** When each of the permit's lists may be ticked: the before-work checklist by the crew, the walk-down once work is complete. */
export const checklistOpenStates: Record<'checklist' | 'walkdown', readonly PermitState[]> = {
  checklist: workOpenStates,
  walkdown: ['work_complete'],
};

/** Not on the week-ahead plan: a draft is not sent yet, a cancelled permit will not happen. */
export const notPlannedStates: readonly PermitState[] = ['draft', 'cancelled'];
/** The moments a permit's stage times are measured between (the management report): sent, issued, work started, returned. */
export const stageMilestones = { requested: 'requested', approved: 'approved', live: 'live', returned: 'returned_to_service' } as const satisfies Record<string, PermitState>;
