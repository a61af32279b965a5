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

/** States in which the permit's isolations must stay in place. */
export const holdsIsolations: readonly PermitState[] = ['accepted', 'isolated', 'live', 'suspended', 'work_complete'];
export const finishedStates: readonly PermitState[] = ['returned_to_service', 'closed', 'cancelled'];
