import type { Action, SubjectName } from '@shared/abilities/define-ability';
import { permitStateLabels, workOpenStates, type PermitState } from '@shared/permit/states';
import type { AppDeps } from '../../deps';
import { AppError } from '../../errors/app-error';
import { authorizeRecord, authorizeType } from '../../lib/authorize';
import { findPermit, type PermitRow } from '../permits/permits.repository';
import type { CallerContext } from '../../lib/caller';

/**
 * Loads a permit the caller may read (another tenant's, or one they may not see, is a 404), then
 * checks the caller may do `action` on `type` records of that permit (403 otherwise). Inside withTenant.
 */
export async function permitFor(
  deps: AppDeps,
  caller: CallerContext,
  id: string,
  need: { action: Action; type: Exclude<SubjectName, 'all'>; what: string },
  opts: { lock?: boolean } = {},
): Promise<PermitRow> {
  const permit = authorizeRecord(caller.ability, 'read', 'Permit', await findPermit(deps.sequelize, caller.actor.tenantId, id, opts), 'permit');
  if (need.type === 'Permit') authorizeRecord(caller.ability, need.action, 'Permit', permit, 'permit');
  else authorizeType(caller.ability, need.action, need.type, { tenantId: permit.tenantId, contractorOrganisationId: permit.contractorOrganisationId }, need.what);
  return permit;
}

export function requireWorkOpen(permit: PermitRow, what: string, states: readonly PermitState[] = workOpenStates) {
  if (!states.includes(permit.state))
    throw AppError.unprocessable(`${what} can be recorded only while the permit is ${states.map((s) => permitStateLabels[s].toLowerCase()).join(', ')}; it is ${permitStateLabels[permit.state].toLowerCase()}.`);
}
