/**
 * Who stopped the work on a suspended permit. It decides who may start it again: a permit the lead
 * stopped may be resumed by the lead; one stopped by the control room, an authoriser or Holdpoint
 * itself (a failing gas test, a failed check, an overdue gas test, the validity window ending)
 * resumes only when an authoriser re-validates it with a reason (HSE HSG250, common practice).
 */
export const suspendedByKinds = ['lead', 'authoriser', 'control_room', 'system'] as const;
export type SuspendedByKind = (typeof suspendedByKinds)[number];

export const suspendedByLabels: Record<SuspendedByKind, string> = {
  lead: 'the contractor lead',
  authoriser: 'an authoriser',
  control_room: 'the control room',
  system: 'Holdpoint (a failed gas test or check, or time running out)',
};

/** Whether only an authoriser, with a reason, may resume a permit suspended this way. */
export const resumeNeedsAuthoriser = (kind: SuspendedByKind | null | undefined) => kind !== 'lead';

/** The kind a person's suspension is recorded as: their strongest role that may suspend. */
export function suspendedByKindFor(roles: readonly string[]): SuspendedByKind {
  if (roles.includes('authoriser')) return 'authoriser';
  if (roles.includes('control_room')) return 'control_room';
  if (roles.includes('contractor_lead')) return 'lead';
  return 'system';
}
