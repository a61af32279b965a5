import type { Actor, AppAbility } from '@shared/abilities/define-ability';

/** Who is acting: the signed-in person, their rules in the active tenant and where the request came from. */
export interface CallerContext {
  actor: Actor;
  ability: AppAbility;
  user: { id: string; email: string; name: string };
  ip?: string | null;
}

/**
 * The role a person acted in for the audit trail: the first role listed for the action below that
 * they hold, else their first role. It only labels the event; the service has checked their rights.
 */
function actingRole(caller: CallerContext, action: string) {
  const roles = caller.actor.memberships.map((m) => m.role);
  const preferred: Record<string, string[]> = {
    approve: ['authoriser'], reject: ['authoriser'], return_to_service: ['authoriser'], close: ['authoriser'], revalidate: ['authoriser'],
    accept: ['contractor_lead'], hand_back: ['contractor_lead'], start_work: ['contractor_lead'], acknowledge: ['control_room'],
    suspend: ['control_room', 'authoriser'], apply: ['isolation_technician'], verify: ['isolation_technician', 'authoriser'], remove: ['isolation_technician'],
  };
  return (preferred[action] ?? []).find((r) => roles.includes(r as never)) ?? roles[0] ?? null;
}

export function auditActor(caller: CallerContext, action: string) {
  return { userId: caller.user.id, name: caller.user.name, role: actingRole(caller, action) };
}
