import { QueryTypes, type Sequelize } from 'sequelize';
import type { InstrumentInput, InstrumentPatch } from '@shared/schemas/gas-tests.schema';
import type { InstrumentList, InstrumentRow } from '@shared/types/gas-tests';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord, authorizeType } from '../../lib/authorize';
import { appendAudit } from '../audit/audit.service';
import { loadTenantSettings } from '../tenants/tenant-settings';
import { auditActor, type CallerContext } from '../../lib/caller';

const instrumentSelect = `
  SELECT id, tenant_id AS "tenantId", model, serial, last_bump_test_at AS "lastBumpTestAt",
         to_char(last_calibrated_on, 'YYYY-MM-DD') AS "lastCalibratedOn", to_char(calibration_due_on, 'YYYY-MM-DD') AS "calibrationDueOn",
         retired_at AS "retiredAt"
  FROM instruments`;

/** A monitor as the server reads it: the shared row with its moments as Dates. */
export type InstrumentRecord = InstrumentRow<Date>;

export async function findInstrument(sequelize: Sequelize, tenantId: string, id: string, lock = false): Promise<InstrumentRecord | null> {
  const rows = await sequelize.query<InstrumentRecord>(`${instrumentSelect} WHERE tenant_id = :tenantId AND id = :id${lock ? ' FOR UPDATE' : ''}`, {
    replacements: { tenantId, id },
    type: QueryTypes.SELECT,
  });
  return rows[0] ?? null;
}

export async function listInstruments(
  deps: AppDeps,
  caller: CallerContext,
  q: { page: number; pageSize: number; includeRetired?: 'true' | 'false' },
): Promise<InstrumentList<Date>> {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'read', 'Instrument', { tenantId }, 'instruments');
  return withTenant(deps.sequelize, tenantId, async () => {
    const where = `tenant_id = :tenantId${q.includeRetired === 'true' ? '' : ' AND retired_at IS NULL'}`;
    const r = { tenantId, limit: q.pageSize, offset: (q.page - 1) * q.pageSize };
    const [{ n }] = await deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM instruments WHERE ${where}`, { replacements: r, type: QueryTypes.SELECT });
    const items = await deps.sequelize.query<InstrumentRecord>(`${instrumentSelect} WHERE ${where} ORDER BY retired_at NULLS FIRST, model, serial LIMIT :limit OFFSET :offset`, {
      replacements: r,
      type: QueryTypes.SELECT,
    });
    // The tenant rule travels with the list, so the screen judges "usable" as the server will.
    const { requireDailyBumpTest } = await loadTenantSettings(deps.sequelize, tenantId);
    return { items, total: n, page: q.page, pageSize: q.pageSize, requireDailyBumpTest };
  });
}

function refuseFutureBump(deps: AppDeps, at: string | null | undefined) {
  if (at && new Date(at).getTime() > deps.clock.now().getTime() + 2 * 60_000)
    throw AppError.validation('A bump test cannot be recorded in the future.', [{ path: 'lastBumpTestAt', message: 'Give the time the bump test was done.' }]);
}

export async function createInstrument(deps: AppDeps, caller: CallerContext, input: InstrumentInput): Promise<InstrumentRecord> {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'create', 'Instrument', { tenantId }, 'instruments');
  refuseFutureBump(deps, input.lastBumpTestAt);
  return withTenant(deps.sequelize, tenantId, async () => {
    const taken = await deps.sequelize.query(`SELECT 1 FROM instruments WHERE tenant_id = :tenantId AND lower(serial) = lower(:serial)`, { replacements: { tenantId, serial: input.serial }, type: QueryTypes.SELECT });
    if (taken.length) throw AppError.validation('That serial number is already registered.', [{ path: 'serial', message: 'An instrument with this serial number exists.' }]);
    const now = deps.clock.now();
    const [{ id }] = await deps.sequelize.query<{ id: string }>(
      `INSERT INTO instruments (tenant_id, model, serial, last_bump_test_at, last_calibrated_on, calibration_due_on, created_at, updated_at)
       VALUES (:tenantId, :model, :serial, :bump, :calibrated, :due, :now, :now) RETURNING id`,
      {
        replacements: { tenantId, model: input.model, serial: input.serial, bump: input.lastBumpTestAt ?? null, calibrated: input.lastCalibratedOn ?? null, due: input.calibrationDueOn, now },
        type: QueryTypes.SELECT,
      },
    );
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'instrument', entityId: id, action: 'instrument_registered', actor: auditActor(caller, 'create'), ip: caller.ip,
      data: { model: input.model, serial: input.serial, calibrationDueOn: input.calibrationDueOn }, occurredAt: now,
    });
    return (await findInstrument(deps.sequelize, tenantId, id))!;
  });
}

const columns: Record<string, string> = { model: 'model', serial: 'serial', lastBumpTestAt: 'last_bump_test_at', lastCalibratedOn: 'last_calibrated_on', calibrationDueOn: 'calibration_due_on' };

export async function updateInstrument(deps: AppDeps, caller: CallerContext, id: string, input: InstrumentPatch): Promise<InstrumentRecord> {
  const { tenantId } = caller.actor;
  refuseFutureBump(deps, input.lastBumpTestAt);
  return withTenant(deps.sequelize, tenantId, async () => {
    const current = authorizeRecord(caller.ability, 'update', 'Instrument', await findInstrument(deps.sequelize, tenantId, id, true), 'instrument');
    const lastCalibrated = input.lastCalibratedOn !== undefined ? input.lastCalibratedOn : current.lastCalibratedOn;
    const due = input.calibrationDueOn ?? current.calibrationDueOn;
    if (lastCalibrated && due < lastCalibrated)
      throw AppError.validation('The calibration due date must not be before the last calibration.', [{ path: 'calibrationDueOn', message: 'Must be on or after the last calibration.' }]);
    if (input.serial && input.serial.toLowerCase() !== current.serial.toLowerCase()) {
      const taken = await deps.sequelize.query(`SELECT 1 FROM instruments WHERE tenant_id = :tenantId AND lower(serial) = lower(:serial) AND id <> :id`, { replacements: { tenantId, serial: input.serial, id }, type: QueryTypes.SELECT });
      if (taken.length) throw AppError.validation('That serial number is already registered.', [{ path: 'serial', message: 'An instrument with this serial number exists.' }]);
    }
    const now = deps.clock.now();
    const sets = ['updated_at = :now'];
    const r: Record<string, unknown> = { tenantId, id, now };
    for (const [key, column] of Object.entries(columns)) {
      const value = (input as Record<string, unknown>)[key];
      if (value === undefined) continue;
      sets.push(`${column} = :${key}`);
      r[key] = value;
    }
    if (input.retired !== undefined) sets.push(input.retired ? 'retired_at = coalesce(retired_at, :now)' : 'retired_at = NULL');
    await deps.sequelize.query(`UPDATE instruments SET ${sets.join(', ')} WHERE tenant_id = :tenantId AND id = :id`, { replacements: r });
    const action = input.lastBumpTestAt ? 'instrument_bump_tested' : input.calibrationDueOn || input.lastCalibratedOn ? 'instrument_calibrated' : 'instrument_edited';
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'instrument', entityId: id, action, actor: auditActor(caller, 'update'), ip: caller.ip, data: { ...input, serial: input.serial ?? current.serial }, occurredAt: now,
    });
    return (await findInstrument(deps.sequelize, tenantId, id))!;
  });
}
