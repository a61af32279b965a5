import { QueryTypes } from 'sequelize';
import { convertPressure, formatPressure } from '@shared/calc/pressure';
import { certificateLinkStates } from '@shared/permit/states';
import { isCertificateLive } from '@shared/isolations/certificate-states';
import type { CertificatesQuery, LinkCertificateInput, MarkLongTermInput, RecordRecheckInput } from '@shared/schemas/certificates.schema';
import type { CertificateActionState, IsolationCertificate, PermitCertificateRef } from '@shared/types/certificates';
import { formatInZone } from '@shared/time/zone';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { notifyChange } from '../isolations/isolation-queries';
import { AppError } from '../../errors/app-error';
import { authorizeRecord } from '../../lib/authorize';
import { auditActor, type CallerContext } from '../../lib/caller';
import { holdsQualification } from '../../lib/qualifications';
import { appendAudit } from '../audit/audit.service';
import { findPermit } from '../permits/permits.repository';
import { loadTenantSettings } from '../tenants/tenant-settings';
import { queueCertificateAlert } from './certificate-alerts';
import { reliedCertificate, returnIfDone } from './certificate-lifecycle';
import { certificateDetail, findCertificate, listCertificates, relyingPermitNumbers, stepsInPlace, type CertificateRow } from './certificate-view';

const ok: CertificateActionState = { allowed: true, reasons: [] };
const refusedBy = (reasons: string[]): CertificateActionState => (reasons.length ? { allowed: false, reasons } : ok);
const position = (n: number) => Number(n.toFixed(3)).toString();

export async function listCertificatesFor(deps: AppDeps, caller: CallerContext, q: CertificatesQuery) {
  if (!caller.ability.can('read', 'IsolationCertificate')) throw AppError.forbidden('Your role does not allow you to read isolation certificates.');
  return withTenant(deps.sequelize, caller.actor.tenantId, () => listCertificates(deps.sequelize, caller.actor.tenantId, q, deps.clock.now()));
}

async function loadCertificate(deps: AppDeps, caller: CallerContext, id: string, action: 'read' | 'update' | 'record' | 'close', lock = false) {
  const row = await findCertificate(deps.sequelize, caller.actor.tenantId, id, deps.clock.now(), { lock });
  return authorizeRecord(caller.ability, action, 'IsolationCertificate', row, 'isolation certificate');
}

// What the rules allow on the certificate now, each with the reasons it is blocked (who may is CASL's).
async function actionStates(deps: AppDeps, row: CertificateRow) {
  const live = isCertificateLive(row) ? [] : ['This certificate has been returned.'];
  const relying = await relyingPermitNumbers(deps.sequelize, row.tenantId, row.id);
  const inPlace = await stepsInPlace(deps.sequelize, row.tenantId, row.id);
  const markLongTerm = [...live];
  if (row.longTerm) markLongTerm.push('This isolation is already long-term.');
  if (!inPlace) markLongTerm.push('None of its isolations is on any more.');
  const recordRecheck = [...live];
  if (!row.longTerm) recordRecheck.push('Only a long-term isolation is re-checked at intervals; while a permit works under it, the permit’s own checks apply.');
  const returning = [...live];
  if (relying.length) returning.push(`${relying.join(', ')} still ${relying.length === 1 ? 'works' : 'work'} under ${row.number}.`);
  if (inPlace) returning.push(`${inPlace} of its isolation(s) are still on: take them off in reverse order first.`);
  return { markLongTerm: refusedBy(markLongTerm), recordRecheck: refusedBy(recordRecheck), return: refusedBy(returning) };
}

async function detail(deps: AppDeps, row: CertificateRow): Promise<IsolationCertificate<Date>> {
  const settings = await loadTenantSettings(deps.sequelize, row.tenantId);
  const body = await certificateDetail(deps.sequelize, row, deps.clock.now());
  return { ...body, recheckLimit: { maxPressure: settings.provingMaxPressure, unit: settings.provingPressureUnit }, actions: await actionStates(deps, row) };
}

export async function getCertificate(deps: AppDeps, caller: CallerContext, id: string) {
  return withTenant(deps.sequelize, caller.actor.tenantId, async () => detail(deps, await loadCertificate(deps, caller, id, 'read')));
}

async function audit(deps: AppDeps, caller: CallerContext, row: CertificateRow, action: string, data: Record<string, unknown>, reason?: string, permitId?: string) {
  await appendAudit(deps.sequelize, {
    tenantId: row.tenantId, entityType: 'isolation_certificate', entityId: row.id, permitId: permitId ?? null, action, actor: auditActor(caller, action), ip: caller.ip,
    reason, data: { number: row.number, ...data }, occurredAt: deps.clock.now(),
  });
}

/**
 * A permit in planning relies on a live certificate instead of isolating again (HSE HSG250: the
 * permit cross-references the isolation certificate): same pipeline, and the certificate's section
 * covers the whole work range. The authoriser still signs the isolations in place for the permit.
 */
export async function linkPermit(deps: AppDeps, caller: CallerContext, permitId: string, input: LinkCertificateInput): Promise<PermitCertificateRef> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = authorizeRecord(caller.ability, 'update', 'Permit', await findPermit(deps.sequelize, tenantId, permitId, { lock: true }), 'permit');
    const cert = authorizeRecord(caller.ability, 'read', 'IsolationCertificate', await findCertificate(deps.sequelize, tenantId, input.certificateId, deps.clock.now(), { lock: true }), 'isolation certificate');
    if (!certificateLinkStates.includes(permit.state))
      throw AppError.unprocessable('A permit takes on an isolation certificate only while it is planned: before the authoriser signs its isolations in place.');
    const current = await reliedCertificate(deps.sequelize, tenantId, permit.id);
    if (current) throw AppError.conflict(`${permit.number} already works under ${current.number}.`);
    const { locationUnit } = await loadTenantSettings(deps.sequelize, tenantId);
    const reasons: string[] = [];
    if (!isCertificateLive(cert)) reasons.push(`${cert.number} has been returned: its isolations no longer protect anyone. Isolate for this permit instead.`);
    if (cert.pipelineId !== permit.pipelineId)
      reasons.push(`${cert.number} isolates ${cert.pipelineName}, but this permit’s work is on ${permit.pipelineName}. Choose a certificate of the same pipeline.`);
    else if (permit.fromPosition < cert.fromPosition || permit.toPosition > cert.toPosition)
      reasons.push(
        `${cert.number} covers ${position(cert.fromPosition)} to ${position(cert.toPosition)} ${locationUnit}, but this permit’s work runs from ${position(permit.fromPosition)} to ${position(permit.toPosition)} ${locationUnit}. Choose a certificate whose section covers all of the work, or isolate for this permit.`,
      );
    if (reasons.length) throw AppError.unprocessable(reasons[0], reasons.map((message) => ({ path: 'certificateId', message })));
    const now = deps.clock.now();
    await deps.sequelize.query(`INSERT INTO certificate_permits (tenant_id, certificate_id, permit_id, linked_by, linked_at) VALUES (:tenantId, :certId, :permitId, :userId, :now)`, {
      replacements: { tenantId, certId: cert.id, permitId: permit.id, userId: caller.user.id, now },
    });
    await audit(deps, caller, cert, 'certificate_linked', { permit: permit.number }, undefined, permit.id);
    return { id: cert.id, number: cert.number, state: cert.state, longTerm: cert.longTerm, problem: cert.problem };
  });
}

/**
 * The authoriser keeps the isolation beyond its permits (HSE HSG253: a long-term isolation, inspected
 * at intervals): the permits then hand their isolations to the certificate and may finish without
 * taking them off; re-checks fall due at the site's interval.
 */
export async function markLongTerm(deps: AppDeps, caller: CallerContext, id: string, input: MarkLongTermInput) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const row = await loadCertificate(deps, caller, id, 'update', true);
    const { markLongTerm: state } = await actionStates(deps, row);
    if (!state.allowed) throw AppError.unprocessable(state.reasons[0], state.reasons.map((message) => ({ path: 'certificate', message })));
    const { isolationRecheckHours } = await loadTenantSettings(deps.sequelize, tenantId);
    const now = deps.clock.now();
    await deps.sequelize.query(
      `UPDATE isolation_certificates SET long_term = true, long_term_reason = :reason, long_term_by = :userId, long_term_at = :now, recheck_hours = :hours,
         next_recheck_due = :due, updated_at = :now WHERE tenant_id = :tenantId AND id = :id`,
      { replacements: { tenantId, id, reason: input.reason, userId: caller.user.id, now, hours: isolationRecheckHours, due: new Date(now.getTime() + isolationRecheckHours * 3600_000) } },
    );
    await audit(deps, caller, row, 'certificate_long_term', { recheckHours: isolationRecheckHours }, input.reason);
    return detail(deps, (await findCertificate(deps.sequelize, tenantId, id, now))!);
  });
}

/**
 * A re-check of a long-term isolation (HSE HSG253): every lock and tag on and intact, every valve
 * still closed, and the gauge at the section no higher than the site's proving limit (no build-up).
 * A failure is recorded, mailed to the authorisers and the control room, and stays on the
 * certificate until a passing re-check.
 */
export async function recordRecheck(deps: AppDeps, caller: CallerContext, id: string, input: RecordRecheckInput) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const row = await loadCertificate(deps, caller, id, 'record', true);
    const { recordRecheck: state } = await actionStates(deps, row);
    if (!state.allowed) throw AppError.unprocessable(state.reasons[0], state.reasons.map((message) => ({ path: 'certificate', message })));
    const now = deps.clock.now();
    if (!(await holdsQualification(deps.sequelize, tenantId, caller.user.id, 'lockout_tagout', now)))
      throw AppError.unprocessable('You need an in-date lockout tagout qualification to re-check isolations.');
    const settings = await loadTenantSettings(deps.sequelize, tenantId);
    const limit = { value: settings.provingMaxPressure, unit: settings.provingPressureUnit };
    const failures: string[] = [];
    if (!input.locksAndTagsIntact) failures.push('a lock or tag is missing or damaged');
    if (!input.valvesStillClosed) failures.push('a valve is no longer fully closed');
    if (convertPressure(input.gaugeReading, input.gaugeUnit, limit.unit) > limit.value + 1e-9)
      failures.push(`the gauge reads ${formatPressure(input.gaugeReading, input.gaugeUnit)}, above the limit of ${formatPressure(limit.value, limit.unit)}: pressure is building up behind an isolation`);
    const failure = failures.length ? failures.join('; ') : null;
    const [recheck] = await deps.sequelize.query<{ id: string }>(
      `INSERT INTO isolation_rechecks (tenant_id, certificate_id, checked_at, checked_by, locks_and_tags_intact, valves_still_closed, gauge_reading, gauge_unit,
         max_pressure, max_pressure_unit, result, failure, notes)
       VALUES (:tenantId, :id, :now, :userId, :locks, :valves, :reading, :unit, :max, :maxUnit, :result, :failure, :notes) RETURNING id`,
      {
        replacements: {
          tenantId, id, now, userId: caller.user.id, locks: input.locksAndTagsIntact, valves: input.valvesStillClosed, reading: input.gaugeReading, unit: input.gaugeUnit,
          max: limit.value, maxUnit: limit.unit, result: failure ? 'fail' : 'pass', failure, notes: input.notes ?? null,
        },
        type: QueryTypes.SELECT,
      },
    );
    if (failure) {
      await deps.sequelize.query(`UPDATE isolation_certificates SET problem = :failure, problem_at = :now, updated_at = :now WHERE tenant_id = :tenantId AND id = :id`, {
        replacements: { tenantId, id, failure, now },
      });
      await queueCertificateAlert(deps.sequelize, row, {
        key: `recheck-failed:${recheck.id}`,
        subject: 'long-term isolation failed its re-check',
        lines: [
          `${caller.user.name} re-checked the long-term isolation ${row.number} on ${row.pipelineName} at ${formatInZone(now, settings.timeZone)} and found: ${failure}.`,
          'Nobody works under this certificate until it is put right and a passing re-check is recorded.',
        ],
        publicUrl: deps.config.PUBLIC_URL,
      });
    } else {
      await deps.sequelize.query(
        `UPDATE isolation_certificates SET problem = NULL, problem_at = NULL, next_recheck_due = CAST(:now AS timestamptz) + make_interval(hours => recheck_hours), updated_at = :now
         WHERE tenant_id = :tenantId AND id = :id`,
        { replacements: { tenantId, id, now } },
      );
    }
    await audit(deps, caller, row, failure ? 'certificate_recheck_failed' : 'certificate_recheck_passed', {
      recheck: recheck.id, gauge: formatPressure(input.gaugeReading, input.gaugeUnit), locksAndTagsIntact: input.locksAndTagsIntact, valvesStillClosed: input.valvesStillClosed,
    }, failure ?? undefined);
    // Open screens of the permits working under it raise the alarm (GET /api/stream).
    await notifyChange(deps.sequelize, { tenantId, kind: 'certificate', certificateId: id, action: failure ? 'certificate_recheck_failed' : 'certificate_recheck_passed' });
    return detail(deps, (await findCertificate(deps.sequelize, tenantId, id, now))!);
  });
}

/**
 * The authoriser returns a certificate once no permit relies on it and its isolations are off (HSE
 * HSG253). A long-term certificate's isolations come off first, in reverse order, under the ordinary
 * removal rules.
 */
export async function returnCertificate(deps: AppDeps, caller: CallerContext, id: string) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const row = await loadCertificate(deps, caller, id, 'close', true);
    const { return: state } = await actionStates(deps, row);
    if (!state.allowed) throw AppError.unprocessable(state.reasons[0], state.reasons.map((message) => ({ path: 'certificate', message })));
    const now = deps.clock.now();
    if (!row.longTerm) await returnIfDone(deps.sequelize, tenantId, id, now, { userId: caller.user.id, name: caller.user.name }, null);
    else {
      await deps.sequelize.query(`UPDATE isolation_certificates SET state = 'returned', returned_at = :now, returned_by = :userId, updated_at = :now WHERE tenant_id = :tenantId AND id = :id`, {
        replacements: { tenantId, id, now, userId: caller.user.id },
      });
      await audit(deps, caller, row, 'certificate_returned', { longTerm: true });
    }
    return detail(deps, (await findCertificate(deps.sequelize, tenantId, id, now))!);
  });
}
