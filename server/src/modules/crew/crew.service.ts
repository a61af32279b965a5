import { QueryTypes, UniqueConstraintError } from 'sequelize';
import { crewSignOnStates, liveStates } from '@shared/permit/states';
import type { CrewSignOffInput, CrewSignOnInput } from '@shared/schemas/crew.schema';
import type { CrewHandOverInput } from '@shared/schemas/lock-transfer.schema';
import type { PermitLockbox } from '@shared/types/crew';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord } from '../../lib/authorize';
import { auditActor, type CallerContext } from '../../lib/caller';
import { holdsQualification } from '../../lib/qualifications';
import { appendAudit } from '../audit/audit.service';
import { notifyChange } from '../isolations/isolation-queries';
import { findPermit, type PermitRow } from '../permits/permits.repository';
import { oncomingPerson } from '../isolations/lock-transfer.service';
import { requireSignature } from '../auth/signature-password';
import { groupLockoutPerPerson, permitLockbox } from './crew-queries';

// Group lockout per person (OSHA 29 CFR 1910.147(f)(3)(ii)(D)): each person working puts a personal
// lock on the permit's lockbox when they begin and takes it off when they stop; the box, and with it
// the keys of the permit's isolation locks, opens only when every personal lock is off.

/**
 * Loads and locks the permit and checks the caller may act: signing on takes `sign_on` (the
 * contractor's leads, isolation technicians and gas testers); signing off only reading the permit, so
 * a person whose role changed can still take their own lock off.
 */
async function loadForCrew(deps: AppDeps, caller: CallerContext, permitId: string, action: 'sign_on' | 'read') {
  const { tenantId } = caller.actor;
  const permit = authorizeRecord(caller.ability, 'read', 'Permit', await findPermit(deps.sequelize, tenantId, permitId, { lock: true }), 'permit');
  authorizeRecord(caller.ability, action, 'Permit', permit, 'permit');
  if (!(await groupLockoutPerPerson(deps.sequelize, tenantId)))
    throw AppError.unprocessable('This site uses one crew lock per permit: personal locks on a lockbox are not used here.');
  return permit;
}

async function audit(deps: AppDeps, caller: CallerContext, permit: PermitRow, memberId: string, action: string, data: Record<string, unknown>) {
  await appendAudit(deps.sequelize, {
    tenantId: permit.tenantId, entityType: 'permit_crew_member', entityId: memberId, permitId: permit.id, action, actor: auditActor(caller, action), ip: caller.ip, data,
    occurredAt: deps.clock.now(),
  });
  await notifyChange(deps.sequelize, { tenantId: permit.tenantId, kind: 'crew', permitId: permit.id, action });
}

export async function signOn(deps: AppDeps, caller: CallerContext, permitId: string, input: CrewSignOnInput): Promise<PermitLockbox<Date>> {
  const { tenantId } = caller.actor;
  try {
    return await withTenant(deps.sequelize, tenantId, async () => {
      const permit = await loadForCrew(deps, caller, permitId, 'sign_on');
      if (!crewSignOnStates.includes(permit.state))
        throw AppError.unprocessable('The crew signs on once the authoriser has signed the isolations in place, and until the permit is handed back.');
      const now = deps.clock.now();
      if (!(await holdsQualification(deps.sequelize, tenantId, caller.user.id, 'lockout_tagout', now)))
        throw AppError.unprocessable('You need an in-date lockout tagout qualification to put your personal lock on the lockbox.');
      const [on] = await deps.sequelize.query<{ lock: string }>(
        `SELECT personal_lock_number AS lock FROM permit_crew_members WHERE tenant_id = :tenantId AND permit_id = :permitId AND user_id = :userId AND signed_off_at IS NULL`,
        { replacements: { tenantId, permitId, userId: caller.user.id }, type: QueryTypes.SELECT },
      );
      if (on) throw AppError.conflict(`You are already signed on, with personal lock ${on.lock}.`);
      // The box comes into being with its first personal lock: the permit is Isolated by then, so every key is already in it.
      const [box] = await deps.sequelize.query<{ id: string; label: string }>(
        `INSERT INTO permit_lockboxes (tenant_id, permit_id, label, created_by, created_at) VALUES (:tenantId, :permitId, :label, :userId, :now)
         ON CONFLICT (tenant_id, permit_id) DO UPDATE SET label = permit_lockboxes.label RETURNING id, label`,
        { replacements: { tenantId, permitId, label: `Lockbox ${permit.number}`, userId: caller.user.id, now }, type: QueryTypes.SELECT },
      );
      const [row] = await deps.sequelize.query<{ id: string }>(
        `INSERT INTO permit_crew_members (tenant_id, permit_id, lockbox_id, user_id, personal_lock_number, signed_on_at, signed_on_by)
         VALUES (:tenantId, :permitId, :boxId, :userId, :lock, :now, :userId) RETURNING id`,
        { replacements: { tenantId, permitId, boxId: box.id, userId: caller.user.id, lock: input.personalLockNumber, now }, type: QueryTypes.SELECT },
      );
      await audit(deps, caller, permit, row.id, 'crew_signed_on', { lockbox: box.label, personalLock: input.personalLockNumber });
      return permitLockbox(deps.sequelize, tenantId, permitId);
    });
  } catch (err) {
    if (err instanceof UniqueConstraintError) throw AppError.conflict('That personal lock number is already on this lockbox, or you have just signed on. Check your lock number.');
    throw err;
  }
}

/**
 * OSHA 29 CFR 1910.147(f)(4): lockout protection continues through a shift change. While work is live,
 * the last personal lock does not come off the box on its own: it is handed over to the oncoming
 * person, or the permit is suspended first (work stopped) and then the box may empty.
 */
export async function refuseGap(deps: AppDeps, permit: PermitRow, memberId: string) {
  if (!liveStates.includes(permit.state)) return;
  const [others] = await deps.sequelize.query<{ n: number }>(
    `SELECT count(*)::int AS n FROM permit_crew_members WHERE tenant_id = :tenantId AND permit_id = :permitId AND signed_off_at IS NULL AND id <> :memberId`,
    { replacements: { tenantId: permit.tenantId, permitId: permit.id, memberId }, type: QueryTypes.SELECT },
  );
  if (others.n === 0)
    throw AppError.unprocessable(
      'Yours is the last personal lock on the lockbox and work is still going on. Hand over your lock to the person taking over (“Hand over my lock”), or have the permit suspended before you sign off.',
    );
}

/**
 * Shift change on the lockbox (OSHA 29 CFR 1910.147(f)(4)): the signed-in person's personal lock comes
 * off as the oncoming person's goes on, in one transaction, both signing. The box is never empty.
 */
export async function handOver(deps: AppDeps, caller: CallerContext, permitId: string, input: CrewHandOverInput): Promise<PermitLockbox<Date>> {
  const { tenantId } = caller.actor;
  try {
    return await withTenant(deps.sequelize, tenantId, async () => {
      const permit = await loadForCrew(deps, caller, permitId, 'read');
      if (!crewSignOnStates.includes(permit.state)) throw AppError.unprocessable('Personal locks are handed over while the isolations are signed in place and the work is not handed back.');
      const [mine] = await deps.sequelize.query<{ id: string; lock: string }>(
        `SELECT id, personal_lock_number AS lock FROM permit_crew_members
         WHERE tenant_id = :tenantId AND permit_id = :permitId AND user_id = :userId AND signed_off_at IS NULL FOR UPDATE`,
        { replacements: { tenantId, permitId, userId: caller.user.id }, type: QueryTypes.SELECT },
      );
      if (!mine) throw AppError.unprocessable('You have no personal lock on this lockbox, so there is nothing to hand over.');
      await requireSignature(deps, caller.user, input);
      const to = await oncomingPerson(deps, caller, permit, input.oncoming, ['contractor_lead', 'isolation_technician', 'gas_tester']);
      const [already] = await deps.sequelize.query<{ lock: string }>(
        `SELECT personal_lock_number AS lock FROM permit_crew_members WHERE tenant_id = :tenantId AND permit_id = :permitId AND user_id = :userId AND signed_off_at IS NULL`,
        { replacements: { tenantId, permitId, userId: to.id }, type: QueryTypes.SELECT },
      );
      if (already) throw AppError.conflict(`${to.name} is already on the lockbox with personal lock ${already.lock}: you can simply sign off.`);
      const now = deps.clock.now();
      await deps.sequelize.query(`UPDATE permit_crew_members SET signed_off_at = :now, signed_off_by = :userId WHERE tenant_id = :tenantId AND id = :id`, {
        replacements: { tenantId, id: mine.id, userId: caller.user.id, now },
      });
      const [row] = await deps.sequelize.query<{ id: string }>(
        `INSERT INTO permit_crew_members (tenant_id, permit_id, lockbox_id, user_id, personal_lock_number, signed_on_at, signed_on_by)
         SELECT tenant_id, permit_id, lockbox_id, :to, :lock, :now, :to FROM permit_crew_members WHERE tenant_id = :tenantId AND id = :id RETURNING id`,
        { replacements: { tenantId, id: mine.id, to: to.id, lock: input.personalLockNumber, now }, type: QueryTypes.SELECT },
      );
      await deps.sequelize.query(
        `INSERT INTO lock_transfers (tenant_id, permit_id, kind, from_crew_member_id, to_crew_member_id, from_user_id, to_user_id, old_lock_number, new_lock_number, from_signed_name, to_signed_name, transferred_at)
         VALUES (:tenantId, :permitId, 'lockbox', :fromMember, :toMember, :from, :to, :oldLock, :newLock, :fromName, :toName, :now)`,
        {
          replacements: {
            tenantId, permitId, fromMember: mine.id, toMember: row.id, from: caller.user.id, to: to.id, oldLock: mine.lock, newLock: input.personalLockNumber,
            fromName: input.signedName, toName: input.oncoming.signedName, now,
          },
        },
      );
      await audit(deps, caller, permit, row.id, 'crew_lock_handed_over', {
        from: { userId: caller.user.id, name: caller.user.name, personalLock: mine.lock, signedName: input.signedName },
        to: { userId: to.id, name: to.name, personalLock: input.personalLockNumber, signedName: input.oncoming.signedName },
      });
      return permitLockbox(deps.sequelize, tenantId, permitId);
    });
  } catch (err) {
    if (err instanceof UniqueConstraintError) throw AppError.conflict('That personal lock number is already on this lockbox. Check the lock number of the person taking over.');
    throw err;
  }
}

export async function signOff(deps: AppDeps, caller: CallerContext, permitId: string, _input: CrewSignOffInput): Promise<PermitLockbox<Date>> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = await loadForCrew(deps, caller, permitId, 'read');
    const [row] = await deps.sequelize.query<{ id: string; lock: string }>(
      `SELECT id, personal_lock_number AS lock FROM permit_crew_members
       WHERE tenant_id = :tenantId AND permit_id = :permitId AND user_id = :userId AND signed_off_at IS NULL FOR UPDATE`,
      { replacements: { tenantId, permitId, userId: caller.user.id }, type: QueryTypes.SELECT },
    );
    // Only the person takes their own personal lock off (OSHA 29 CFR 1910.147(e)(3)): there is no one to sign off for.
    if (!row) throw AppError.unprocessable('You have no personal lock on this lockbox. Only the person who put a personal lock on takes it off.');
    await refuseGap(deps, permit, row.id);
    await deps.sequelize.query(`UPDATE permit_crew_members SET signed_off_at = :now, signed_off_by = :userId WHERE tenant_id = :tenantId AND id = :id`, {
      replacements: { tenantId, id: row.id, userId: caller.user.id, now: deps.clock.now() },
    });
    await audit(deps, caller, permit, row.id, 'crew_signed_off', { personalLock: row.lock });
    return permitLockbox(deps.sequelize, tenantId, permitId);
  });
}
