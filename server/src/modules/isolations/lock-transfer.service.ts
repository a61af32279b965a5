import { QueryTypes, UniqueConstraintError } from 'sequelize';
import { carriesDevice } from '@shared/isolations/lockout-rules';
import { isInPlace } from '@shared/isolations/step-rules';
import type { LockTransferInput } from '@shared/schemas/lock-transfer.schema';
import type { ErrorDetail } from '@shared/errors/error-codes';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord } from '../../lib/authorize';
import { auditActor, type CallerContext } from '../../lib/caller';
import { holdsQualification } from '../../lib/qualifications';
import { requireSignature } from '../auth/signature-password';
import { appendAudit } from '../audit/audit.service';
import { findPermit, type PermitRow } from '../permits/permits.repository';
import { findStep, notifyChange } from './isolation-queries';
import { claimInventory } from './isolation-steps.service';

// Shift change (OSHA 29 CFR 1910.147(f)(4)): "specific procedures shall be utilized during shift or
// personnel changes to ensure the continuity of lockout or tagout protection, including provision for
// the orderly transfer of lockout or tagout device protection between off-going and oncoming
// employees". Here both people stand at the point (or the box) together: the oncoming person's own
// lock goes on as the off-going person's comes off, in one transaction, and both sign on the same
// screen, each with their own password. There is never a moment with neither lock on, and never a
// lock on record that its holder did not sign for.

export interface Oncoming {
  id: string;
  name: string;
}

/**
 * The oncoming person: one of the permit contractor's people in one of the given roles, with an
 * in-date lockout qualification, signing with their own name and password. Their signature's form
 * errors are named under `oncoming.`.
 */
export async function oncomingPerson(
  deps: AppDeps,
  caller: CallerContext,
  permit: PermitRow,
  oncoming: { email: string; signedName: string; password: string },
  roles: readonly string[],
): Promise<Oncoming> {
  if (oncoming.email === caller.user.email.toLowerCase()) throw AppError.unprocessable('Hand over to the person taking over from you: you cannot hand over to yourself.');
  const [person] = await deps.sequelize.query<Oncoming>(
    `SELECT u.id, u.name FROM users u
     WHERE lower(u.email) = :email AND EXISTS (SELECT 1 FROM memberships m WHERE m.tenant_id = :tenantId AND m.user_id = u.id AND m.organisation_id = :org AND m.role IN (:roles))`,
    { replacements: { email: oncoming.email, tenantId: permit.tenantId, org: permit.contractorOrganisationId, roles }, type: QueryTypes.SELECT },
  );
  if (!person)
    throw AppError.unprocessable('The person taking over must be one of the contractor crew on this permit.', [{ path: 'oncoming.email', message: 'Give the sign-in e-mail of someone of this permit’s crew.' }]);
  if (!(await holdsQualification(deps.sequelize, permit.tenantId, person.id, 'lockout_tagout', deps.clock.now())))
    throw AppError.unprocessable(`${person.name} needs an in-date lockout tagout qualification to take over a lock.`, [{ path: 'oncoming.email', message: 'No in-date lockout tagout qualification.' }]);
  try {
    await requireSignature(deps, person, oncoming);
  } catch (err) {
    if (err instanceof AppError && err.code === 'validation_failed')
      throw AppError.validation(`${person.name}’s signature is not complete.`, err.details.map((d: ErrorDetail) => ({ ...d, path: `oncoming.${d.path}` })));
    throw err;
  }
  return person;
}

/** Inside withTenant: every handover on the permit, oldest first, as the permit page lists them. */
export async function listTransfers(deps: AppDeps, tenantId: string, permitId: string) {
  return deps.sequelize.query<{ kind: 'lock' | 'lockbox'; stepId: string | null; fromName: string; toName: string; oldLockNumber: string | null; newLockNumber: string; transferredAt: Date }>(
    `SELECT t.kind, t.step_id AS "stepId", uf.name AS "fromName", ut.name AS "toName", t.old_lock_number AS "oldLockNumber", t.new_lock_number AS "newLockNumber", t.transferred_at AS "transferredAt"
     FROM lock_transfers t JOIN users uf ON uf.id = t.from_user_id JOIN users ut ON ut.id = t.to_user_id
     WHERE t.tenant_id = :tenantId AND t.permit_id = :permitId ORDER BY t.transferred_at, t.created_at`,
    { replacements: { tenantId, permitId }, type: QueryTypes.SELECT },
  );
}

async function releaseInventory(deps: AppDeps, table: 'locks' | 'tags', tenantId: string, id: string, now: Date) {
  await deps.sequelize.query(`UPDATE ${table} SET state = 'in_store', holder_user_id = NULL, updated_at = :now WHERE tenant_id = :tenantId AND id = :id`, { replacements: { tenantId, id, now } });
}

/**
 * Lock by lock: the holder of an isolation's lock (and tag) hands it over to the oncoming person,
 * whose own lock (and tag) goes on in the same transaction. From then on the oncoming person is the
 * one who takes it off (shared/isolations/lockout-rules.ts).
 */
export async function transferLock(deps: AppDeps, caller: CallerContext, permitId: string, stepId: string, input: LockTransferInput) {
  const { tenantId } = caller.actor;
  try {
    return await withTenant(deps.sequelize, tenantId, async () => {
      const permit = authorizeRecord(caller.ability, 'read', 'Permit', await findPermit(deps.sequelize, tenantId, permitId, { lock: true }), 'permit');
      const step = await findStep(deps.sequelize, tenantId, permitId, stepId, true);
      if (!step) throw AppError.notFound('isolation step');
      authorizeRecord(caller.ability, 'read', 'IsolationStep', { ...step, tenantId, contractorOrganisationId: permit.contractorOrganisationId }, 'isolation step');
      if (!isInPlace(step.status)) throw AppError.conflict(step.status === 'removed' ? 'This isolation is already off: there is no lock to hand over.' : 'This isolation is not on yet: there is no lock to hand over.');
      if (!carriesDevice(step)) throw AppError.unprocessable('This isolation has no lock or tag of its own, so there is nothing to hand over.');
      if (step.heldBy !== caller.user.id)
        throw AppError.unprocessable(
          `${step.heldByName ?? 'Someone else'} holds the lock on ${step.label}, so only they hand it over. If they have left the site, an authoriser records the exception procedure instead.`,
        );
      const details: ErrorDetail[] = [];
      if (step.lockId && !input.lockId) details.push({ path: 'lockId', message: 'Choose the lock the person taking over puts on.' });
      if (!step.lockId && input.lockId) details.push({ path: 'lockId', message: 'This isolation has no lock: hand over the tag only.' });
      if (step.tagId && !input.tagId) details.push({ path: 'tagId', message: 'Choose the danger tag the person taking over hangs, with their name on it.' });
      if (!step.tagId && input.tagId) details.push({ path: 'tagId', message: 'This isolation has no tag: hand over the lock only.' });
      if (details.length) throw AppError.validation('Some details of the handover are missing.', details);
      await requireSignature(deps, caller.user, input);
      const to = await oncomingPerson(deps, caller, permit, input.oncoming, ['contractor_lead', 'isolation_technician']);

      const now = deps.clock.now();
      // The old lock comes back to the store first, so the new one is never refused as "already on" this point.
      if (step.lockId) await releaseInventory(deps, 'locks', tenantId, step.lockId, now);
      if (step.tagId) await releaseInventory(deps, 'tags', tenantId, step.tagId, now);
      const newLock = input.lockId ? await claimInventory(deps, 'locks', tenantId, input.lockId, to.id) : null;
      const newTag = input.tagId ? await claimInventory(deps, 'tags', tenantId, input.tagId, to.id) : null;
      await deps.sequelize.query(
        `INSERT INTO lock_transfers (tenant_id, permit_id, kind, step_id, from_user_id, to_user_id, old_lock_number, new_lock_number, new_lock_id, old_tag_number, new_tag_number,
                                     from_signed_name, to_signed_name, transferred_at)
         VALUES (:tenantId, :permitId, 'lock', :stepId, :from, :to, :oldLock, :newLockNumber, :newLockId, :oldTag, :newTag, :fromName, :toName, :now)`,
        {
          replacements: {
            tenantId, permitId, stepId, from: caller.user.id, to: to.id, oldLock: step.lockNumber, newLockNumber: newLock ?? newTag, newLockId: input.lockId ?? null,
            oldTag: step.tagNumber, newTag, fromName: input.signedName, toName: input.oncoming.signedName, now,
          },
        },
      );
      await deps.sequelize.query(
        `UPDATE isolation_steps SET lock_id = :lockId, tag_id = :tagId, held_by = :to, updated_at = :now WHERE tenant_id = :tenantId AND id = :stepId`,
        { replacements: { tenantId, stepId, lockId: input.lockId ?? null, tagId: input.tagId ?? null, to: to.id, now } },
      );
      await appendAudit(deps.sequelize, {
        tenantId, entityType: 'isolation_step', entityId: step.id, permitId, action: 'lock_handed_over', actor: auditActor(caller, 'apply'), ip: caller.ip, occurredAt: now,
        data: {
          label: step.label, position: step.position, kind: step.kind, from: { userId: caller.user.id, name: caller.user.name, signedName: input.signedName },
          to: { userId: to.id, name: to.name, signedName: input.oncoming.signedName }, oldLock: step.lockNumber, newLock, oldTag: step.tagNumber, newTag,
        },
      });
      await notifyChange(deps.sequelize, { tenantId, kind: 'isolation', permitId, stepId, action: 'lock_handed_over' });
      return findStep(deps.sequelize, tenantId, permitId, stepId);
    });
  } catch (err) {
    if (err instanceof UniqueConstraintError) throw AppError.conflict('That lock or tag was just put on another isolation. Choose another.');
    throw err;
  }
}
