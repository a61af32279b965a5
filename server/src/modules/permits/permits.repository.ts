import { QueryTypes, type Sequelize } from 'sequelize';
import type { PermitsQuery } from '@shared/schemas/permit.schema';
import { liveStates } from '@shared/permit/states';
import { nextGasTestDue } from '@shared/permit/due-times';
import type { ChecklistItem, PermitRecord, PermitSummary } from '@shared/types/permits';
import type { Page } from '@shared/schemas/common.schema';
import type { SqlScope } from '../../lib/casl-sql';

/** A permit as the server reads it: the shared record with its moments as Dates. */
export type PermitRow = PermitRecord<Date>;

const userName = (column: string) => `(SELECT u.name FROM users u WHERE u.id = ${column})`;

// The names come from scalar subqueries, not joins: with five joins to users and two more, PostgreSQL
// spent 3–9 ms planning this one-row read (its search for a join order) against 0.2 ms running it;
// each subquery is planned on its own in a fraction of a millisecond. The pipeline, the contractor and
// the requester are NOT NULL foreign keys, so no row is lost or gained against the inner joins.
const permitColumns = `
  p.id, p.tenant_id AS "tenantId", p.number, p.state, p.version, p.kinds, p.title, p.scope, p.pipeline_id AS "pipelineId", (SELECT pl.name FROM pipelines pl WHERE pl.tenant_id = p.tenant_id AND pl.id = p.pipeline_id) AS "pipelineName",
  p.from_position::float8 AS "fromPosition", p.to_position::float8 AS "toPosition", p.job_reference AS "jobReference", p.method_statement AS "methodStatement",
  p.hazards, p.ppe, p.checklist, p.walkdown, p.valid_from AS "validFrom", p.valid_to AS "validTo",
  p.contractor_organisation_id AS "contractorOrganisationId", (SELECT o.name FROM organisations o WHERE o.tenant_id = p.tenant_id AND o.id = p.contractor_organisation_id) AS "contractorName",
  p.contractor_lead_user_id AS "contractorLeadUserId", ${userName('p.contractor_lead_user_id')} AS "contractorLeadName",
  p.requester_user_id AS "requesterUserId", ${userName('p.requester_user_id')} AS "requesterName",
  p.authoriser_user_id AS "authoriserUserId", ${userName('p.authoriser_user_id')} AS "authoriserName",
  p.holder_user_id AS "holderUserId", ${userName('p.holder_user_id')} AS "holderName",
  p.fire_watch_minutes AS "fireWatchMinutes", p.fire_watch_person AS "fireWatchPerson",
  p.gas_test_window_minutes AS "gasTestWindowMinutes", p.gas_test_interval_minutes AS "gasTestIntervalMinutes",
  p.hot_work_ended_at AS "hotWorkEndedAt", p.control_room_ack_at AS "controlRoomAckAt", p.rejection_reason AS "rejectionReason",
  p.state_before_expiry AS "stateBeforeExpiry", p.expired_flag AS "expiredFlag", p.created_at AS "createdAt", p.updated_at AS "updatedAt",
  p.suspended_by_kind AS "suspendedByKind", ${userName('p.suspended_by_user_id')} AS "suspendedByName", p.suspended_at AS "suspendedAt", p.suspension_reason AS "suspensionReason"`;

export async function findPermit(sequelize: Sequelize, tenantId: string, id: string, opts: { lock?: boolean } = {}): Promise<PermitRow | null> {
  // With the lock, one statement: after waiting for another writer it returns the row as that writer left it.
  const rows = await sequelize.query<PermitRow>(`SELECT ${permitColumns} FROM permits p WHERE p.tenant_id = :tenantId AND p.id = :id${opts.lock ? ' FOR UPDATE OF p' : ''}`, {
    replacements: { tenantId, id },
    type: QueryTypes.SELECT,
  });
  return rows[0] ?? null;
}

const sortColumns: Record<PermitsQuery['sort'], string> = { number: 'p.number', title: 'lower(p.title)', state: 'p.state', validFrom: 'p.valid_from', updatedAt: 'p.updated_at' };

export async function listPermits(sequelize: Sequelize, tenantId: string, q: PermitsQuery, scope: SqlScope, now: Date): Promise<Page<PermitSummary<Date>>> {
  const where = ['p.tenant_id = :tenantId', scope.sql];
  const r: Record<string, unknown> = { tenantId, ...scope.replacements, limit: q.pageSize, offset: (q.page - 1) * q.pageSize };
  if (q.state?.length) {
    where.push('p.state IN (:states)');
    r.states = q.state;
  }
  if (q.pipelineId) {
    where.push('p.pipeline_id = :pipelineId');
    r.pipelineId = q.pipelineId;
  }
  if (q.contractorOrganisationId) {
    where.push('p.contractor_organisation_id = :org');
    r.org = q.contractorOrganisationId;
  }
  if (q.kind) {
    where.push(':kind = ANY (p.kinds)');
    r.kind = q.kind;
  }
  if (q.from) {
    where.push('p.valid_to >= CAST(:from AS date)');
    r.from = q.from;
  }
  if (q.to) {
    where.push(`p.valid_from < CAST(:to AS date) + interval '1 day'`);
    r.to = q.to;
  }
  if (q.q) {
    where.push(`(p.number ILIKE :q OR p.title ILIKE :q)`);
    r.q = `%${q.q.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;
  }
  const whereSql = where.join(' AND ');
  const countSql = `SELECT count(*)::int FROM permits p WHERE ${whereSql}`;
  const order = `${sortColumns[q.sort]} ${q.dir === 'asc' ? 'ASC' : 'DESC'}, p.id`;
  // The page's ids first, from the permits alone (an index walk for the usual orders), then the
  // joins and the gas-test look-up for those rows only: a deep page no longer sorts and joins
  // every row before it. The count rides along as a one-time subquery (one statement fewer); only a page
  // past the end, which has no row to carry it, asks for it on its own.
  const rows = await sequelize.query<Omit<PermitSummary<Date>, 'nextGasTestDue'> & { lastGasPassAt: Date | null; gasTestIntervalMinutes: number; total: number }>(
    `WITH page AS (SELECT p.id FROM permits p WHERE ${whereSql} ORDER BY ${order} LIMIT :limit OFFSET :offset)
     SELECT p.id, p.number, p.state, p.version, p.kinds, p.title, p.pipeline_id AS "pipelineId", pl.name AS "pipelineName",
            p.from_position::float8 AS "fromPosition", p.to_position::float8 AS "toPosition", p.valid_from AS "validFrom", p.valid_to AS "validTo",
            p.contractor_organisation_id AS "contractorOrganisationId", o.name AS "contractorName", p.updated_at AS "updatedAt",
            p.gas_test_interval_minutes AS "gasTestIntervalMinutes",
            CASE WHEN p.state IN (:live) THEN (SELECT max(g.tested_at) FROM gas_tests g WHERE g.tenant_id = p.tenant_id AND g.permit_id = p.id AND g.verdict = 'pass') END AS "lastGasPassAt",
            (${countSql}) AS total
     FROM page
     JOIN permits p ON p.tenant_id = :tenantId AND p.id = page.id
     JOIN pipelines pl ON pl.tenant_id = p.tenant_id AND pl.id = p.pipeline_id
     JOIN organisations o ON o.tenant_id = p.tenant_id AND o.id = p.contractor_organisation_id
     ORDER BY ${order}`,
    { replacements: { ...r, live: liveStates }, type: QueryTypes.SELECT },
  );
  const total = rows.length
    ? rows[0].total
    : (await sequelize.query<{ count: number }>(countSql, { replacements: r, type: QueryTypes.SELECT }))[0].count;
  const items = rows.map(({ lastGasPassAt, gasTestIntervalMinutes, total: _total, ...p }) => ({ ...p, nextGasTestDue: nextGasTestDue(p.state, lastGasPassAt, gasTestIntervalMinutes, now) }));
  return { items, total, page: q.page, pageSize: q.pageSize };
}

/** Next readable number for the tenant and year, e.g. PW-2026-0042; the row lock keeps numbers unique and gap-free. */
export async function nextPermitNumber(sequelize: Sequelize, tenantId: string, year: number): Promise<string> {
  const [row] = await sequelize.query<{ last: number }>(
    `INSERT INTO permit_sequences (tenant_id, year, last) VALUES (:tenantId, :year, 1)
     ON CONFLICT (tenant_id, year) DO UPDATE SET last = permit_sequences.last + 1 RETURNING last`,
    { replacements: { tenantId, year }, type: QueryTypes.SELECT },
  );
  return `PW-${year}-${String(row.last).padStart(4, '0')}`;
}

export async function checklistTemplate(sequelize: Sequelize, tenantId: string, kinds: string[]) {
  const rows = await sequelize.query<{ key: string; label: string; required_for: string[]; stage: 'before_work' | 'walkdown' }>(
    `SELECT key, label, required_for, stage FROM checklist_templates WHERE tenant_id = :tenantId ORDER BY stage, sort, key`,
    { replacements: { tenantId }, type: QueryTypes.SELECT },
  );
  const toItem = (r: (typeof rows)[number]): ChecklistItem => ({ key: r.key, label: r.label, required: r.required_for.some((k) => kinds.includes(k)) || r.required_for.includes('all'), confirmed: false });
  return {
    checklist: rows.filter((r) => r.stage === 'before_work').map(toItem),
    walkdown: rows.filter((r) => r.stage === 'walkdown').map(toItem),
  };
}
