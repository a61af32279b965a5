import { QueryTypes, UniqueConstraintError } from 'sequelize';
import { checkAsBuiltPlug } from '@shared/calc';
import type { AcknowledgeStepInput, ApplyStepInput, RemoveStepInput, VerifyStepInput } from '@shared/schemas/isolation.schema';
import type { Action } from '@shared/abilities/define-ability';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord } from '../../lib/authorize';
import { holdsQualification } from '../admin/admin.service';
import { appendAudit } from '../audit/audit.service';
import { findPermit, type PermitRow } from '../permits/permits.repository';
import { applyTransition, auditActor, type CallerContext } from '../permits/permits.service';
import { loadPermitFacts } from '../permits/permit-facts';
import { checkObservedTime, observationBounds } from '../permits/observed-time';
import { findStep, notifyChange, type StepRow } from './isolation-queries';

type StepAction = Extract<Action, 'apply' | 'verify' | 'remove' | 'acknowledge' | 'approve'>;

/** Loads and locks the permit and the step, and checks the caller may act on the step. */
async function load(deps: AppDeps, caller: CallerContext, permitId: string, stepId: string, action: StepAction) {
  const { tenantId } = caller.actor;
  const permit = await findPermit(deps.sequelize, tenantId, permitId, { lock: true });
  authorizeRecord(caller.ability, 'read', 'Permit', permit, 'permit');
  const step = await findStep(deps.sequelize, tenantId, permitId, stepId, true);
  if (!step) throw AppError.notFound('isolation step');
  const subjectType = action === 'approve' ? 'Permit' : 'IsolationStep';
  authorizeRecord(caller.ability, action, subjectType, { ...step, tenantId, contractorOrganisationId: permit!.contractorOrganisationId }, 'isolation step');
  return { permit: permit!, step };
}

async function requireQualification(deps: AppDeps, caller: CallerContext, kind: string, what: string) {
  if (!(await holdsQualification(deps.sequelize, caller.actor.tenantId, caller.user.id, kind, deps.clock.now())))
    throw AppError.unprocessable(`You need an in-date ${kind.replace(/_/g, ' ')} qualification to ${what}.`);
}

/** The CASL action behind each audited step event, so the audit names the role the person acted in. */
const actionOfEvent: Record<string, StepAction> = {
  isolation_applied: 'apply',
  isolation_verified: 'verify',
  isolation_removed: 'remove',
  acknowledged_remote_inhibited: 'acknowledge',
  acknowledged_applied: 'acknowledge',
  acknowledged_removed: 'acknowledge',
  acknowledged_plug_warnings: 'approve',
};

async function audit(deps: AppDeps, caller: CallerContext, permit: PermitRow, step: StepRow, action: string, data: Record<string, unknown> = {}, reason?: string) {
  await appendAudit(deps.sequelize, {
    tenantId: permit.tenantId, entityType: 'isolation_step', entityId: step.id, permitId: permit.id, action, actor: auditActor(caller, actionOfEvent[action] ?? action),
    ip: caller.ip, reason, data: { label: step.label, position: step.position, kind: step.kind, ...data }, occurredAt: deps.clock.now(),
  });
  await notifyChange(deps.sequelize, { tenantId: permit.tenantId, kind: 'isolation', permitId: permit.id, stepId: step.id, action });
}

/** When every step now counts as verified, Holdpoint moves an accepted permit to isolated by itself. */
async function confirmIsolatedIfComplete(deps: AppDeps, permitId: string, tenantId: string) {
  const permit = await findPermit(deps.sequelize, tenantId, permitId);
  if (!permit || permit.state !== 'accepted') return;
  const facts = await loadPermitFacts(deps.sequelize, permit);
  const i = facts.isolation;
  if (i.steps > 0 && i.verified === i.steps && !i.selfVerified && !i.remoteValvesWithoutAck)
    await applyTransition(deps, permit, 'confirm_isolated', {}, { system: 'Every isolation step is applied and verified by a second person.' });
}

async function claimInventory(deps: AppDeps, table: 'locks' | 'tags', tenantId: string, id: string, userId: string) {
  const [row] = await deps.sequelize.query<{ number: string; state: string }>(`SELECT number, state FROM ${table} WHERE tenant_id = :tenantId AND id = :id FOR UPDATE`, {
    replacements: { tenantId, id },
    type: QueryTypes.SELECT,
  });
  const what = table === 'locks' ? 'lock' : 'tag';
  if (!row) throw AppError.validation(`That ${what} is not in this tenant's inventory.`, [{ path: `${what}Id`, message: `Unknown ${what}.` }]);
  if (row.state === 'applied') {
    const [where] = await deps.sequelize.query<{ label: string; number: string }>(
      `SELECT coalesce(ip.tag_code, s.temp_label) AS label, p.number FROM isolation_steps s JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
       LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
       WHERE s.tenant_id = :tenantId AND s.${what}_id = :id AND s.status IN ('applied','verified') LIMIT 1`,
      { replacements: { tenantId, id }, type: QueryTypes.SELECT },
    );
    throw AppError.conflict(`${what === 'lock' ? 'Lock' : 'Tag'} ${row.number} is already on ${where ? `${where.label} (permit ${where.number})` : 'another isolation'}. Choose another.`);
  }
  if (row.state !== 'in_store') throw AppError.conflict(`${what === 'lock' ? 'Lock' : 'Tag'} ${row.number} is ${row.state.replace(/_/g, ' ')} and cannot be used.`);
  await deps.sequelize.query(`UPDATE ${table} SET state = 'applied', holder_user_id = :userId, updated_at = now() WHERE tenant_id = :tenantId AND id = :id`, { replacements: { tenantId, id, userId } });
  return row.number;
}

export async function applyStep(deps: AppDeps, caller: CallerContext, permitId: string, stepId: string, input: ApplyStepInput) {
  const { tenantId } = caller.actor;
  try {
    return await withTenant(deps.sequelize, tenantId, async () => {
      const { permit, step } = await load(deps, caller, permitId, stepId, 'apply');
      if (!['accepted', 'isolated'].includes(permit.state)) throw AppError.unprocessable('Isolations are applied after the contractor lead accepts the permit and before work starts.');
      if (step.status !== 'planned') throw AppError.conflict(`This step is already ${step.status}.`, { current: { status: step.status } });
      await requireQualification(deps, caller, 'lockout_tagout', 'apply isolations');
      const needsLock = step.kind === 'block_valve' || step.kind === 'isolator';
      const details = [];
      if (needsLock && !input.lockId) details.push({ path: 'lockId', message: 'Choose the lock you put on.' });
      if (needsLock && !input.tagId) details.push({ path: 'tagId', message: 'Choose the danger tag you hung.' });
      if (step.kind === 'plug' && !input.asBuilt) details.push({ path: 'asBuilt', message: 'Record the plug as built: bentonite, water and length.' });
      if (details.length) throw AppError.validation('Some details of the isolation are missing.', details);
      const now = deps.clock.now();
      const appliedAt = input.appliedAt ? new Date(input.appliedAt) : now;
      let enteredLate = false;
      if (input.appliedAt || input.asBuilt?.builtAt) {
        const bounds = await observationBounds(deps, permit);
        if (input.appliedAt) enteredLate = checkObservedTime(bounds, appliedAt, 'appliedAt').enteredLate;
        if (input.asBuilt?.builtAt) checkObservedTime(bounds, new Date(input.asBuilt.builtAt), 'asBuilt.builtAt');
      }
      const lockNumber = input.lockId ? await claimInventory(deps, 'locks', tenantId, input.lockId, caller.user.id) : null;
      const tagNumber = input.tagId ? await claimInventory(deps, 'tags', tenantId, input.tagId, caller.user.id) : null;
      let warnings: { code: string; message: string }[] = [];
      let asBuilt: Record<string, unknown> | null = null;
      if (step.kind === 'plug' && input.asBuilt) {
        asBuilt = { ...input.asBuilt, builtAt: input.asBuilt.builtAt ?? appliedAt.toISOString() };
        warnings = checkAsBuiltPlug({ diameterIn: step.plugDiameterIn ?? 0, ...input.asBuilt }).map((w) => ({ code: w.code, message: w.message }));
      }
      await deps.sequelize.query(
        `UPDATE isolation_steps SET status = 'applied', lock_id = :lockId, tag_id = :tagId, applied_by = :userId, applied_at = :appliedAt, applied_entered_late = :enteredLate,
           photo_attachment_id = :photo, plug_as_built = CAST(:asBuilt AS jsonb), plug_warnings = CAST(:warnings AS jsonb), updated_at = :now
         WHERE tenant_id = :tenantId AND id = :stepId`,
        {
          replacements: {
            tenantId, stepId, lockId: input.lockId ?? null, tagId: input.tagId ?? null, userId: caller.user.id, appliedAt, enteredLate, photo: input.photoAttachmentId ?? null,
            asBuilt: asBuilt ? JSON.stringify(asBuilt) : null, warnings: JSON.stringify(warnings), now,
          },
        },
      );
      await audit(deps, caller, permit, step, 'isolation_applied', {
        lock: lockNumber, tag: tagNumber, asBuilt, warnings: warnings.map((w) => w.code), ...(enteredLate ? { appliedAt: appliedAt.toISOString(), enteredLate } : {}),
      });
      return findStep(deps.sequelize, tenantId, permitId, stepId);
    });
  } catch (err) {
    // Two people grabbing the same lock at once: the partial unique index decides, the loser hears why.
    if (err instanceof UniqueConstraintError) throw AppError.conflict('That lock or tag was just put on another isolation. Choose another.');
    throw err;
  }
}

export async function verifyStep(deps: AppDeps, caller: CallerContext, permitId: string, stepId: string, input: VerifyStepInput) {
  const { tenantId } = caller.actor;
  const result = await withTenant(deps.sequelize, tenantId, async () => {
    const { permit, step } = await load(deps, caller, permitId, stepId, 'verify');
    if (step.status !== 'applied') throw AppError.conflict(step.status === 'planned' ? 'This step has not been applied yet.' : `This step is already ${step.status}.`, { current: { status: step.status } });
    if (step.appliedBy === caller.user.id) throw AppError.unprocessable('You applied this isolation, so someone else must verify it (two-person rule).');
    await requireQualification(deps, caller, 'isolation_verifier', 'verify isolations');
    const now = deps.clock.now();
    await deps.sequelize.query(
      `UPDATE isolation_steps SET status = 'verified', verified_by = :userId, verified_at = :now, verification_method = :method, verification_reading = :reading,
         verification_unit = :unit, verification_notes = :notes, updated_at = :now WHERE tenant_id = :tenantId AND id = :stepId`,
      { replacements: { tenantId, stepId, userId: caller.user.id, now, method: input.method, reading: input.reading ?? null, unit: input.unit ?? null, notes: input.notes ?? null } },
    );
    await audit(deps, caller, permit, step, 'isolation_verified', { method: input.method, reading: input.reading ?? null, unit: input.unit ?? null });
    await confirmIsolatedIfComplete(deps, permitId, tenantId);
    return findStep(deps.sequelize, tenantId, permitId, stepId);
  });
  return result;
}

export async function acknowledgeStep(deps: AppDeps, caller: CallerContext, permitId: string, stepId: string, input: AcknowledgeStepInput) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const { permit, step } = await load(deps, caller, permitId, stepId, input.what === 'plug_warnings' ? 'approve' : 'acknowledge');
    const now = deps.clock.now();
    const r = { tenantId, stepId, userId: caller.user.id, now };
    const update = (sql: string) => deps.sequelize.query(`UPDATE isolation_steps SET ${sql}, updated_at = :now WHERE tenant_id = :tenantId AND id = :stepId`, { replacements: r });
    switch (input.what) {
      case 'remote_inhibited':
        if (!step.remotelyOperable) throw AppError.unprocessable('This point cannot be operated remotely; there is nothing to inhibit.');
        if (step.status === 'planned' || step.status === 'removed') throw AppError.unprocessable('Acknowledge remote inhibition once the valve is closed and locked.');
        await update('remote_ack_by = :userId, remote_ack_at = :now');
        break;
      case 'applied':
        if (step.status !== 'applied' && step.status !== 'verified') throw AppError.unprocessable('Only an applied isolation can be acknowledged as applied.');
        await update('control_room_ack_applied_by = :userId, control_room_ack_applied_at = :now');
        break;
      case 'removed':
        if (step.status !== 'removed') throw AppError.unprocessable('Only a removed isolation can be acknowledged as removed.');
        await update('control_room_ack_removed_by = :userId, control_room_ack_removed_at = :now');
        break;
      case 'plug_warnings':
        if (!step.plugWarnings.length) throw AppError.unprocessable('This plug record has no warnings.');
        await update('plug_warnings_ack_by = :userId, plug_warnings_ack_at = :now');
        break;
    }
    await audit(deps, caller, permit, step, `acknowledged_${input.what}`);
    await confirmIsolatedIfComplete(deps, permitId, tenantId);
    return findStep(deps.sequelize, tenantId, permitId, stepId);
  });
}

export async function removeStep(deps: AppDeps, caller: CallerContext, permitId: string, stepId: string, input: RemoveStepInput) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const { permit, step } = await load(deps, caller, permitId, stepId, 'remove');
    if (!['work_complete', 'cancelled'].includes(permit.state)) throw AppError.unprocessable('Isolations come off only after the contractor lead hands the permit back (or it is cancelled).');
    if (step.status !== 'applied' && step.status !== 'verified') throw AppError.conflict(step.status === 'removed' ? 'This isolation is already removed.' : 'This step was never applied.');
    if (step.kind === 'plug' && !input.plugOutcome) throw AppError.validation('Say whether the plug was removed or left to be displaced by product.', [{ path: 'plugOutcome', message: 'Required for a plug.' }]);
    // De-isolation runs in reverse order of application unless a reason is recorded.
    const later = await deps.sequelize.query<{ label: string }>(
      `SELECT coalesce(ip.tag_code, s.temp_label) AS label FROM isolation_steps s LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
       WHERE s.tenant_id = :tenantId AND s.permit_id = :permitId AND s.id <> :stepId AND s.status IN ('applied','verified') AND s.applied_at > :appliedAt ORDER BY s.applied_at DESC`,
      { replacements: { tenantId, permitId, stepId, appliedAt: step.appliedAt }, type: QueryTypes.SELECT },
    );
    if (later.length && !input.outOfOrderReason)
      throw AppError.unprocessable(`Remove in reverse order of application: first ${later.map((l) => l.label).join(', ')}. Give a reason to do otherwise.`);
    if (step.pointId) {
      // Serialise removals on one point: two permits taking their locks off at once must not both
      // count the other's lock as the one that stays.
      await deps.sequelize.query(`SELECT 1 FROM isolation_points WHERE tenant_id = :tenantId AND id = :pointId FOR UPDATE`, { replacements: { tenantId, pointId: step.pointId } });
      const others = await deps.sequelize.query<{ n: number }>(
        `SELECT count(*)::int AS n FROM isolation_steps WHERE tenant_id = :tenantId AND point_id = :pointId AND id <> :stepId AND status IN ('applied','verified')`,
        { replacements: { tenantId, pointId: step.pointId, stepId }, type: QueryTypes.SELECT },
      );
      if (others[0].n === 0) {
        const needing = await deps.sequelize.query<{ number: string }>(
          `SELECT DISTINCT p.number FROM isolation_steps s JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
           WHERE s.tenant_id = :tenantId AND s.point_id = :pointId AND s.permit_id <> :permitId
             AND p.state IN ('accepted','isolated','live','suspended','work_complete') AND s.status <> 'removed' ORDER BY p.number`,
          { replacements: { tenantId, pointId: step.pointId, permitId }, type: QueryTypes.SELECT },
        );
        if (needing.length)
          throw AppError.unprocessable(`${step.label} is the last isolation on this point and permit(s) ${needing.map((n) => n.number).join(', ')} still need it. It stays until they are returned to service.`);
      }
    }
    const now = deps.clock.now();
    const note = [input.plugOutcome === 'displaced_by_product' ? 'Plug left to be displaced by product.' : input.plugOutcome === 'removed' ? 'Plug removed.' : '', input.note ?? '']
      .filter(Boolean)
      .join(' ');
    await deps.sequelize.query(
      `UPDATE isolation_steps SET status = 'removed', removed_by = :userId, removed_at = :now, removal_note = :note, updated_at = :now WHERE tenant_id = :tenantId AND id = :stepId`,
      { replacements: { tenantId, stepId, userId: caller.user.id, now, note: note || null } },
    );
    if (step.lockId) await deps.sequelize.query(`UPDATE locks SET state = 'in_store', holder_user_id = NULL, updated_at = :now WHERE tenant_id = :tenantId AND id = :id`, { replacements: { tenantId, id: step.lockId, now } });
    if (step.tagId) await deps.sequelize.query(`UPDATE tags SET state = 'in_store', holder_user_id = NULL, updated_at = :now WHERE tenant_id = :tenantId AND id = :id`, { replacements: { tenantId, id: step.tagId, now } });
    await audit(deps, caller, permit, step, 'isolation_removed', { lock: step.lockNumber, tag: step.tagNumber, plugOutcome: input.plugOutcome ?? null }, input.outOfOrderReason);
    return findStep(deps.sequelize, tenantId, permitId, stepId);
  });
}
