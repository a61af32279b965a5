import { createHash } from 'node:crypto';
import { QueryTypes, type Sequelize } from 'sequelize';
import { canonicalJson } from './canonical-json';

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

interface StoredEvent {
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

/** Exported so a bulk import (the scale dataset) chains its events exactly as appendAudit does. */
export function eventHash(prevHash: string, e: Omit<StoredEvent, 'hash' | 'prev_hash'>): string {
  const body = canonicalJson([
    e.tenant_id, e.seq, e.entity_type, e.entity_id, e.permit_id, e.action, e.from_state, e.to_state,
    e.actor_user_id, e.actor_name, e.actor_role, e.membership_id, e.reason, e.ip, e.data, new Date(e.occurred_at).toISOString(),
  ]);
  return createHash('sha256').update(prevHash).update('\n').update(body).digest('hex');
}

/**
 * Appends one event to the tenant's chain inside the caller's transaction. The chain head is locked,
 * so two writers of one tenant queue rather than fork the chain.
 */
export async function appendAudit(sequelize: Sequelize, input: AuditInput): Promise<{ seq: number; hash: string }> {
  await sequelize.query(`INSERT INTO audit_chain_heads (tenant_id) VALUES (:tenantId) ON CONFLICT DO NOTHING`, { replacements: { tenantId: input.tenantId } });
  const [head] = await sequelize.query<{ seq: number; last_hash: string }>(`SELECT seq, last_hash FROM audit_chain_heads WHERE tenant_id = :tenantId FOR UPDATE`, {
    replacements: { tenantId: input.tenantId },
    type: QueryTypes.SELECT,
  });
  const event = {
    seq: Number(head.seq) + 1,
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
    ip: input.ip ?? null,
    data: JSON.parse(canonicalJson(input.data ?? {})) as Record<string, unknown>,
    occurred_at: input.occurredAt,
  };
  const hash = eventHash(head.last_hash, event);
  await sequelize.query(
    `INSERT INTO audit_events (tenant_id, seq, entity_type, entity_id, permit_id, action, from_state, to_state, actor_user_id, actor_name, actor_role,
       membership_id, reason, ip, data, occurred_at, prev_hash, hash)
     VALUES (:tenant_id, :seq, :entity_type, :entity_id, :permit_id, :action, :from_state, :to_state, :actor_user_id, :actor_name, :actor_role,
       :membership_id, :reason, :ip, CAST(:data AS jsonb), :occurred_at, :prev_hash, :hash)`,
    { replacements: { ...event, data: JSON.stringify(event.data), prev_hash: head.last_hash, hash } },
  );
  await sequelize.query(`UPDATE audit_chain_heads SET seq = :seq, last_hash = :hash WHERE tenant_id = :tenantId`, { replacements: { seq: event.seq, hash, tenantId: input.tenantId } });
  return { seq: event.seq, hash };
}

export interface ChainReport {
  ok: boolean;
  events: number;
  brokenAtSeq?: number;
  problem?: string;
}

/**
 * Recomputes every hash of the tenant's chain, in pages, and reports the first break. The head and the
 * last sequence are read first, in one statement (one snapshot): events appended while the check runs
 * commit together with their head and are left for the next check instead of being reported missing,
 * while an event sitting beyond the head in that snapshot was not written by appendAudit.
 */
export async function verifyChain(sequelize: Sequelize, tenantId: string, pageSize = 5_000): Promise<ChainReport> {
  const [start] = await sequelize.query<{ seq: number | null; last_hash: string | null; last_seq: number | null }>(
    `SELECT h.seq, h.last_hash, (SELECT max(e.seq) FROM audit_events e WHERE e.tenant_id = :tenantId) AS last_seq
     FROM (SELECT 1) one LEFT JOIN audit_chain_heads h ON h.tenant_id = :tenantId`,
    { replacements: { tenantId }, type: QueryTypes.SELECT },
  );
  const headSeq = start.seq === null ? 0 : Number(start.seq);
  if (start.last_seq !== null && Number(start.last_seq) > headSeq)
    return { ok: false, events: 0, brokenAtSeq: headSeq + 1, problem: start.seq === null ? 'the chain head is missing' : 'an event lies beyond the end of the chain' };
  let prev = '';
  let expectedSeq = 1;
  let count = 0;
  while (expectedSeq <= headSeq) {
    const rows = await sequelize.query<StoredEvent>(
      `SELECT seq, tenant_id, entity_type, entity_id, permit_id, action, from_state, to_state, actor_user_id, actor_name, actor_role,
              membership_id, reason, ip, data, occurred_at, prev_hash, hash
       FROM audit_events WHERE tenant_id = :tenantId AND seq >= :from AND seq <= :to ORDER BY seq LIMIT :limit`,
      { replacements: { tenantId, from: expectedSeq, to: headSeq, limit: pageSize }, type: QueryTypes.SELECT },
    );
    for (const row of rows) {
      const seq = Number(row.seq);
      if (seq !== expectedSeq) return { ok: false, events: count, brokenAtSeq: expectedSeq, problem: 'an event is missing from the chain' };
      if (row.prev_hash !== prev) return { ok: false, events: count, brokenAtSeq: seq, problem: 'the link to the previous event does not match' };
      const { hash: _h, prev_hash: _p, ...rest } = row;
      if (eventHash(prev, { ...rest, seq }) !== row.hash) return { ok: false, events: count, brokenAtSeq: seq, problem: 'the event was changed after it was written' };
      prev = row.hash;
      expectedSeq++;
      count++;
    }
    if (rows.length < pageSize) break;
  }
  if (count !== headSeq || (start.last_hash ?? '') !== prev) return { ok: false, events: count, brokenAtSeq: count + 1, problem: 'events at the end of the chain are missing' };
  return { ok: true, events: count };
}
