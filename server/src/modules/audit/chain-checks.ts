import { QueryTypes } from 'sequelize';
import type { AuditChainCheck } from '@shared/types/audit';
import type { AppDeps } from '../../deps';
import { whenCommitted, withTenant } from '../../db/sequelize';
import { authorizeType } from '../../lib/authorize';
import type { CallerContext } from '../../lib/caller';
import { verifyChain } from './audit.service';
import { checkAgainstCheckpoints } from './checkpoints';

interface CheckRow {
  id: string;
  status: AuditChainCheck['status'];
  checked: number;
  total: number;
  ok: boolean | null;
  last_seq: number | null;
  breaks: AuditChainCheck['breaks'];
  started_at: Date;
  finished_at: Date | null;
}

const COLUMNS = 'id, status, checked, total, ok, last_seq, breaks, started_at, finished_at';
/** A check still "running" after this long lost its process (a restart); a new one may start. */
const STALE_MS = 15 * 60_000;

const toCheck = (r: CheckRow): AuditChainCheck<Date> => ({
  id: r.id,
  status: r.status,
  checked: Number(r.checked),
  total: Number(r.total),
  ok: r.ok,
  lastSeq: r.last_seq === null ? null : Number(r.last_seq),
  breaks: r.breaks,
  startedAt: r.started_at,
  finishedAt: r.finished_at,
});

/**
 * Progress is written on a connection of its own, in its own short transactions, so the page that
 * polls sees it while the check's long read (one snapshot) is still open.
 */
async function record(deps: AppDeps, tenantId: string, id: string, sql: string, values: unknown[]) {
  const client = await deps.pgPool.connect();
  try {
    await client.query('BEGIN');
    await client.query(`SELECT set_config('app.tenant_id', $1, true)`, [tenantId]);
    await client.query(sql, [id, tenantId, ...values]);
    await client.query('COMMIT');
  } catch (err) {
    await client.query('ROLLBACK').catch(() => undefined);
    throw err;
  } finally {
    client.release();
  }
}

async function runCheck(deps: AppDeps, tenantId: string, id: string) {
  try {
    let reached = 0;
    const report = await withTenant(deps.sequelize, tenantId, async () => {
      const chain = await verifyChain(deps.sequelize, tenantId, 5_000, async (checked, until) => {
        reached = until;
        await record(deps, tenantId, id, `UPDATE audit_chain_checks SET checked = $3, total = $4 WHERE id = $1 AND tenant_id = $2`, [checked, until]);
      });
      // In the same snapshot: the chain must still hold every head that was signed.
      const against = await checkAgainstCheckpoints(deps, tenantId);
      const breaks = [...chain.breaks, ...against];
      return { ...chain, ok: !breaks.length, breaks };
    });
    await record(
      deps,
      tenantId,
      id,
      `UPDATE audit_chain_checks SET status = 'done', checked = $3, total = GREATEST(total, $3), ok = $4, last_seq = $5, breaks = $6::jsonb, finished_at = $7 WHERE id = $1 AND tenant_id = $2`,
      [report.events, report.ok, reached, JSON.stringify(report.breaks), deps.clock.now()],
    );
  } catch (err) {
    deps.logger.warn({ err: (err as Error).message, tenantId }, 'audit chain check failed');
    await record(deps, tenantId, id, `UPDATE audit_chain_checks SET status = 'failed', finished_at = $3 WHERE id = $1 AND tenant_id = $2`, [deps.clock.now()]).catch(() => undefined);
  }
}

/**
 * Starts a check of the caller's tenant's chain in the background and answers at once; the page polls
 * it. A check already running for the tenant is answered instead of starting a second one.
 */
export async function startChainCheck(deps: AppDeps, caller: CallerContext): Promise<AuditChainCheck<Date>> {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'verify_chain', 'AuditEvent', { tenantId }, 'the audit trail');
  const now = deps.clock.now();
  const { row, started } = await withTenant(deps.sequelize, tenantId, async () => {
    // One check at a time per tenant, across server processes.
    await deps.sequelize.query(`SELECT pg_advisory_xact_lock(hashtext('audit-chain-check:' || :tenantId))`, { replacements: { tenantId } });
    const [running] = await deps.sequelize.query<CheckRow>(
      `SELECT ${COLUMNS} FROM audit_chain_checks WHERE tenant_id = :tenantId AND status = 'running' AND started_at > :since ORDER BY n DESC LIMIT 1`,
      { replacements: { tenantId, since: new Date(now.getTime() - STALE_MS) }, type: QueryTypes.SELECT },
    );
    if (running) return { row: running, started: false };
    const [created] = await deps.sequelize.query<CheckRow>(
      `INSERT INTO audit_chain_checks (tenant_id, started_by, started_at) VALUES (:tenantId, :userId, :now) RETURNING ${COLUMNS}`,
      { replacements: { tenantId, userId: caller.actor.userId, now }, type: QueryTypes.SELECT },
    );
    return { row: created, started: true };
  });
  if (started) whenCommitted(() => void runCheck(deps, tenantId, row.id));
  return toCheck(row);
}

/** The tenant's latest chain check (one runs at a time, so the page polls this one). */
export async function getChainCheck(deps: AppDeps, caller: CallerContext): Promise<AuditChainCheck<Date> | null> {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'verify_chain', 'AuditEvent', { tenantId }, 'the audit trail');
  const rows = await withTenant(deps.sequelize, tenantId, () =>
    deps.sequelize.query<CheckRow>(
      `SELECT ${COLUMNS} FROM audit_chain_checks WHERE tenant_id = :tenantId ORDER BY n DESC LIMIT 1`,
      { replacements: { tenantId }, type: QueryTypes.SELECT },
    ),
  );
  return rows.length ? toCheck(rows[0]) : null;
}
