import { QueryTypes, UniqueConstraintError, type Sequelize } from 'sequelize';
import { formatPressure, toKpa, type GaugeUnit } from '@shared/calc/pressure';
import { closesLine, isBleedKind } from '@shared/isolations/readiness';
import { isInPlace } from '@shared/isolations/step-rules';
import { statesFrom } from '@shared/permit/state-machine';
import type { EndProvingInput, StartProvingInput } from '@shared/schemas/isolation-proving.schema';
import type { IsolationProving } from '@shared/types/isolation-proving';
import { formatInZone } from '@shared/time/zone';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord } from '../../lib/authorize';
import { auditActor, type CallerContext } from '../../lib/caller';
import { holdsQualification } from '../../lib/qualifications';
import { appendAudit } from '../audit/audit.service';
import { findPermit, type PermitRow } from '../permits/permits.repository';
import { checkObservedTime, observationBounds } from '../permits/observed-time';
import { notifyChange } from './isolation-queries';

// HSE HSG253: an isolated section is proved dead before work, by reading the pressure at a bleed or
// vent and watching for build-up. A valve whose position was checked is not proved by that check.

export type ProvingRow = IsolationProving<Date>;

const provingSelect = `
  SELECT p.id, p.permit_id AS "permitId", p.step_id AS "stepId", coalesce(ip.tag_code, s.temp_label) AS at, p.unit,
         p.max_pressure::float8 AS "maxPressure", p.max_pressure_unit AS "maxPressureUnit", p.hold_minutes AS "holdMinutes",
         p.start_reading::float8 AS "startReading", p.started_at AS "startedAt", p.started_by AS "startedBy", us.name AS "startedByName", p.started_entered_late AS "startedEnteredLate",
         p.end_reading::float8 AS "endReading", p.ended_at AS "endedAt", p.ended_by AS "endedBy", ue.name AS "endedByName", p.ended_entered_late AS "endedEnteredLate",
         p.result, p.failure, p.notes
  FROM isolation_provings p
  JOIN isolation_steps s ON s.tenant_id = p.tenant_id AND s.id = p.step_id
  LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
  JOIN users us ON us.id = p.started_by
  LEFT JOIN users ue ON ue.id = p.ended_by`;

/** Inside withTenant: every hold test of the permit, oldest first. */
export async function listProvings(sequelize: Sequelize, tenantId: string, permitId: string): Promise<ProvingRow[]> {
  return sequelize.query<ProvingRow>(`${provingSelect} WHERE p.tenant_id = :tenantId AND p.permit_id = :permitId ORDER BY p.created_at, p.started_at`, {
    replacements: { tenantId, permitId },
    type: QueryTypes.SELECT,
  });
}

async function findProving(sequelize: Sequelize, tenantId: string, permitId: string, provingId: string, lock = false) {
  if (lock) await sequelize.query(`SELECT 1 FROM isolation_provings WHERE tenant_id = :tenantId AND id = :provingId FOR UPDATE`, { replacements: { tenantId, provingId } });
  const [row] = await sequelize.query<ProvingRow>(`${provingSelect} WHERE p.tenant_id = :tenantId AND p.permit_id = :permitId AND p.id = :provingId`, {
    replacements: { tenantId, permitId, provingId },
    type: QueryTypes.SELECT,
  });
  return row ?? null;
}

interface DeviceRow {
  label: string;
  kind: string;
  status: string;
  appliedBy: string | null;
  appliedAt: Date | null;
}

/** The plan's devices that stop product in the line: they make the section the test proves. */
async function sectionDevices(sequelize: Sequelize, tenantId: string, permitId: string) {
  const rows = await sequelize.query<DeviceRow>(
    `SELECT coalesce(ip.tag_code, s.temp_label) AS label, s.kind, s.status, s.applied_by AS "appliedBy", s.applied_at AS "appliedAt"
     FROM isolation_steps s LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
     WHERE s.tenant_id = :tenantId AND s.permit_id = :permitId ORDER BY s.seq`,
    { replacements: { tenantId, permitId }, type: QueryTypes.SELECT },
  );
  return rows.filter((r) => closesLine(r.kind));
}

/**
 * Who may read the gauge for a hold test: nobody who applied an isolating device of the section. The
 * test exists to catch a device that lets product through, and the person who closed the valve or
 * fitted the blind believes it holds, so the readings come from someone else (the reasoning of the
 * two-person rule for verification). The start and the end may be read by two different people, so a
 * test can run across a change of shift, as long as neither of them applied a device.
 */
function requireIndependentReader(caller: CallerContext, devices: DeviceRow[]) {
  const own = devices.filter((d) => d.appliedBy === caller.user.id).map((d) => d.label);
  if (own.length)
    throw AppError.unprocessable(
      `You applied ${own.join(', ')}, so someone who did not apply the isolations must read the gauge (two-person rule): the test is there to catch an isolation that lets product through.`,
    );
}

/** Loads and locks the permit, and checks the caller may prove its isolations (the right to verify an isolation step). */
async function loadPermit(deps: AppDeps, caller: CallerContext, permitId: string): Promise<PermitRow> {
  const { tenantId } = caller.actor;
  const permit = authorizeRecord(caller.ability, 'read', 'Permit', await findPermit(deps.sequelize, tenantId, permitId, { lock: true }), 'permit');
  authorizeRecord(caller.ability, 'verify', 'IsolationStep', { tenantId, contractorOrganisationId: permit.contractorOrganisationId }, 'isolation step');
  // Proving comes between acceptance and the authoriser's signature that the isolations are in place.
  if (!statesFrom('confirm_isolated').includes(permit.state))
    throw AppError.unprocessable('The section is proved dead after the contractor lead accepts the permit and before the authoriser signs the isolations in place.');
  if (!(await holdsQualification(deps.sequelize, tenantId, caller.user.id, 'isolation_verifier', deps.clock.now())))
    throw AppError.unprocessable('You need an in-date isolation verifier qualification to prove isolations.');
  return permit;
}

const EPSILON_KPA = 1e-9;

async function auditProving(deps: AppDeps, caller: CallerContext, permit: PermitRow, provingId: string, action: string, data: Record<string, unknown>) {
  await appendAudit(deps.sequelize, {
    tenantId: permit.tenantId, entityType: 'isolation_proving', entityId: provingId, permitId: permit.id, action, actor: auditActor(caller, 'verify'),
    ip: caller.ip, data, occurredAt: deps.clock.now(),
  });
  await notifyChange(deps.sequelize, { tenantId: permit.tenantId, kind: 'isolation', permitId: permit.id, provingId, action });
}

export async function startProving(deps: AppDeps, caller: CallerContext, permitId: string, input: StartProvingInput) {
  const { tenantId } = caller.actor;
  try {
    return await withTenant(deps.sequelize, tenantId, async () => {
      const permit = await loadPermit(deps, caller, permitId);
      const [running] = await deps.sequelize.query<{ at: string }>(
        `SELECT coalesce(ip.tag_code, s.temp_label) AS at FROM isolation_provings p JOIN isolation_steps s ON s.tenant_id = p.tenant_id AND s.id = p.step_id
         LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
         WHERE p.tenant_id = :tenantId AND p.permit_id = :permitId AND p.result = 'running'`,
        { replacements: { tenantId, permitId }, type: QueryTypes.SELECT },
      );
      if (running) throw AppError.conflict(`A hold test is already running at ${running.at}. Record its end reading first.`);

      const [bleed] = await deps.sequelize.query<{ label: string; kind: string; status: string }>(
        `SELECT coalesce(ip.tag_code, s.temp_label) AS label, s.kind, s.status FROM isolation_steps s LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
         WHERE s.tenant_id = :tenantId AND s.permit_id = :permitId AND s.id = :stepId`,
        { replacements: { tenantId, permitId, stepId: input.stepId }, type: QueryTypes.SELECT },
      );
      if (!bleed) throw AppError.validation('That point is not in this permit’s plan.', [{ path: 'stepId', message: 'Choose a vent or drain of this plan.' }]);
      if (!isBleedKind(bleed.kind)) {
        const message = `${bleed.label} is not a vent or drain. Read the pressure where the section can be bled: at a vent or drain of the plan.`;
        throw AppError.unprocessable(message, [{ path: 'stepId', message }]);
      }
      if (!isInPlace(bleed.status)) {
        const message = `${bleed.label} is not ${bleed.status === 'removed' ? 'in place any more' : 'fitted yet'}; apply it before reading its gauge.`;
        throw AppError.unprocessable(message, [{ path: 'stepId', message }]);
      }

      const devices = await sectionDevices(deps.sequelize, tenantId, permitId);
      const notOn = devices.filter((d) => !isInPlace(d.status)).map((d) => d.label);
      if (notOn.length) throw AppError.unprocessable(`Put every isolating device on before proving the section: ${notOn.join(', ')} ${notOn.length === 1 ? 'is' : 'are'} not on yet.`);
      requireIndependentReader(caller, devices);

      const bounds = await observationBounds(deps, permit);
      const now = deps.clock.now();
      const readAt = input.readAt ? new Date(input.readAt) : now;
      const enteredLate = input.readAt ? checkObservedTime(bounds, readAt, 'readAt').enteredLate : false;
      const lastOn = devices.reduce<Date | null>((t, d) => (d.appliedAt && (!t || d.appliedAt > t) ? new Date(d.appliedAt) : t), null);
      if (lastOn && readAt < lastOn) {
        const message = `The first reading must be taken after every isolating device is on; the last went on at ${formatInZone(lastOn, bounds.timeZone)}.`;
        throw AppError.unprocessable(message, [{ path: 'readAt', message }]);
      }

      const { provingMaxPressure: limit, provingPressureUnit: limitUnit, provingHoldMinutes: hold } = bounds.settings;
      if (toKpa(input.reading, input.unit) > toKpa(limit, limitUnit) + EPSILON_KPA) {
        const message = `The gauge at ${bleed.label} reads ${formatPressure(input.reading, input.unit)}, above this site’s limit of ${formatPressure(limit, limitUnit)} for a dead section. Bleed the section down before starting the hold test.`;
        throw AppError.unprocessable(message, [{ path: 'reading', message }]);
      }

      const [row] = await deps.sequelize.query<{ id: string }>(
        `INSERT INTO isolation_provings (tenant_id, permit_id, step_id, unit, max_pressure, max_pressure_unit, hold_minutes, start_reading, started_at, started_by, started_entered_late, notes, updated_at)
         VALUES (:tenantId, :permitId, :stepId, :unit, :limit, :limitUnit, :hold, :reading, :readAt, :userId, :enteredLate, :notes, :now) RETURNING id`,
        {
          replacements: {
            tenantId, permitId, stepId: input.stepId, unit: input.unit, limit, limitUnit, hold, reading: input.reading, readAt, userId: caller.user.id, enteredLate,
            notes: input.notes ?? null, now,
          },
          type: QueryTypes.SELECT,
        },
      );
      await auditProving(deps, caller, permit, row.id, 'proving_started', {
        label: bleed.label, reading: input.reading, unit: input.unit, limit, limitUnit, holdMinutes: hold, ...(enteredLate ? { readAt: readAt.toISOString(), enteredLate } : {}),
      });
      return (await findProving(deps.sequelize, tenantId, permitId, row.id))!;
    });
  } catch (err) {
    // Two people starting a test at once: the partial unique index lets one through.
    if (err instanceof UniqueConstraintError) throw AppError.conflict('Someone has just started a hold test on this section. Reload to see it.');
    throw err;
  }
}

/** Why the test failed, in words, or null when the readings hold. */
function failureOf(p: ProvingRow, end: number): string | null {
  const unit = p.unit as GaugeUnit;
  const limitUnit = p.maxPressureUnit as GaugeUnit;
  // A rise says most about a passing isolation, so it is named first.
  if (toKpa(end, unit) > toKpa(p.startReading, unit) + EPSILON_KPA) return `the pressure built up from ${formatPressure(p.startReading, unit)} to ${formatPressure(end, unit)}`;
  if (toKpa(end, unit) > toKpa(p.maxPressure, limitUnit) + EPSILON_KPA)
    return `the gauge read ${formatPressure(end, unit)} at the end, above the ${formatPressure(p.maxPressure, limitUnit)} limit`;
  return null;
}

export async function endProving(deps: AppDeps, caller: CallerContext, permitId: string, provingId: string, input: EndProvingInput) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = await loadPermit(deps, caller, permitId);
    const proving = await findProving(deps.sequelize, tenantId, permitId, provingId, true);
    if (!proving) throw AppError.notFound('hold test');
    if (proving.result !== 'running') throw AppError.conflict(`This hold test has already ended (${proving.result}).`, { current: { result: proving.result } });
    requireIndependentReader(caller, await sectionDevices(deps.sequelize, tenantId, permitId));

    const bounds = await observationBounds(deps, permit);
    const now = deps.clock.now();
    const readAt = input.readAt ? new Date(input.readAt) : now;
    const enteredLate = input.readAt ? checkObservedTime(bounds, readAt, 'readAt').enteredLate : false;
    const startedAt = new Date(proving.startedAt);
    if (readAt < startedAt) {
      const message = `The end reading cannot come before the first reading (${formatInZone(startedAt, bounds.timeZone)}).`;
      throw AppError.unprocessable(message, [{ path: 'readAt', message }]);
    }
    // A build-up is a failure as soon as it is seen; a reading that holds proves the section only after the full hold time.
    const failure = failureOf(proving, input.reading);
    const holdEnds = new Date(startedAt.getTime() + proving.holdMinutes * 60_000);
    if (!failure && readAt < holdEnds) {
      const left = Math.ceil((holdEnds.getTime() - readAt.getTime()) / 60_000);
      const message = `Hold the test for ${proving.holdMinutes} minutes without build-up: the end reading can be taken from ${formatInZone(holdEnds, bounds.timeZone)} (${left} minute${left === 1 ? '' : 's'} to go).`;
      throw AppError.unprocessable(message, [{ path: 'readAt', message }]);
    }
    const result = failure ? 'failed' : 'proved';
    await deps.sequelize.query(
      `UPDATE isolation_provings SET end_reading = :reading, ended_at = :readAt, ended_by = :userId, ended_entered_late = :enteredLate, result = :result, failure = :failure,
         notes = CASE WHEN CAST(:notes AS text) IS NULL THEN notes WHEN notes IS NULL THEN :notes ELSE notes || E'\n' || :notes END, updated_at = :now
       WHERE tenant_id = :tenantId AND id = :provingId`,
      { replacements: { tenantId, provingId, reading: input.reading, readAt, userId: caller.user.id, enteredLate, result, failure, notes: input.notes ?? null, now } },
    );
    await auditProving(deps, caller, permit, provingId, result === 'proved' ? 'section_proved' : 'proving_failed', {
      label: proving.at, startReading: proving.startReading, endReading: input.reading, unit: proving.unit, holdMinutes: proving.holdMinutes, failure,
      ...(enteredLate ? { readAt: readAt.toISOString(), enteredLate } : {}),
    });
    return (await findProving(deps.sequelize, tenantId, permitId, provingId))!;
  });
}
