import { revalidationStates, suspendedStates, type PermitState } from './states';

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

/**
 * Waiting for the authoriser's re-validation before work may go on: a permit that expired before work
 * started, or a suspended one whose time ran out or which someone other than the lead stopped.
 */
export function awaitsAuthoriser(state: PermitState, expiredFlag: boolean, suspendedByKind: SuspendedByKind | null | undefined): boolean {
  if (!revalidationStates.includes(state)) return false;
  return !suspendedStates.includes(state) || expiredFlag || resumeNeedsAuthoriser(suspendedByKind);
}

/** The kind a person's suspension is recorded as: their strongest role that may suspend. */
export function suspendedByKindFor(roles: readonly string[]): SuspendedByKind {
  if (roles.includes('authoriser')) return 'authoriser';
  if (roles.includes('control_room')) return 'control_room';
  if (roles.includes('contractor_lead')) return 'lead';
  return 'system';
}
