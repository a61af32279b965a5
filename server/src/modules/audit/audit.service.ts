import { createHash } from 'node:crypto';
import { QueryTypes, type Sequelize } from 'sequelize';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { authorizeType } from '../../lib/authorize';
import type { CallerContext } from '../../lib/caller';
import { validIp } from '../../lib/client-ip';
import { canonicalJson } from '../../lib/canonical-json';

export interface AuditInput {
  tenantId: string;
  entityType: string;
  entityId: string;
  permitId?: string | null;
  action: string;
  fromState?: string | null;
  toState?: string | null;
  actor?: { userId: string; name: string; role: string | null; membershipId?: string | null } | null;
  reason?: string | null;
  ip?: string | null;
  data?: Record<string, unknown>;
  occurredAt: Date;
}

export interface StoredEvent {
  seq: number;
  tenant_id: string;
  entity_type: string;
  entity_id: string;
  permit_id: string | null;
  action: string;
  from_state: string | null;
  to_state: string | null;
  actor_user_id: string | null;
  actor_name: string | null;
  actor_role: string | null;
  membership_id: string | null;
  reason: string | null;
  ip: string | null;
  data: Record<string, unknown>;
  occurred_at: Date;
  prev_hash: string;
  hash: string;
}

/**
 * The hash of one event: SHA-256 over the previous hash, a line break and the event's canonical form,
 * a JSON array of its fields (object keys sorted at every level, the time as ISO-8601 UTC) in UTF-8.
 * The values must be those PostgreSQL returns for the stored row (appendAudit hashes exactly those), so
 * reading the row back gives the same bytes. Exported so a bulk import (the scale dataset) chains its
 * events exactly as appendAudit does.
 */
export function eventHash(prevHash: string, e: Omit<StoredEvent, 'hash' | 'prev_hash'>): string {
  return createHash('sha256').update(prevHash).update('\n').update(canonicalEventBytes(e)).digest('hex');
}

export function canonicalEventBytes(e: Omit<StoredEvent, 'hash' | 'prev_hash'>): Buffer {
  const body = canonicalJson([
    e.tenant_id, Number(e.seq), e.entity_type, e.entity_id, e.permit_id, e.action, e.from_state, e.to_state,
    e.actor_user_id, e.actor_name, e.actor_role, e.membership_id, e.reason, e.ip, e.data, new Date(e.occurred_at).toISOString(),
  ]);
  return Buffer.from(body, 'utf8');
}

type EventFields = Omit<StoredEvent, 'seq' | 'hash' | 'prev_hash'>;

/**
 * Appends one event to the tenant's chain inside the caller's transaction. The chain head is locked,
 * so two writers of one tenant queue rather than fork the chain. The statement that locks the head
 * also hands the event's values to PostgreSQL and takes them back as the columns' types return them
 * (jsonb reorders keys and rewrites numbers, uuid is lower-cased, text is UTF-8): the hash is taken
 * over what is stored, so verifying the row read back gives the same hash.
 * The head's lock lasts until the caller's transaction ends, and every writer of the tenant waits for
 * it: a state change appends its event as late as it can (permits.service.ts, applyTransition), and
 * the append itself is two statements (lock and read the head; write the event and move the head in
 * one), where it was four.
 */
export async function appendAudit(sequelize: Sequelize, input: AuditInput): Promise<{ seq: number; hash: string }> {
  const given = {
    tenant_id: input.tenantId,
    entity_type: input.entityType,
    entity_id: input.entityId,
    permit_id: input.permitId ?? null,
    action: input.action,
    from_state: input.fromState ?? null,
    to_state: input.toState ?? null,
    actor_user_id: input.actor?.userId ?? null,
    actor_name: input.actor?.name ?? null,
    actor_role: input.actor?.role ?? null,
    membership_id: input.actor?.membershipId ?? null,
    reason: input.reason ?? null,
    // Whatever a caller passes, the trail holds an IP address or nothing.
    ip: validIp(input.ip),
    data: canonicalJson(input.data ?? {}),
    occurred_at: input.occurredAt,
  };
  const lockHead = () =>
    sequelize.query<{ seq: number; last_hash: string } & EventFields>(
      `SELECT h.seq, h.last_hash,
              CAST(:tenant_id AS uuid) AS tenant_id, CAST(:entity_type AS text) AS entity_type, CAST(:entity_id AS uuid) AS entity_id,
              CAST(:permit_id AS uuid) AS permit_id, CAST(:action AS text) AS action, CAST(:from_state AS text) AS from_state,
              CAST(:to_state AS text) AS to_state, CAST(:actor_user_id AS uuid) AS actor_user_id, CAST(:actor_name AS text) AS actor_name,
              CAST(:actor_role AS text) AS actor_role, CAST(:membership_id AS uuid) AS membership_id, CAST(:reason AS text) AS reason,
              CAST(:ip AS text) AS ip, CAST(:data AS jsonb) AS data, CAST(:occurred_at AS timestamptz) AS occurred_at
       FROM audit_chain_heads h WHERE h.tenant_id = :tenantId FOR UPDATE`,
      { replacements: { ...given, tenantId: input.tenantId }, type: QueryTypes.SELECT },
    );
  let [head] = await lockHead();
  if (!head) {
    // The tenant's first event: start its chain (a concurrent first writer may win; either way there is one head).
    await sequelize.query(`INSERT INTO audit_chain_heads (tenant_id) VALUES (:tenantId) ON CONFLICT DO NOTHING`, { replacements: { tenantId: input.tenantId } });
    [head] = await lockHead();
  }
  const { seq: headSeq, last_hash: prevHash, ...stored } = head;
  const event = { ...stored, seq: Number(headSeq) + 1 };
  const hash = eventHash(prevHash, event);
  await sequelize.query(
    `WITH event AS (
       INSERT INTO audit_events (tenant_id, seq, entity_type, entity_id, permit_id, action, from_state, to_state, actor_user_id, actor_name, actor_role,
         membership_id, reason, ip, data, occurred_at, prev_hash, hash)
       VALUES (:tenant_id, :seq, :entity_type, :entity_id, :permit_id, :action, :from_state, :to_state, :actor_user_id, :actor_name, :actor_role,
         :membership_id, :reason, :ip, CAST(:data AS jsonb), :occurred_at, :prev_hash, :hash)
       RETURNING seq)
     UPDATE audit_chain_heads SET seq = (SELECT seq FROM event), last_hash = :hash WHERE tenant_id = :tenantId`,
    // The same text for data and the same instant as the values hashed above.
    { replacements: { ...event, data: given.data, occurred_at: given.occurred_at, prev_hash: prevHash, hash, tenantId: input.tenantId } },
  );
  return { seq: event.seq, hash };
}

export interface ChainBreak {
  /** The event, or the first of a run of events, the problem is found at. */
  seq: number;
  /** The last event of the run, when the problem covers several. */
  lastSeq?: number;
  problem: string;
}

export interface ChainReport {
  ok: boolean;
  /** Events read and checked. */
  events: number;
  /** Every problem found, in the order found; a changed event does not hide later ones. */
  breaks: ChainBreak[];
  /** The first problem found (for readers of the earlier answer, which had only this one). */
  brokenAtSeq?: number;
  problem?: string;
}

const run = (seq: number, lastSeq: number, problem: string): ChainBreak => (lastSeq > seq ? { seq, lastSeq, problem } : { seq, problem });

/**
 * Recomputes every hash of the tenant's chain, in pages, and reports every break. Each event is checked
 * on its own (its stored fields against its hash, its link against the event before it), so one changed
 * event does not hide a later change. The head and the last sequence are read first, in one statement
 * (one snapshot): events appended while the check runs commit together with their head and are left for
 * the next check instead of being reported missing, while an event sitting beyond the head in that
 * snapshot was not written by appendAudit.
 */
export async function verifyChain(
  sequelize: Sequelize,
  tenantId: string,
  pageSize = 5_000,
  /** Told after each page: events checked so far, and the last sequence the check will reach. */
  onPage?: (checked: number, until: number) => Promise<void>,
): Promise<ChainReport> {
  const [start] = await sequelize.query<{ seq: number | null; last_hash: string | null; last_seq: number | null }>(
    `SELECT h.seq, h.last_hash, (SELECT max(e.seq) FROM audit_events e WHERE e.tenant_id = :tenantId) AS last_seq
     FROM (SELECT 1) one LEFT JOIN audit_chain_heads h ON h.tenant_id = :tenantId`,
    { replacements: { tenantId }, type: QueryTypes.SELECT },
  );
  const headSeq = start.seq === null ? 0 : Number(start.seq);
  const lastSeq = start.last_seq === null ? 0 : Number(start.last_seq);
  const breaks: ChainBreak[] = [];
  if (lastSeq > headSeq) breaks.push(run(headSeq + 1, lastSeq, start.seq === null ? 'the chain head is missing' : 'an event lies beyond the end of the chain'));
  let prevSeq = 0;
  let prevHash = '';
  let lastWithinHead = 0;
  let headEventHash: string | null = null;
  let count = 0;
  const until = Math.max(headSeq, lastSeq);
  for (let from = 1; from <= until; ) {
    const rows = await sequelize.query<StoredEvent>(
      `SELECT seq, tenant_id, entity_type, entity_id, permit_id, action, from_state, to_state, actor_user_id, actor_name, actor_role,
              membership_id, reason, ip, data, occurred_at, prev_hash, hash
       FROM audit_events WHERE tenant_id = :tenantId AND seq >= :from AND seq <= :to ORDER BY seq LIMIT :limit`,
      { replacements: { tenantId, from, to: until, limit: pageSize }, type: QueryTypes.SELECT },
    );
    for (const row of rows) {
      const seq = Number(row.seq);
      const follows = seq === prevSeq + 1;
      if (!follows && seq <= headSeq) breaks.push(run(prevSeq + 1, seq - 1, 'events are missing from the chain'));
      // After a gap the event before is gone, so its link cannot be judged on its own.
      if (follows && row.prev_hash !== prevHash) breaks.push({ seq, problem: 'the link to the previous event does not match' });
      const { hash: _h, prev_hash: _p, ...fields } = row;
      if (eventHash(row.prev_hash, { ...fields, seq }) !== row.hash) breaks.push({ seq, problem: 'the event was changed after it was written' });
      if (seq <= headSeq) lastWithinHead = seq;
      if (seq === headSeq) headEventHash = row.hash;
      prevSeq = seq;
      prevHash = row.hash;
      count++;
    }
    if (onPage) await onPage(count, until);
    if (rows.length < pageSize) break;
    from = prevSeq + 1;
  }
  if (lastWithinHead < headSeq) breaks.push(run(lastWithinHead + 1, headSeq, 'events at the end of the chain are missing'));
  else if (headSeq > 0 && headEventHash !== start.last_hash) breaks.push({ seq: headSeq, problem: 'the chain head does not match the last event' });
  if (!breaks.length) return { ok: true, events: count, breaks };
  return { ok: false, events: count, breaks, brokenAtSeq: breaks[0].seq, problem: breaks[0].problem };
}

/** The caller's tenant's chain, recomputed for those who may check it. */
export async function verifyTenantChain(deps: AppDeps, caller: CallerContext): Promise<ChainReport> {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'verify_chain', 'AuditEvent', { tenantId }, 'the audit trail');
  return withTenant(deps.sequelize, tenantId, () => verifyChain(deps.sequelize, tenantId));
}
