import { QueryTypes, type Sequelize } from 'sequelize';
import type { DueFacts } from '@shared/permit/due-times';
import { liveStates } from '@shared/permit/states';
import { inPlaceStatuses } from '@shared/isolations/step-rules';
import type { PermitGasLimitsInput } from '@shared/schemas/gas-tests.schema';
import type { GasTestRow, PermitLimitsView } from '@shared/types/gas-tests';
import type { Page } from '@shared/schemas/common.schema';
import { assessOptionsFor, permitLimits } from '@shared/gas-tests/permit-limits';
import type { TenantSettings } from '@shared/schemas/tenant-settings.schema';
import { tenantAtmosphereLimits } from '../../lib/atmosphere-limits';
import type { PermitRow } from '../permits/permits.repository';

// Queries of the gas-test feature. Call them inside withTenant.

const one = async <T extends object>(sequelize: Sequelize, sql: string, replacements: Record<string, unknown>) =>
  (await sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT }))[0];

export const gasTestSelect = `
  SELECT g.id, g.permit_id AS "permitId", g.tested_at AS "testedAt", g.place, g.place_note AS "placeNote", g.purpose, g.readings, g.verdict,
         g.assessment, u.name AS "testerName", g.source, g.series_id AS "seriesId", g.notes, g.entered_late AS "enteredLate",
         CASE WHEN i.id IS NULL THEN NULL ELSE jsonb_build_object('id', i.id, 'model', i.model, 'serial', i.serial) END AS instrument
  FROM gas_tests g
  JOIN users u ON u.id = g.tester_user_id
  LEFT JOIN instruments i ON i.tenant_id = g.tenant_id AND i.id = g.instrument_id`;

export async function listGasTests(sequelize: Sequelize, tenantId: string, permitId: string, q: { page: number; pageSize: number; dir: 'asc' | 'desc' }): Promise<Page<GasTestRow<Date>>> {
  const r = { tenantId, permitId, limit: q.pageSize, offset: (q.page - 1) * q.pageSize };
  const { n } = (await one<{ n: number }>(sequelize, `SELECT count(*)::int AS n FROM gas_tests WHERE tenant_id = :tenantId AND permit_id = :permitId`, r))!;
  const dir = q.dir === 'asc' ? 'ASC' : 'DESC';
  const items = await sequelize.query<GasTestRow<Date>>(`${gasTestSelect} WHERE g.tenant_id = :tenantId AND g.permit_id = :permitId ORDER BY g.tested_at ${dir}, g.created_at ${dir}, g.id LIMIT :limit OFFSET :offset`, {
    replacements: r,
    type: QueryTypes.SELECT,
  });
  return { items, total: n, page: q.page, pageSize: q.pageSize };
}

export async function findGasTest(sequelize: Sequelize, tenantId: string, id: string): Promise<GasTestRow<Date>> {
  return (await one<GasTestRow<Date>>(sequelize, `${gasTestSelect} WHERE g.tenant_id = :tenantId AND g.id = :id`, { tenantId, id }))!;
}

/** When work last started or resumed, from the audit trail (the permit row keeps no such column). */
export async function liveSince(sequelize: Sequelize, tenantId: string, permitId: string): Promise<Date | null> {
  const row = await one<{ at: Date | null }>(
    sequelize,
    `SELECT max(occurred_at) AS at FROM audit_events WHERE tenant_id = :tenantId AND permit_id = :permitId AND action IN ('start_work', 'resume') AND to_state IN (:live)`,
    { tenantId, permitId, live: liveStates },
  );
  return row?.at ? new Date(row.at) : null;
}

/** The limits this permit's tests are judged against: tenant limits, tightened by the permit. */
export async function limitsForPermit(sequelize: Sequelize, permit: PermitRow): Promise<PermitLimitsView> {
  const { limits: tenant } = await tenantAtmosphereLimits(sequelize, permit.tenantId);
  const row = await one<{ gas_limits: PermitGasLimitsInput | null }>(sequelize, `SELECT gas_limits FROM permits WHERE tenant_id = :tenantId AND id = :id`, {
    tenantId: permit.tenantId,
    id: permit.id,
  });
  const permitRequest = row?.gas_limits ?? null;
  return { limits: permitLimits(tenant, permitRequest, permit.number), hotWork: Boolean(assessOptionsFor(permit.kinds).hotWork), permitRequest };
}

export interface GasHistory {
  lastPassAt: Date | null;
  lastFailAt: Date | null;
  beforeCleaningAt: Date | null;
  beforeWorkAt: Date | null;
}

export async function gasHistory(sequelize: Sequelize, tenantId: string, permitId: string): Promise<GasHistory> {
  const row = (await one<{ last_pass: Date | null; last_fail: Date | null; cleaning: Date | null; before: Date | null }>(
    sequelize,
    `SELECT max(tested_at) FILTER (WHERE verdict = 'pass') AS last_pass, max(tested_at) FILTER (WHERE verdict = 'fail') AS last_fail,
            max(tested_at) FILTER (WHERE verdict = 'pass' AND purpose = 'before_cleaning') AS cleaning,
            max(tested_at) FILTER (WHERE verdict = 'pass' AND purpose = 'before_work') AS before
     FROM gas_tests WHERE tenant_id = :tenantId AND permit_id = :permitId`,
    { tenantId, permitId },
  ))!;
  const d = (v: Date | null) => (v ? new Date(v) : null);
  return { lastPassAt: d(row.last_pass), lastFailAt: d(row.last_fail), beforeCleaningAt: d(row.cleaning), beforeWorkAt: d(row.before) };
}

/** Everything the due-time rules need about one permit. */
export async function dueFactsFor(sequelize: Sequelize, permit: PermitRow, settings: TenantSettings): Promise<DueFacts> {
  const r = { tenantId: permit.tenantId, permitId: permit.id };
  const gas = await gasHistory(sequelize, permit.tenantId, permit.id);
  const iso = (await one<{ vents: number; plugs: number }>(
    sequelize,
    `SELECT count(*) FILTER (WHERE kind = 'vent' AND status IN (:inPlace))::int AS vents,
            count(*) FILTER (WHERE kind = 'plug' AND status IN (:inPlace))::int AS plugs
     FROM isolation_steps WHERE tenant_id = :tenantId AND permit_id = :permitId`,
    { ...r, inPlace: inPlaceStatuses },
  ))!;
  // When the isolations were signed in place rides along: vent and plug checks count from it before work starts.
  const checks = (await one<{ vent: Date | null; plug: Date | null; fire: Date | null; isolated: Date | null }>(
    sequelize,
    `SELECT max(checked_at) FILTER (WHERE kind = 'vent') AS vent, max(checked_at) FILTER (WHERE kind = 'plug') AS plug,
            max(checked_at) FILTER (WHERE kind = 'fire_watch' AND ok) AS fire,
            (SELECT max(occurred_at) FROM audit_events WHERE tenant_id = :tenantId AND permit_id = :permitId AND action = 'confirm_isolated') AS isolated
     FROM permit_checks WHERE tenant_id = :tenantId AND permit_id = :permitId`,
    r,
  ))!;
  const d = (v: Date | null) => (v ? new Date(v) : null);
  return {
    state: permit.state,
    kinds: permit.kinds,
    liveSince: await liveSince(sequelize, permit.tenantId, permit.id),
    isolatedSince: d(checks.isolated),
    gas: { lastPassAt: gas.lastPassAt, intervalMinutes: permit.gasTestIntervalMinutes },
    vent: { lastAt: d(checks.vent), intervalMinutes: settings.ventCheckIntervalMinutes, open: iso.vents },
    plug: { lastAt: d(checks.plug), intervalMinutes: settings.plugCheckIntervalMinutes, inPlace: iso.plugs },
    fireWatch: { hotWorkEndedAt: d(permit.hotWorkEndedAt), minutes: permit.fireWatchMinutes, lastCheckAt: d(checks.fire) },
  };
}

/** Closes the open overdue markers of a kind once the check has been done. */
export async function resolveOverdue(sequelize: Sequelize, tenantId: string, permitId: string, kind: string, now: Date) {
  await sequelize.query(`UPDATE overdue_alerts SET resolved_at = :now WHERE tenant_id = :tenantId AND permit_id = :permitId AND kind = :kind AND resolved_at IS NULL`, {
    replacements: { tenantId, permitId, kind, now },
  });
}
