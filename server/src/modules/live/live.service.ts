import { QueryTypes } from 'sequelize';
import { alarmKindOf } from '@shared/live/alarms';
import { suspendedStates, type PermitState } from '@shared/permit/states';
import type { LiveEvent, LiveEventFacts, LivePermitRef } from '@shared/types/live';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { scopeToSql } from '../../lib/casl-sql';
import type { CallerContext } from '../../lib/caller';
import { permitScopeColumns } from '../permits/permits.service';

/**
 * The permits of the list the caller may read, by the same rules as the permit list. The others are
 * left out without a word, so the answer says nothing about them; when none is left the stream is
 * refused as if the permit did not exist.
 */
export async function readablePermits(deps: AppDeps, caller: CallerContext, ids: string[]): Promise<LivePermitRef[]> {
  const { tenantId } = caller.actor;
  const scope = scopeToSql(caller.ability, 'read', 'Permit', permitScopeColumns);
  const rows = await withTenant(deps.sequelize, tenantId, () =>
    deps.sequelize.query<LivePermitRef>(`SELECT p.id, p.number FROM permits p WHERE p.tenant_id = :tenantId AND p.id IN (:ids) AND ${scope.sql} ORDER BY p.number`, {
      replacements: { tenantId, ids, ...scope.replacements },
      type: QueryTypes.SELECT,
    }),
  );
  if (!rows.length) throw AppError.notFound('permit');
  return rows;
}

/** The tenant's last audit sequence number: a stream opened without Last-Event-ID starts after it. */
export async function lastSeq(deps: AppDeps, tenantId: string): Promise<number> {
  const [row] = await withTenant(deps.sequelize, tenantId, () =>
    deps.sequelize.query<{ seq: string | null }>(`SELECT max(seq) AS seq FROM audit_events WHERE tenant_id = :tenantId`, { replacements: { tenantId }, type: QueryTypes.SELECT }),
  );
  return Number(row?.seq ?? 0);
}

interface EventRow {
  seq: string;
  action: string;
  fromState: string | null;
  toState: string | null;
  actorName: string | null;
  reason: string | null;
  occurredAt: Date;
  entityType: string;
  data: Record<string, unknown>;
  permitIds: string[];
}

const text = (v: unknown) => (typeof v === 'string' ? v : undefined);

function factsOf(r: EventRow): LiveEventFacts {
  const d = r.data ?? {};
  const facts: LiveEventFacts = {
    verdict: text(d.verdict),
    place: text(d.place),
    check: text(d.check),
    dueAt: text(d.dueAt),
    // A person's stop records their kind; Holdpoint's own (a failing reading, a failed check, an overdue test) records "by holdpoint".
    suspendedBy: suspendedStates.includes(r.toState as PermitState) ? (text(d.suspendedBy) ?? (d.by === 'holdpoint' ? 'system' : undefined)) : undefined,
    certificateNumber: r.entityType === 'isolation_certificate' ? text(d.number) : undefined,
  };
  return Object.fromEntries(Object.entries(facts).filter(([, v]) => v !== undefined)) as LiveEventFacts;
}

/**
 * The audit events after `after` that concern the watched permits, in sequence order: the permit's
 * own events, and those of an isolation certificate the permit worked under at the time. The
 * sequence is the tenant's hash chain order; its head row is locked until commit, so a later number
 * never becomes visible before an earlier one and a reader that moves past a number misses nothing.
 */
export async function eventsAfter(deps: AppDeps, tenantId: string, permits: LivePermitRef[], after: number, limit: number): Promise<LiveEvent<Date>[]> {
  const ids = permits.map((p) => p.id);
  const relied = `FROM certificate_permits cp WHERE cp.tenant_id = e.tenant_id AND cp.certificate_id = e.entity_id AND cp.permit_id IN (:ids)
      AND cp.linked_at <= e.occurred_at AND (cp.released_at IS NULL OR cp.released_at > e.occurred_at)`;
  const rows = await withTenant(deps.sequelize, tenantId, () =>
    deps.sequelize.query<EventRow>(
      `SELECT e.seq, e.action, e.from_state AS "fromState", e.to_state AS "toState", e.actor_name AS "actorName", e.reason, e.occurred_at AS "occurredAt",
              e.entity_type AS "entityType", e.data,
              CASE WHEN e.permit_id IS NOT NULL THEN ARRAY[e.permit_id] ELSE ARRAY(SELECT cp.permit_id ${relied} ORDER BY cp.permit_id) END AS "permitIds"
       FROM audit_events e
       WHERE e.tenant_id = :tenantId AND e.seq > :after
         AND (e.permit_id IN (:ids) OR (e.permit_id IS NULL AND e.entity_type = 'isolation_certificate' AND EXISTS (SELECT 1 ${relied})))
       ORDER BY e.seq LIMIT :limit`,
      { replacements: { tenantId, ids, after, limit }, type: QueryTypes.SELECT },
    ),
  );
  const numbers = new Map(permits.map((p) => [p.id, p.number]));
  return rows.map((r) => {
    const facts = factsOf(r);
    const base = { action: r.action, fromState: r.fromState, toState: r.toState, facts };
    return {
      seq: Number(r.seq),
      permits: r.permitIds.filter((id) => numbers.has(id)).map((id) => ({ id, number: numbers.get(id)! })),
      ...base,
      actorName: r.actorName,
      reason: r.reason,
      occurredAt: new Date(r.occurredAt),
      alarm: alarmKindOf(base),
    };
  });
}
