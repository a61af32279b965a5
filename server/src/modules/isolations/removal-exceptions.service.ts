import { QueryTypes } from 'sequelize';
import { carriesDevice } from '@shared/isolations/lockout-rules';
import { isInPlace, removeStates } from '@shared/isolations/step-rules';
import type { ContactAttempt, RemovalExceptionInput, RemoveStepInput } from '@shared/schemas/isolation.schema';
import { formatInZone } from '@shared/time/zone';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord } from '../../lib/authorize';
import { auditActor, type CallerContext } from '../../lib/caller';
import { enqueueMail } from '../../lib/mailer';
import { requireSignature } from '../auth/signature-password';
import { appendAudit } from '../audit/audit.service';
import { CLOCK_SKEW_MS } from '../permits/observed-time';
import { findPermit, type PermitRow } from '../permits/permits.repository';
import { findStep, notifyChange, type StepRow } from './isolation-queries';

// OSHA 29 CFR 1910.147(e)(3): a lockout or tagout device is removed by the employee who applied it.
// (e)(3)(i)–(iii): when they are not at the facility, it may come off under the employer's direction
// once that is verified, all reasonable efforts to reach them are made, and they are told before they
// resume work there. The authoriser records those three things; a technician who is neither the
// applier nor that authoriser signs the removal.

/** Which device the exception is for: a lock or tag on an isolation step, or a personal lock on the lockbox. */
export type ExceptionTarget = { column: 'step_id'; id: string } | { column: 'crew_member_id'; id: string };

/** The device as the records and the mail name it, and who holds it. */
export interface AbsentOwnersDevice {
  /** "lock L-12 and tag T-4 on BV-3", "personal lock PL-7 on the lockbox". */
  words: string;
  holderId: string;
  holderName: string;
  /** When it went on: the attempts to reach the holder lie after it. */
  onSince: Date | null;
  /** The audit event's record. */
  entityType: string;
  auditData: Record<string, unknown>;
}

interface ExceptionRow {
  id: string;
  applierUserId: string;
  applierName: string;
  applierEmail: string;
  authoriserUserId: string;
  authoriserName: string;
  contactAttempts: ContactAttempt[];
  informPlan: string;
}

const deviceWords = (step: StepRow) =>
  [step.lockNumber ? `lock ${step.lockNumber}` : '', step.tagNumber ? `tag ${step.tagNumber}` : ''].filter(Boolean).join(' and ') || 'lock';

/** A step's lock or tag as an exception names it. */
export const stepDevice = (step: StepRow): AbsentOwnersDevice => ({
  words: `${deviceWords(step)} on ${step.label}`,
  holderId: step.heldBy ?? '',
  holderName: step.heldByName ?? 'Someone else',
  onSince: step.appliedAt,
  entityType: 'isolation_step',
  auditData: { label: step.label, position: step.position, kind: step.kind, lock: step.lockNumber, tag: step.tagNumber },
});

async function tenantTimeZone(deps: AppDeps, tenantId: string) {
  const [row] = await deps.sequelize.query<{ timeZone: string }>(`SELECT time_zone AS "timeZone" FROM tenants WHERE id = :tenantId`, { replacements: { tenantId }, type: QueryTypes.SELECT });
  return row?.timeZone ?? 'UTC';
}

/** Each attempt to reach the holder lies after the lock went on (to the minute, as people type times) and not in the future. */
function checkAttemptTimes(attempts: ContactAttempt[], onSince: Date | null, now: Date, timeZone: string) {
  const details: { path: string; message: string }[] = [];
  const lockedFrom = onSince ? Math.floor(onSince.getTime() / 60_000) * 60_000 : null;
  attempts.forEach((a, i) => {
    const at = new Date(a.at);
    if (at.getTime() > now.getTime() + CLOCK_SKEW_MS) details.push({ path: `contactAttempts.${i}.at`, message: `${formatInZone(at, timeZone)} is in the future. Give the time you tried.` });
    else if (onSince && lockedFrom !== null && at.getTime() < lockedFrom)
      details.push({ path: `contactAttempts.${i}.at`, message: `${formatInZone(at, timeZone)} is before the lock went on (${formatInZone(onSince, timeZone)}).` });
  });
  if (details.length) throw AppError.unprocessable('Check the times you tried to reach them.', details);
}

/**
 * Inside the caller's transaction, the device and permit loaded and locked: an authoriser records,
 * and signs, that the holder is not at the site, how and when they tried to reach them, and how they
 * will be told before they return. One per device.
 */
export async function recordException(deps: AppDeps, caller: CallerContext, permitId: string, target: ExceptionTarget, device: AbsentOwnersDevice, input: RemovalExceptionInput) {
  const { tenantId } = caller.actor;
  if (device.holderId === caller.user.id) throw AppError.unprocessable('You put this lock on yourself: take it off yourself.');
  const timeZone = await tenantTimeZone(deps, tenantId);
  const [earlier] = await deps.sequelize.query<{ recordedAt: Date; name: string }>(
    `SELECT e.recorded_at AS "recordedAt", u.name FROM lock_removal_exceptions e JOIN users u ON u.id = e.authoriser_user_id WHERE e.tenant_id = :tenantId AND e.${target.column} = :id`,
    { replacements: { tenantId, id: target.id }, type: QueryTypes.SELECT },
  );
  if (earlier) throw AppError.conflict(`${earlier.name} already recorded the exception for this lock (${formatInZone(earlier.recordedAt, timeZone)}).`);
  const now = deps.clock.now();
  checkAttemptTimes(input.contactAttempts, device.onSince, now, timeZone);
  await requireSignature(deps, caller.user, input);

  const [row] = await deps.sequelize.query<{ id: string }>(
    `INSERT INTO lock_removal_exceptions (tenant_id, permit_id, ${target.column}, applier_user_id, authoriser_user_id, authoriser_signed_name, absence_check, contact_attempts, inform_plan, recorded_at)
     VALUES (:tenantId, :permitId, :targetId, :applier, :authoriser, :signedName, :absenceCheck, CAST(:attempts AS jsonb), :informPlan, :now) RETURNING id`,
    {
      replacements: {
        tenantId, permitId, targetId: target.id, applier: device.holderId, authoriser: caller.user.id, signedName: input.signedName, absenceCheck: input.absenceCheck,
        attempts: JSON.stringify(input.contactAttempts), informPlan: input.informPlan, now,
      },
      type: QueryTypes.SELECT,
    },
  );
  await appendAudit(deps.sequelize, {
    tenantId, entityType: device.entityType, entityId: target.id, permitId, action: 'removal_exception_recorded', actor: auditActor(caller, 'approve'), ip: caller.ip,
    data: {
      ...device.auditData, exceptionId: row.id, applier: { userId: device.holderId, name: device.holderName }, absenceCheck: input.absenceCheck, contactAttempts: input.contactAttempts,
      informPlan: input.informPlan, signedName: input.signedName,
    },
    occurredAt: now,
  });
}

/**
 * An authoriser records, and signs, that the person who holds a lock or tag is not at the site, how
 * and when they tried to reach them, and how they will be told before they return. One per step.
 */
export async function recordRemovalException(deps: AppDeps, caller: CallerContext, permitId: string, stepId: string, input: RemovalExceptionInput) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = await findPermit(deps.sequelize, tenantId, permitId, { lock: true });
    authorizeRecord(caller.ability, 'read', 'Permit', permit, 'permit');
    const step = await findStep(deps.sequelize, tenantId, permitId, stepId, true);
    if (!step) throw AppError.notFound('isolation step');
    authorizeRecord(caller.ability, 'approve', 'IsolationStep', { ...step, tenantId, contractorOrganisationId: permit!.contractorOrganisationId }, 'isolation step');
    if (!removeStates.includes(permit!.state))
      throw AppError.unprocessable('The exception is recorded when the isolations are due to come off: after the contractor lead hands the permit back, or once it is cancelled.');
    if (!isInPlace(step.status)) throw AppError.conflict(step.status === 'removed' ? 'This isolation is already removed.' : 'This step was never applied.');
    if (!carriesDevice(step)) throw AppError.unprocessable('This isolation has no lock or tag of its own, so no exception is needed: a qualified technician takes it off.');
    await recordException(deps, caller, permitId, { column: 'step_id', id: stepId }, stepDevice(step), input);
    await notifyChange(deps.sequelize, { tenantId, kind: 'isolation', permitId, stepId, action: 'removal_exception_recorded' });
    return findStep(deps.sequelize, tenantId, permitId, stepId);
  });
}

/**
 * Inside the removal's transaction, when the remover does not hold the lock or tag: the exception
 * must be on record, recorded by someone else, and the remover signs. Locks the record.
 */
export async function claimException(deps: AppDeps, caller: CallerContext, target: ExceptionTarget, device: AbsentOwnersDevice, input: { password?: string; signedName?: string }): Promise<ExceptionRow> {
  const [row] = await deps.sequelize.query<ExceptionRow & { removedAt: Date | null }>(
    `SELECT e.id, e.applier_user_id AS "applierUserId", ua.name AS "applierName", ua.email AS "applierEmail", e.authoriser_user_id AS "authoriserUserId",
            uz.name AS "authoriserName", e.contact_attempts AS "contactAttempts", e.inform_plan AS "informPlan", e.removed_at AS "removedAt"
     FROM lock_removal_exceptions e JOIN users ua ON ua.id = e.applier_user_id JOIN users uz ON uz.id = e.authoriser_user_id
     WHERE e.tenant_id = :tenantId AND e.${target.column} = :id FOR UPDATE OF e`,
    { replacements: { tenantId: caller.actor.tenantId, id: target.id }, type: QueryTypes.SELECT },
  );
  if (!row)
    throw AppError.unprocessable(
      `${device.holderName} put ${device.words}, so only ${device.holderName} may take it off. If they are not on site, an authoriser must first record the exception: ` +
        'how they checked the person is not on site, how and when they tried to reach them, and how they will be told before they come back to work.',
    );
  if (row.authoriserUserId === caller.user.id) throw AppError.unprocessable('You recorded the exception for this lock, so another person must take it off and sign for it.');
  await requireSignature(deps, caller.user, input);
  return row;
}

/** The step form of claimException. */
export const claimRemovalException = (deps: AppDeps, caller: CallerContext, step: StepRow, input: RemoveStepInput) =>
  claimException(deps, caller, { column: 'step_id', id: step.id }, stepDevice(step), input);

/**
 * Writes the remover into the exception (before the device is marked off: the database refuses it
 * otherwise) and queues the mail that tells the holder their lock is off.
 */
export async function completeException(deps: AppDeps, caller: CallerContext, permit: PermitRow, device: AbsentOwnersDevice, exception: ExceptionRow, signedName: string, now: Date) {
  await deps.sequelize.query(
    `UPDATE lock_removal_exceptions SET remover_user_id = :userId, remover_signed_name = :signedName, removed_at = :now WHERE tenant_id = :tenantId AND id = :id`,
    { replacements: { tenantId: permit.tenantId, id: exception.id, userId: caller.user.id, signedName, now } },
  );
  const timeZone = await tenantTimeZone(deps, permit.tenantId);
  const attempts = exception.contactAttempts.map((a) => `- ${a.how} (${formatInZone(a.at, timeZone)})`);
  const text = [
    `${exception.applierName},`,
    '',
    `Your ${device.words} (permit ${permit.number}, ${permit.title}) was taken off on ${formatInZone(now, timeZone)} by ${caller.user.name}, while you were not on site.`,
    `${exception.authoriserName} authorised this under the exception procedure for a lock whose owner is away, after trying to reach you:`,
    ...attempts,
    '',
    `Before you start work on site again, speak to ${exception.authoriserName}. How you are to be told: ${exception.informPlan}`,
    '',
    `Open the permit: ${deps.config.PUBLIC_URL}/permits/${permit.id}`,
  ].join('\n');
  await enqueueMail(deps.sequelize, {
    tenantId: permit.tenantId,
    to: exception.applierEmail,
    subject: `Your ${device.words} was taken off while you were away (permit ${permit.number})`,
    text,
    dedupeKey: `lock-removal-exception:${permit.tenantId}:${exception.id}`,
  });
  return { exceptionId: exception.id, applier: exception.applierName, authoriser: exception.authoriserName };
}

/** The step form of completeException. */
export const completeRemovalException = (deps: AppDeps, caller: CallerContext, permit: PermitRow, step: StepRow, exception: ExceptionRow, signedName: string, now: Date) =>
  completeException(deps, caller, permit, stepDevice(step), exception, signedName, now);
