import { QueryTypes } from 'sequelize';
import type { RemovalExceptionInput } from '@shared/schemas/isolation.schema';
import type { CrewLockRemovalInput } from '@shared/schemas/lock-transfer.schema';
import type { PermitLockbox } from '@shared/types/crew';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord } from '../../lib/authorize';
import { auditActor, type CallerContext } from '../../lib/caller';
import { holdsQualification } from '../../lib/qualifications';
import { appendAudit } from '../audit/audit.service';
import { notifyChange } from '../isolations/isolation-queries';
import { claimException, completeException, recordException, type AbsentOwnersDevice } from '../isolations/removal-exceptions.service';
import { findPermit } from '../permits/permits.repository';
import { groupLockoutPerPerson, permitLockbox } from './crew-queries';
import { refuseGap } from './crew.service';

// OSHA 29 CFR 1910.147(e)(3) covers personal locks on a group lockbox as well: a crew member who left
// the site with their personal lock still on the box has it taken off only under the same exception
// procedure as an isolation's lock (removal-exceptions.service.ts): an authoriser records that they
// are away, the attempts to reach them and how they will be told, and a third person signs the removal.

interface MemberRow {
  id: string;
  userId: string;
  name: string;
  lock: string;
  signedOnAt: Date;
}

/** Inside withTenant: the permit, locked and readable, and the person's personal lock on its box now (locked). */
async function loadMember(deps: AppDeps, caller: CallerContext, permitId: string, userId: string, action: 'approve' | 'sign_on') {
  const { tenantId } = caller.actor;
  const permit = authorizeRecord(caller.ability, 'read', 'Permit', await findPermit(deps.sequelize, tenantId, permitId, { lock: true }), 'permit');
  if (action === 'approve') authorizeRecord(caller.ability, 'approve', 'IsolationStep', { tenantId, contractorOrganisationId: permit.contractorOrganisationId }, 'permit');
  else authorizeRecord(caller.ability, 'sign_on', 'Permit', permit, 'permit');
  if (!(await groupLockoutPerPerson(deps.sequelize, tenantId))) throw AppError.unprocessable('This site uses one crew lock per permit: personal locks on a lockbox are not used here.');
  const [member] = await deps.sequelize.query<MemberRow>(
    `SELECT c.id, c.user_id AS "userId", u.name, c.personal_lock_number AS lock, c.signed_on_at AS "signedOnAt" FROM permit_crew_members c JOIN users u ON u.id = c.user_id
     WHERE c.tenant_id = :tenantId AND c.permit_id = :permitId AND c.user_id = :userId AND c.signed_off_at IS NULL FOR UPDATE OF c`,
    { replacements: { tenantId, permitId, userId }, type: QueryTypes.SELECT },
  );
  if (!member) throw AppError.conflict('That person has no personal lock on this lockbox now.');
  const device: AbsentOwnersDevice = {
    words: `personal lock ${member.lock} on the lockbox`,
    holderId: member.userId,
    holderName: member.name,
    onSince: member.signedOnAt,
    entityType: 'permit_crew_member',
    auditData: { personalLock: member.lock },
  };
  return { permit, member, device };
}

/** An authoriser records, and signs, that a crew member whose personal lock is on the box is not at the site. */
export async function recordCrewLockException(deps: AppDeps, caller: CallerContext, permitId: string, userId: string, input: RemovalExceptionInput): Promise<PermitLockbox<Date>> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const { member, device } = await loadMember(deps, caller, permitId, userId, 'approve');
    await recordException(deps, caller, permitId, { column: 'crew_member_id', id: member.id }, device, input);
    await notifyChange(deps.sequelize, { tenantId, kind: 'crew', permitId, action: 'removal_exception_recorded' });
    return permitLockbox(deps.sequelize, tenantId, permitId);
  });
}

/**
 * Someone of the crew other than the authoriser who recorded it takes the absent person's personal
 * lock off under the exception, signing; the person is mailed before they return.
 */
export async function removeCrewLockUnderException(deps: AppDeps, caller: CallerContext, permitId: string, userId: string, input: CrewLockRemovalInput): Promise<PermitLockbox<Date>> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const { permit, member, device } = await loadMember(deps, caller, permitId, userId, 'sign_on');
    if (member.userId === caller.user.id) throw AppError.unprocessable('This is your own personal lock: sign off instead.');
    const now = deps.clock.now();
    if (!(await holdsQualification(deps.sequelize, tenantId, caller.user.id, 'lockout_tagout', now)))
      throw AppError.unprocessable('You need an in-date lockout tagout qualification to take a personal lock off the lockbox.');
    await refuseGap(deps, permit, member.id);
    const exception = await claimException(deps, caller, { column: 'crew_member_id', id: member.id }, device, input);
    const underException = await completeException(deps, caller, permit, device, exception, input.signedName, now);
    await deps.sequelize.query(`UPDATE permit_crew_members SET signed_off_at = :now, signed_off_by = :by WHERE tenant_id = :tenantId AND id = :id`, {
      replacements: { tenantId, id: member.id, by: caller.user.id, now },
    });
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'permit_crew_member', entityId: member.id, permitId, action: 'crew_signed_off_under_exception', actor: auditActor(caller, 'remove'), ip: caller.ip,
      data: { personalLock: member.lock, owner: { userId: member.userId, name: member.name }, underException }, occurredAt: now,
    });
    await notifyChange(deps.sequelize, { tenantId, kind: 'crew', permitId, action: 'crew_signed_off_under_exception' });
    return permitLockbox(deps.sequelize, tenantId, permitId);
  });
}
