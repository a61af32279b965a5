import { QueryTypes, UniqueConstraintError } from 'sequelize';
import { checkAsBuiltPlug } from '@shared/calc';
import type { AcknowledgeStepInput, ApplyStepInput, RemoveStepInput, VerifyStepInput } from '@shared/schemas/isolation.schema';
import type { Action } from '@shared/abilities/define-ability';
import { certificateReleaseStates, holdsIsolations } from '@shared/permit/states';
import { acknowledgementAction, inPlaceStatuses, stepActionRefusal, takesLock } from '@shared/isolations/step-rules';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord } from '../../lib/authorize';
import { holdsQualification } from '../../lib/qualifications';
import { appendAudit } from '../audit/audit.service';
import { findPermit, type PermitRow } from '../permits/permits.repository';
import { auditActor, type CallerContext } from '../../lib/caller';
import { checkObservedTime, observationBounds } from '../permits/observed-time';
import { appliedAfter, earlierNotApplied, removalNeedsException } from '@shared/isolations/lockout-rules';
import { findStep, listSteps, notifyChange, type StepRow } from './isolation-queries';
import { claimRemovalException, completeRemovalException } from './removal-exceptions.service';
import { pointNeighbours } from './isolation-neighbours';
import { crewOnLockbox, groupLockoutPerPerson } from '../crew/crew-queries';
import { certificateRemovalCheck, returnIfDone } from '../certificates/certificate-lifecycle';

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

/** A check valve lets product through one way and cannot be closed and locked: it is never an isolation (HSE HSG253). */
async function refuseCheckValve(deps: AppDeps, tenantId: string, step: StepRow) {
  const [point] = await deps.sequelize.query<{ valveType: string | null }>(`SELECT valve_type AS "valveType" FROM isolation_points WHERE tenant_id = :tenantId AND id = :id`, {
    replacements: { tenantId, id: step.pointId },
    type: QueryTypes.SELECT,
  });
  if (point?.valveType === 'check')
    throw AppError.unprocessable(
      `${step.label} is a check valve. A check valve lets product through one way and cannot be closed and locked, so it is never an isolation: isolate at a block valve, a blind or a line stop instead.`,
    );
}

/** Takes a lock or tag from the store for the person who puts it on; refuses one already on or out of use. */
export async function claimInventory(deps: AppDeps, table: 'locks' | 'tags', tenantId: string, id: string, userId: string) {
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
       WHERE s.tenant_id = :tenantId AND s.${what}_id = :id AND s.status IN (:inPlace) LIMIT 1`,
      { replacements: { tenantId, id, inPlace: inPlaceStatuses }, type: QueryTypes.SELECT },
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
      const refused = stepActionRefusal('apply', step, permit.state);
      if (refused === 'permit_state') throw AppError.unprocessable('Isolations are applied after the contractor lead accepts the permit and before work starts.');
      if (refused) throw AppError.conflict(`This step is already ${step.status}.`, { current: { status: step.status } });
      if (step.kind === 'block_valve' && step.pointId) await refuseCheckValve(deps, tenantId, step);
      // Simultaneous operations (HSE HSG250): another permit may have put this point in place since the plan was approved.
      if (step.pointId) {
        const { conflicts } = await pointNeighbours(deps.sequelize, tenantId, permitId, step.id);
        if (conflicts.length)
          throw AppError.unprocessable(
            `${conflicts.map((c) => c.message).join('; ')}. Do not operate it: the authoriser must sort out the two permits first.`,
            conflicts.map((c) => ({ path: 'stepId', message: `${c.message}.` })),
          );
      }
      await requireQualification(deps, caller, 'lockout_tagout', 'apply isolations');
      // Isolations go on in the plan's order (HSE HSG253); another order needs a reason, kept on the step.
      const skipped = earlierNotApplied(step, await listSteps(deps.sequelize, tenantId, permitId));
      if (skipped.length && !input.outOfOrderReason) {
        const message = `Apply the isolations in the plan's order: first ${skipped.map((s) => s.label).join(', ')}. Give a reason to do otherwise.`;
        throw AppError.unprocessable(message, [{ path: 'outOfOrderReason', message }]);
      }
      const outOfOrderReason = skipped.length ? (input.outOfOrderReason ?? null) : null;
      const needsLock = takesLock(step.kind);
      const details = [];
      if (needsLock && !input.lockId) details.push({ path: 'lockId', message: 'Choose the lock you put on.' });
      if (needsLock && !input.tagId) details.push({ path: 'tagId', message: 'Choose the danger tag you hung.' });
      if (step.kind === 'plug' && !input.asBuilt) details.push({ path: 'asBuilt', message: 'Record the plug as built: bentonite, water and length.' });
      if (step.kind === 'line_stop' && input.asBuilt)
        details.push({ path: 'asBuilt', message: 'A line stop or mechanical plug is not a mud plug: record the device, its size and the set pressure or position, not weights.' });
      if (step.kind === 'line_stop' && !input.lineStop) details.push({ path: 'lineStop', message: 'Record the line stop as set: the device, its size, and the set pressure or where it is set.' });
      if (step.kind !== 'line_stop' && input.lineStop) details.push({ path: 'lineStop', message: 'Only a line stop or mechanical plug takes this record.' });
      if (details.length) throw AppError.validation('Some details of the isolation are missing.', details);
      const now = deps.clock.now();
      const appliedAt = input.appliedAt ? new Date(input.appliedAt) : now;
      let enteredLate = false;
      if (input.appliedAt || input.asBuilt?.builtAt || input.lineStop?.setAt) {
        const bounds = await observationBounds(deps, permit);
        if (input.appliedAt) enteredLate = checkObservedTime(bounds, appliedAt, 'appliedAt').enteredLate;
        if (input.asBuilt?.builtAt) checkObservedTime(bounds, new Date(input.asBuilt.builtAt), 'asBuilt.builtAt');
        if (input.lineStop?.setAt) checkObservedTime(bounds, new Date(input.lineStop.setAt), 'lineStop.setAt');
      }
      const lockNumber = input.lockId ? await claimInventory(deps, 'locks', tenantId, input.lockId, caller.user.id) : null;
      const tagNumber = input.tagId ? await claimInventory(deps, 'tags', tenantId, input.tagId, caller.user.id) : null;
      let warnings: { code: string; message: string }[] = [];
      let asBuilt: Record<string, unknown> | null = null;
      if (step.kind === 'plug' && input.asBuilt) {
        asBuilt = { ...input.asBuilt, builtAt: input.asBuilt.builtAt ?? appliedAt.toISOString() };
        warnings = checkAsBuiltPlug({ diameterIn: step.plugDiameterIn ?? 0, ...input.asBuilt }).map((w) => ({ code: w.code, message: w.message }));
      }
      const lineStop = step.kind === 'line_stop' && input.lineStop ? { ...input.lineStop, setAt: input.lineStop.setAt ?? appliedAt.toISOString() } : null;
      // The order of application is a counter taken here, under the permit's row lock, not the time typed.
      await deps.sequelize.query(
        `UPDATE isolation_steps SET status = 'applied', lock_id = :lockId, tag_id = :tagId, applied_by = :userId, applied_at = :appliedAt, applied_entered_late = :enteredLate,
           photo_attachment_id = :photo, plug_as_built = CAST(:asBuilt AS jsonb), plug_warnings = CAST(:warnings AS jsonb), line_stop_as_built = CAST(:lineStop AS jsonb), updated_at = :now,
           applied_seq = (SELECT coalesce(max(applied_seq), 0) + 1 FROM isolation_steps WHERE tenant_id = :tenantId AND permit_id = :permitId),
           applied_out_of_order_reason = :outOfOrderReason
         WHERE tenant_id = :tenantId AND id = :stepId`,
        {
          replacements: {
            tenantId, stepId, permitId, outOfOrderReason, lockId: input.lockId ?? null, tagId: input.tagId ?? null, userId: caller.user.id, appliedAt, enteredLate, photo: input.photoAttachmentId ?? null,
            asBuilt: asBuilt ? JSON.stringify(asBuilt) : null, warnings: JSON.stringify(warnings), lineStop: lineStop ? JSON.stringify(lineStop) : null, now,
          },
        },
      );
      await audit(
        deps, caller, permit, step, 'isolation_applied',
        {
          lock: lockNumber, tag: tagNumber, asBuilt, ...(lineStop ? { lineStop } : {}), warnings: warnings.map((w) => w.code), ...(enteredLate ? { appliedAt: appliedAt.toISOString(), enteredLate } : {}),
          ...(outOfOrderReason ? { outOfPlanOrder: { before: skipped.map((s) => s.label) } } : {}),
        },
        outOfOrderReason ?? undefined,
      );
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
    if (stepActionRefusal('verify', step, permit.state)) throw AppError.conflict(step.status === 'planned' ? 'This step has not been applied yet.' : `This step is already ${step.status}.`, { current: { status: step.status } });
    if (step.appliedBy === caller.user.id) throw AppError.unprocessable('You applied this isolation, so someone else must verify it (two-person rule).');
    await requireQualification(deps, caller, 'isolation_verifier', 'verify isolations');
    const now = deps.clock.now();
    // A verification made without signal arrives later, carrying the time it was made on site.
    const verifiedAt = input.verifiedAt ? new Date(input.verifiedAt) : now;
    let enteredLate = false;
    if (input.verifiedAt) {
      enteredLate = checkObservedTime(await observationBounds(deps, permit), verifiedAt, 'verifiedAt').enteredLate;
      if (step.appliedAt && verifiedAt.getTime() < startOfMinute(new Date(step.appliedAt))) {
        const message = 'The verification time is before the isolation was applied. Give the time it was verified.';
        throw AppError.unprocessable(message, [{ path: 'verifiedAt', message }]);
      }
    }
    await deps.sequelize.query(
      `UPDATE isolation_steps SET status = 'verified', verified_by = :userId, verified_at = :verifiedAt, verification_method = :method, verification_reading = :reading,
         verification_unit = :unit, verification_notes = :notes, updated_at = :now WHERE tenant_id = :tenantId AND id = :stepId`,
      { replacements: { tenantId, stepId, userId: caller.user.id, now, verifiedAt, method: input.method, reading: input.reading ?? null, unit: input.unit ?? null, notes: input.notes ?? null } },
    );
    await audit(deps, caller, permit, step, 'isolation_verified', {
      method: input.method,
      reading: input.reading ?? null,
      unit: input.unit ?? null,
      ...(enteredLate ? { verifiedAt: verifiedAt.toISOString(), enteredLate } : {}),
    });
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
    const refused = stepActionRefusal(acknowledgementAction[input.what], step, permit.state);
    // A second acknowledgement would overwrite who gave the first and when.
    if (refused === 'already_done') throw AppError.conflict('This has already been acknowledged; the first acknowledgement stands.');
    switch (input.what) {
      case 'remote_inhibited':
        if (refused === 'not_remote') throw AppError.unprocessable('This point cannot be operated remotely; there is nothing to inhibit.');
        if (refused) throw AppError.unprocessable('Acknowledge remote inhibition once the valve is closed and locked.');
        await update('remote_ack_by = :userId, remote_ack_at = :now');
        break;
      case 'applied':
        if (refused) throw AppError.unprocessable('Only an applied isolation can be acknowledged as applied.');
        await update('control_room_ack_applied_by = :userId, control_room_ack_applied_at = :now');
        break;
      case 'removed':
        if (refused) throw AppError.unprocessable('Only a removed isolation can be acknowledged as removed.');
        await update('control_room_ack_removed_by = :userId, control_room_ack_removed_at = :now');
        break;
      case 'plug_warnings':
        if (refused === 'no_warnings') throw AppError.unprocessable('This plug record has no warnings.');
        if (refused) throw AppError.unprocessable('This plug is already out; its warnings no longer need acknowledging.');
        await update('plug_warnings_ack_by = :userId, plug_warnings_ack_at = :now');
        break;
    }
    await audit(deps, caller, permit, step, `acknowledged_${input.what}`);
    return findStep(deps.sequelize, tenantId, permitId, stepId);
  });
}

/**
 * Group lockout per person: the lockbox holding the isolation keys opens only when every personal
 * lock is off (OSHA 29 CFR 1910.147(f)(3)(ii)(D)), so no isolation comes off while anyone is signed on.
 */
async function refuseWhileCrewLockedOn(deps: AppDeps, tenantId: string, permitId: string) {
  if (!(await groupLockoutPerPerson(deps.sequelize, tenantId))) return;
  const on = await crewOnLockbox(deps.sequelize, tenantId, permitId);
  if (on.length)
    throw AppError.unprocessable(
      `The lockbox is still locked: ${on.map((c) => `${c.name} (personal lock ${c.personalLockNumber})`).join(', ')} ${on.length === 1 ? 'is' : 'are'} still signed on. Each person takes their own personal lock off before any isolation comes off.`,
    );
}

export async function removeStep(deps: AppDeps, caller: CallerContext, permitId: string, stepId: string, input: RemoveStepInput) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const { permit, step } = await load(deps, caller, permitId, stepId, 'remove');
    // An isolation certificate another permit works under keeps its isolations on; a long-term one nobody relies on is returned by taking them off.
    const held = await certificateRemovalCheck(deps.sequelize, tenantId, step);
    const refused = stepActionRefusal('remove', step, permit.state);
    if (refused === 'permit_state' && !(held.returningLongTerm && certificateReleaseStates.includes(permit.state)))
      throw AppError.unprocessable('Isolations come off only after the contractor lead hands the permit back (or it is cancelled).');
    if (refused && refused !== 'permit_state') throw AppError.conflict(step.status === 'removed' ? 'This isolation is already removed.' : 'This step was never applied.');
    if (step.kind === 'plug' && !input.plugOutcome) throw AppError.validation('Say whether the plug was removed or left to be displaced by product.', [{ path: 'plugOutcome', message: 'Required for a plug.' }]);
    await requireQualification(deps, caller, 'lockout_tagout', 'remove isolations');
    await refuseWhileCrewLockedOn(deps, tenantId, permitId);
    // A lock or tag comes off by the hand that put it on, or under an authoriser's recorded exception (OSHA 29 CFR 1910.147(e)(3)).
    const exception = removalNeedsException(step, caller.user.id) ? await claimRemovalException(deps, caller, step, input) : null;
    // De-isolation runs in reverse order of application (the counter, not the minute typed) unless a reason is recorded.
    const later = appliedAfter(step, await listSteps(deps.sequelize, tenantId, permitId));
    if (later.length && !input.outOfOrderReason)
      throw AppError.unprocessable(`Remove in reverse order of application: first ${later.map((l) => l.label).join(', ')}. Give a reason to do otherwise.`);
    if (step.pointId) {
      // Serialise removals on one point: two permits taking their locks off at once must not both
      // count the other's lock as the one that stays.
      await deps.sequelize.query(`SELECT 1 FROM isolation_points WHERE tenant_id = :tenantId AND id = :pointId FOR UPDATE`, { replacements: { tenantId, pointId: step.pointId } });
      const others = await deps.sequelize.query<{ n: number }>(
        `SELECT count(*)::int AS n FROM isolation_steps WHERE tenant_id = :tenantId AND point_id = :pointId AND id <> :stepId AND status IN (:inPlace)`,
        { replacements: { tenantId, pointId: step.pointId, stepId, inPlace: inPlaceStatuses }, type: QueryTypes.SELECT },
      );
      if (others[0].n === 0) {
        const needing = await deps.sequelize.query<{ number: string }>(
          `SELECT DISTINCT p.number FROM isolation_steps s JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
           WHERE s.tenant_id = :tenantId AND s.point_id = :pointId AND s.permit_id <> :permitId
             AND p.state IN (:holding) AND s.status <> 'removed' ORDER BY p.number`,
          { replacements: { tenantId, pointId: step.pointId, permitId, holding: holdsIsolations }, type: QueryTypes.SELECT },
        );
        if (needing.length)
          throw AppError.unprocessable(`${step.label} is the last isolation on this point and permit(s) ${needing.map((n) => n.number).join(', ')} still need it. It stays until they are returned to service.`);
      }
    }
    const now = deps.clock.now();
    const note = [input.plugOutcome === 'displaced_by_product' ? 'Plug left to be displaced by product.' : input.plugOutcome === 'removed' ? 'Plug removed.' : '', input.note ?? '']
      .filter(Boolean)
      .join(' ');
    const underException = exception ? await completeRemovalException(deps, caller, permit, step, exception, input.signedName ?? caller.user.name, now) : null;
    await deps.sequelize.query(
      `UPDATE isolation_steps SET status = 'removed', removed_by = :userId, removed_at = :now, removal_note = :note, updated_at = :now WHERE tenant_id = :tenantId AND id = :stepId`,
      { replacements: { tenantId, stepId, userId: caller.user.id, now, note: note || null } },
    );
    if (step.lockId) await deps.sequelize.query(`UPDATE locks SET state = 'in_store', holder_user_id = NULL, updated_at = :now WHERE tenant_id = :tenantId AND id = :id`, { replacements: { tenantId, id: step.lockId, now } });
    if (step.tagId) await deps.sequelize.query(`UPDATE tags SET state = 'in_store', holder_user_id = NULL, updated_at = :now WHERE tenant_id = :tenantId AND id = :id`, { replacements: { tenantId, id: step.tagId, now } });
    await audit(
      deps, caller, permit, step, 'isolation_removed',
      { lock: step.lockNumber, tag: step.tagNumber, plugOutcome: input.plugOutcome ?? null, ...(underException ? { underException } : {}) },
      input.outOfOrderReason,
    );
    if (held.certificateId) await returnIfDone(deps.sequelize, tenantId, held.certificateId, now, { userId: caller.user.id, name: caller.user.name }, permitId);
    return findStep(deps.sequelize, tenantId, permitId, stepId);
  });
}

const startOfMinute = (d: Date) => Math.floor(d.getTime() / 60_000) * 60_000;
