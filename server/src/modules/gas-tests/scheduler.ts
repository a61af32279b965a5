import { QueryTypes } from 'sequelize';
import { dueTimes, timedCheckLabels, type DueTime } from '@shared/permit/due-times';
import { statesFrom } from '@shared/permit/state-machine';
import { isolationCheckStates, liveStates, workUnderWayStates } from '@shared/permit/states';
import { formatInZone, siteDay, siteTimeOfDay } from '@shared/time/zone';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { appendAudit } from '../audit/audit.service';
import { loadTenantSettings } from '../tenants/tenant-settings';
import { notifyChange } from '../isolations/isolation-queries';
import { applyTransition } from '../permits/permits.service';
import { findPermit, type PermitRow } from '../permits/permits.repository';
import { dueFactsFor, resolveOverdue } from './gas-tests.repository';
import { queueAlert } from './alert-mail';
import { markOverdueRechecks } from '../certificates/recheck-scheduler';
import { suspendForStopWork } from './stop-work';

/**
 * Holdpoint's own clock-driven work, safe to run in several server processes at once: each permit
 * is taken with FOR UPDATE SKIP LOCKED (a permit another process holds is left to it), and each
 * overdue occurrence is a row with a unique (permit, kind, due time), whose insertion is what
 * sends the mail (dedupeKey as well), writes the audit event and flags the board.
 *  1. Expires permits whose validity ended ('expire', fired by the system).
 *  2. Marks gas tests, vent and plug checks and fire-watch closing checks overdue.
 *  3. Suspends live hot work whose repeat gas test is overdue by more than the tenant's grace
 *     (`gasTestOverdueGraceMinutes`, none by default): nobody knows the atmosphere at the flame.
 */
export async function runScheduler(deps: AppDeps): Promise<{ expired: number; overdue: number }> {
  // The one owner-run look-up that may list tenants across row-level security (migration 0090).
  const tenants = await deps.sequelize.query<{ id: string }>(`SELECT id FROM hp_tenant_ids() AS id`, { type: QueryTypes.SELECT });
  let expired = 0;
  let overdue = 0;
  for (const { id: tenantId } of tenants) {
    expired += await expirePermits(deps, tenantId);
    overdue += await markOverdue(deps, tenantId);
  }
  return { expired, overdue };
}

// The states the SQL below names, from the state machine and the shared lists.
const states = { expirable: statesFrom('expire'), live: liveStates, underWay: workUnderWayStates, isolationChecks: isolationCheckStates };

async function eachPermit(deps: AppDeps, tenantId: string, ids: string[], lockWhere: string, fn: (permit: PermitRow) => Promise<number>) {
  let done = 0;
  for (const id of ids) {
    try {
      done += await withTenant(deps.sequelize, tenantId, async () => {
        const now = deps.clock.now();
        const locked = await deps.sequelize.query(`SELECT id FROM permits p WHERE tenant_id = :tenantId AND id = :id AND ${lockWhere} FOR UPDATE SKIP LOCKED`, {
          replacements: { tenantId, id, now, ...states },
          type: QueryTypes.SELECT,
        });
        if (!locked.length) return 0;
        return fn((await findPermit(deps.sequelize, tenantId, id))!);
      });
    } catch (err) {
      deps.logger.warn({ err: (err as Error).message, tenantId, permitId: id }, 'scheduler could not process a permit');
    }
  }
  return done;
}

async function expirePermits(deps: AppDeps, tenantId: string): Promise<number> {
  const where = `state IN (:expirable) AND valid_to <= :now`;
  const ids = await withTenant(deps.sequelize, tenantId, () =>
    deps.sequelize.query<{ id: string }>(`SELECT id FROM permits WHERE tenant_id = :tenantId AND ${where} ORDER BY valid_to`, { replacements: { tenantId, now: deps.clock.now(), ...states }, type: QueryTypes.SELECT }),
  );
  return eachPermit(deps, tenantId, ids.map((r) => r.id), where, async (permit) => {
    const { timeZone } = await loadTenantSettings(deps.sequelize, tenantId);
    const end = new Date(permit.validTo);
    await applyTransition(deps, permit, 'expire', { reason: `The validity window ended at ${siteDay(end, timeZone)} ${siteTimeOfDay(end, timeZone)} site time.` }, { system: 'validity ended' });
    return 1;
  });
}

// Live permits (gas tests), permits with isolations signed in place (vents, plugs) and hot-work permits whose fire watch may still be running.
const watched = `(p.state IN (:live) OR p.state IN (:isolationChecks) OR (p.state IN (:underWay) AND 'hot_work' = ANY (p.kinds) AND p.hot_work_ended_at IS NOT NULL))`;

async function markOverdue(deps: AppDeps, tenantId: string): Promise<number> {
  const ids = await withTenant(deps.sequelize, tenantId, async () => {
    // Markers of permits no longer watched are closed: the work stopped or the permit moved on.
    await deps.sequelize.query(
      `UPDATE overdue_alerts a SET resolved_at = :now FROM permits p
       WHERE a.tenant_id = :tenantId AND a.resolved_at IS NULL AND p.tenant_id = a.tenant_id AND p.id = a.permit_id AND NOT ${watched}`,
      { replacements: { tenantId, now: deps.clock.now(), ...states } },
    );
    return deps.sequelize.query<{ id: string }>(`SELECT p.id FROM permits p WHERE p.tenant_id = :tenantId AND ${watched} ORDER BY p.number`, { replacements: { tenantId, ...states }, type: QueryTypes.SELECT });
  });
  return eachPermit(deps, tenantId, ids.map((r) => r.id), watched, async (permit) => {
    const settings = await loadTenantSettings(deps.sequelize, tenantId);
    const now = deps.clock.now();
    let raised = 0;
    const times = dueTimes(await dueFactsFor(deps.sequelize, permit, settings), now);
    for (const t of times) {
      // Only a due time in the past is an occurrence; "due now" with nothing to go on is not.
      if (!t.overdue || !t.dueAt || t.dueAt.getTime() >= now.getTime()) {
        await resolveOverdue(deps.sequelize, tenantId, permit.id, t.kind, now);
        continue;
      }
      if (await raise(deps, permit, t, settings.timeZone, now)) raised++;
    }
    const gas = times.find((t) => t.kind === 'gas_test');
    if (permit.kinds.includes('hot_work') && liveStates.includes(permit.state) && gas?.overdue && gas.dueAt && now.getTime() > gas.dueAt.getTime() + settings.gasTestOverdueGraceMinutes * 60_000) {
      const grace = settings.gasTestOverdueGraceMinutes ? ` and the site's ${settings.gasTestOverdueGraceMinutes} minutes of grace have passed` : '';
      await suspendForStopWork(deps, permit, `Repeat gas test overdue on hot work: it was due at ${formatInZone(gas.dueAt, settings.timeZone)}${grace}. Test the atmosphere before work goes on.`, 'overdue gas test');
    }
    return raised;
  });
}

async function raise(deps: AppDeps, permit: PermitRow, t: DueTime, timeZone: string, now: Date): Promise<boolean> {
  const { tenantId } = permit;
  const dueAt = t.dueAt!;
  const [inserted] = await deps.sequelize.query<{ id: string }>(
    `INSERT INTO overdue_alerts (tenant_id, permit_id, kind, due_at, detected_at) VALUES (:tenantId, :permitId, :kind, :dueAt, :now)
     ON CONFLICT (tenant_id, permit_id, kind, due_at) DO NOTHING RETURNING id`,
    { replacements: { tenantId, permitId: permit.id, kind: t.kind, dueAt, now }, type: QueryTypes.SELECT },
  );
  if (!inserted) return false;
  // An earlier occurrence of the same kind is over: its due time has moved on.
  await deps.sequelize.query(`UPDATE overdue_alerts SET resolved_at = :now WHERE tenant_id = :tenantId AND permit_id = :permitId AND kind = :kind AND resolved_at IS NULL AND id <> :id`, {
    replacements: { now, tenantId, permitId: permit.id, kind: t.kind, id: inserted.id },
  });
  const label = timedCheckLabels[t.kind];
  // "2 Dec 2026, 14:30 CST": the site's clock and calendar with the zone named, never a machine date.
  const when = formatInZone(dueAt, timeZone);
  const audit = await appendAudit(deps.sequelize, {
    tenantId, entityType: 'permit', entityId: permit.id, permitId: permit.id, action: 'check_overdue', actor: null,
    reason: `${label} overdue: it was due at ${when}.`, data: { check: t.kind, dueAt: dueAt.toISOString(), by: 'holdpoint' }, occurredAt: now,
  });
  const advice: Record<DueTime['kind'], string> = {
    gas_test: 'Test the atmosphere now; if it cannot be tested, stop the work.',
    vent: 'Check the vents now: vapour directed away from the work, no pressure building behind the plug.',
    plug: 'Check the plugs now for cracking and shrinkage.',
    fire_watch: 'Record the fire watch closing check: the area inspected and nothing smouldering.',
  };
  await queueAlert(deps.sequelize, permit, {
    key: `overdue:${tenantId}:${permit.id}:${t.kind}:${dueAt.toISOString()}`,
    subject: `${label.toLowerCase()} overdue`,
    lines: [`${label} on permit ${permit.number} (${permit.title}) was due at ${when} and has not been recorded.`, advice[t.kind], `Audit event ${audit.seq}.`],
    publicUrl: deps.config.PUBLIC_URL,
  });
  await notifyChange(deps.sequelize, { tenantId, kind: 'overdue', id: permit.id, check: t.kind, dueAt: dueAt.toISOString() });
  return true;
}

const lastRun = new WeakMap<AppDeps, number>();
const EVERY_MS = 15_000;

/** For the worker loop: runs the scheduler at most every 15 s of real time, whatever the tick rate. */
export async function runSchedulerTick(deps: AppDeps) {
  const last = lastRun.get(deps) ?? 0;
  if (Date.now() - last < EVERY_MS) return;
  lastRun.set(deps, Date.now());
  await runScheduler(deps);
  // Long-term isolations are re-checked at intervals and alerted when overdue, like gas tests.
  await markOverdueRechecks(deps);
}
