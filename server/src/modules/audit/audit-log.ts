import { QueryTypes, type Sequelize } from 'sequelize';
import Papa from 'papaparse';
import type { Page } from '@shared/schemas/common.schema';
import type { AuditEventsQuery, AuditExportQuery, AuditFilters } from '@shared/schemas/audit.schema';
import type { AuditActorOption, AuditLogEvent } from '@shared/types/audit';
import { auditActionLabel } from '@shared/permit/record-words';
import { auditDataWords, stateChangeWords } from '@shared/permit/audit-event-words';
import { formatInZone } from '@shared/time/zone';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { authorizeType } from '../../lib/authorize';
import type { CallerContext } from '../../lib/caller';
import { loadTenantSettings } from '../tenants/tenant-settings';
import type { StoredEvent } from './audit.service';

/** A stored event with the number of the permit it belongs to, as the log lists it. */
interface EventRow extends StoredEvent {
  permit_number: string | null;
}

/** The WHERE clause of the filters; every value travels as a bound parameter. */
function filterSql(tenantId: string, f: AuditFilters) {
  const where = ['e.tenant_id = :tenantId'];
  const replacements: Record<string, unknown> = { tenantId };
  const add = (sql: string, key: string, value: unknown) => {
    where.push(sql);
    replacements[key] = value;
  };
  if (f.actor) add('e.actor_user_id = :actor', 'actor', f.actor);
  if (f.kind) add('e.action = :kind', 'kind', f.kind);
  if (f.permitId) add('e.permit_id = :permitId', 'permitId', f.permitId);
  if (f.entityId) add('e.entity_id = :entityId', 'entityId', f.entityId);
  if (f.from) add('e.occurred_at >= :from', 'from', new Date(f.from));
  if (f.to) add('e.occurred_at <= :to', 'to', new Date(f.to));
  return { where: where.join(' AND '), replacements };
}

const COLUMNS = `e.seq, e.tenant_id, e.entity_type, e.entity_id, e.permit_id, p.number AS permit_number, e.action, e.from_state, e.to_state,
  e.actor_user_id, e.actor_name, e.actor_role, e.membership_id, e.reason, e.ip, e.data, e.occurred_at, e.prev_hash, e.hash`;
const FROM = `audit_events e LEFT JOIN permits p ON p.tenant_id = e.tenant_id AND p.id = e.permit_id`;

function inWords(r: EventRow, timeZone: string): AuditLogEvent<Date> {
  return {
    seq: Number(r.seq),
    entityType: r.entity_type,
    entityId: r.entity_id,
    permitId: r.permit_id,
    permitNumber: r.permit_number,
    action: r.action,
    actionLabel: auditActionLabel(r.action),
    fromState: r.from_state,
    toState: r.to_state,
    change: stateChangeWords(r.from_state, r.to_state),
    details: auditDataWords(r.data, (iso) => formatInZone(iso, timeZone)),
    actorUserId: r.actor_user_id,
    actorName: r.actor_name,
    actorRole: r.actor_role,
    reason: r.reason,
    occurredAt: r.occurred_at,
    hash: r.hash,
    prevHash: r.prev_hash,
  };
}

/** The caller's tenant's events, newest first, filtered, one page. */
export async function listAuditLog(deps: AppDeps, caller: CallerContext, q: AuditEventsQuery): Promise<Page<AuditLogEvent<Date>>> {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'read', 'AuditEvent', { tenantId }, 'the audit trail');
  const { where, replacements } = filterSql(tenantId, q);
  return withTenant(deps.sequelize, tenantId, async () => {
    const { timeZone } = await loadTenantSettings(deps.sequelize, tenantId);
    const [{ n }] = await deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events e WHERE ${where}`, { replacements, type: QueryTypes.SELECT });
    const rows = await deps.sequelize.query<EventRow>(`SELECT ${COLUMNS} FROM ${FROM} WHERE ${where} ORDER BY e.seq DESC LIMIT :limit OFFSET :offset`, {
      replacements: { ...replacements, limit: q.pageSize, offset: (q.page - 1) * q.pageSize },
      type: QueryTypes.SELECT,
    });
    return { items: rows.map((r) => inWords(r, timeZone)), total: n, page: q.page, pageSize: q.pageSize };
  });
}

/** The people who appear in the tenant's log, for the "who" filter. */
export async function listAuditActors(deps: AppDeps, caller: CallerContext): Promise<AuditActorOption[]> {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'read', 'AuditEvent', { tenantId }, 'the audit trail');
  return withTenant(deps.sequelize, tenantId, () =>
    deps.sequelize.query<AuditActorOption>(
      `SELECT u.id AS "userId", u.name FROM users u
       WHERE EXISTS (SELECT 1 FROM memberships m WHERE m.user_id = u.id AND m.tenant_id = :tenantId)
       ORDER BY u.name LIMIT 500`,
      { replacements: { tenantId }, type: QueryTypes.SELECT },
    ),
  );
}

/**
 * One exported line: the fields the hash covers, under their column names, in the canonical form's
 * order (audit.service.ts canonicalEventBytes), the time as ISO-8601 UTC, then prev_hash and hash.
 * scripts/audit-verify.mjs recomputes the hash from exactly these.
 */
export function exportLine(r: EventRow) {
  return {
    tenant_id: r.tenant_id,
    seq: Number(r.seq),
    entity_type: r.entity_type,
    entity_id: r.entity_id,
    permit_id: r.permit_id,
    action: r.action,
    from_state: r.from_state,
    to_state: r.to_state,
    actor_user_id: r.actor_user_id,
    actor_name: r.actor_name,
    actor_role: r.actor_role,
    membership_id: r.membership_id,
    reason: r.reason,
    ip: r.ip,
    data: r.data,
    occurred_at: new Date(r.occurred_at).toISOString(),
    prev_hash: r.prev_hash,
    hash: r.hash,
  };
}

// A cell that starts like a formula is written as text, so a spreadsheet never runs a name or a reason.
const csvOptions = { escapeFormulae: true, newline: '\r\n' };
const csvColumns = ['Entry', 'Time (site)', 'Time (UTC)', 'Kind', 'Change', 'Details', 'Permit', 'Who', 'Role', 'Reason', 'Previous hash', 'Hash'];

function csvRow(r: EventRow, timeZone: string) {
  const w = inWords(r, timeZone);
  return [w.seq, formatInZone(r.occurred_at, timeZone), new Date(r.occurred_at).toISOString(), w.actionLabel, w.change, w.details.join('; '), w.permitNumber ?? '', w.actorName ?? 'Holdpoint', w.actorRole ?? '', w.reason ?? '', w.prevHash, w.hash];
}

const write = (out: NodeJS.WritableStream, chunk: string) =>
  new Promise<void>((resolve, reject) => {
    if (out.write(chunk)) return resolve();
    const done = (err?: Error) => {
      out.removeListener('drain', ok);
      out.removeListener('close', closed);
      if (err) reject(err);
      else resolve();
    };
    const ok = () => done();
    const closed = () => done(new Error('the reader went away'));
    out.once('drain', ok);
    out.once('close', closed);
  });

/**
 * An export of the filtered events, oldest first, read in pages by sequence inside one transaction
 * (one snapshot) and written as it is read, so a million events never sit in memory. The rights are
 * checked before the first byte; the returned writer does the rest.
 */
export function prepareAuditExport(deps: AppDeps, caller: CallerContext, q: AuditExportQuery, pageSize = 2_000) {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'read', 'AuditEvent', { tenantId }, 'the audit trail');
  const { where, replacements } = filterSql(tenantId, q);
  return {
    contentType: q.format === 'csv' ? 'text/csv; charset=utf-8' : 'application/x-ndjson; charset=utf-8',
    filename: `audit-log-${deps.clock.now().toISOString().slice(0, 10)}.${q.format}`,
    write: (out: NodeJS.WritableStream) =>
      withTenant(deps.sequelize, tenantId, async () => {
        const { timeZone } = await loadTenantSettings(deps.sequelize, tenantId);
        if (q.format === 'csv') await write(out, `${Papa.unparse([csvColumns], csvOptions)}\r\n`);
        for (let after = 0; ; ) {
          const rows = await pageAfter(deps.sequelize, where, replacements, after, pageSize);
          if (!rows.length) break;
          const text =
            q.format === 'csv'
              ? `${Papa.unparse(rows.map((r) => csvRow(r, timeZone)), csvOptions)}\r\n`
              : rows.map((r) => `${JSON.stringify(exportLine(r))}\n`).join('');
          await write(out, text);
          after = Number(rows[rows.length - 1].seq);
          if (rows.length < pageSize) break;
        }
      }),
  };
}

function pageAfter(sequelize: Sequelize, where: string, replacements: Record<string, unknown>, after: number, limit: number) {
  return sequelize.query<EventRow>(`SELECT ${COLUMNS} FROM ${FROM} WHERE ${where} AND e.seq > :after ORDER BY e.seq LIMIT :limit`, {
    replacements: { ...replacements, after, limit },
    type: QueryTypes.SELECT,
  });
}
