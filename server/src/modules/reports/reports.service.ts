import { QueryTypes, type Sequelize } from 'sequelize';
import type { ReportsQuery } from '@shared/schemas/reports.schema';
import type { ExpiringQualificationRow, ReportsOverview, StageTimeRow, SuspensionCauseRow } from '@shared/types/reports';
import { reportStages } from '@shared/types/reports';
import { suspendedByKinds } from '@shared/permit/suspension';
import { stageMilestones, suspendedStates } from '@shared/permit/states';
import { addDays, siteDay } from '@shared/time/zone';
import type { AppDeps } from '../../deps';
import { detached, withTenant } from '../../db/sequelize';
import { authorizeType } from '../../lib/authorize';
import type { CallerContext } from '../../lib/caller';
import { loadTenantSettings } from '../tenants/tenant-settings';
import { isolationsByAge, stateBuckets, statesOverTime, timeliness } from './report-figures';

const DAY_MS = 86_400_000;

/**
 * How long each stage took, over the permits that reached the stage's end in the period: from the
 * first time the permit was sent for approval to its first approval, from that to the first start of
 * work, and from that to its return to service. Median and 90th percentile are PostgreSQL's
 * percentile_cont (linear interpolation). Read from the audit trail's state changes of the permit
 * itself (`audit_events_state_change_idx`, migration 0220): an isolation certificate's "live" on
 * the same permit is not its work starting.
 */
async function stageTimes(sequelize: Sequelize, tenantId: string, since: Date): Promise<StageTimeRow[]> {
  const rows = await sequelize.query<StageTimeRow>(
    `WITH ended AS (
       SELECT DISTINCT permit_id FROM audit_events
       WHERE tenant_id = :tenantId AND to_state IN (:approved, :live, :returned) AND occurred_at >= :since AND permit_id IS NOT NULL AND entity_type = 'permit'),
     marks AS (
       SELECT e.permit_id,
              min(e.occurred_at) FILTER (WHERE e.to_state = :requested) AS requested_at,
              min(e.occurred_at) FILTER (WHERE e.to_state = :approved) AS approved_at,
              min(e.occurred_at) FILTER (WHERE e.to_state = :live) AS live_at,
              min(e.occurred_at) FILTER (WHERE e.to_state = :returned) AS returned_at
       FROM audit_events e JOIN ended USING (permit_id)
       WHERE e.tenant_id = :tenantId AND e.to_state IN (:requested, :approved, :live, :returned) AND e.entity_type = 'permit'
       GROUP BY e.permit_id),
     durations AS (
       SELECT 'request_to_approval' AS stage, extract(epoch FROM approved_at - requested_at) / 3600 AS hours FROM marks WHERE approved_at >= :since AND requested_at <= approved_at
       UNION ALL
       SELECT 'approval_to_live', extract(epoch FROM live_at - approved_at) / 3600 FROM marks WHERE live_at >= :since AND approved_at <= live_at
       UNION ALL
       SELECT 'live_to_return', extract(epoch FROM returned_at - live_at) / 3600 FROM marks WHERE returned_at >= :since AND live_at <= returned_at)
     SELECT stage, count(*)::int AS permits,
            (percentile_cont(0.5) WITHIN GROUP (ORDER BY hours))::float8 AS "medianHours",
            (percentile_cont(0.9) WITHIN GROUP (ORDER BY hours))::float8 AS "p90Hours"
     FROM durations GROUP BY stage`,
    { replacements: { tenantId, since, ...stageMilestones }, type: QueryTypes.SELECT },
  );
  return reportStages.map((stage) => rows.find((r) => r.stage === stage) ?? { stage, permits: 0, medianHours: null, p90Hours: null });
}

/** Suspensions in the period by who stopped the work, told apart as `permits.suspended_by_kind` is (migration 0140). */
async function suspensionsByCause(sequelize: Sequelize, tenantId: string, since: Date): Promise<SuspensionCauseRow[]> {
  const rows = await sequelize.query<SuspensionCauseRow>(
    `SELECT CASE actor_role WHEN 'authoriser' THEN 'authoriser' WHEN 'control_room' THEN 'control_room' WHEN 'contractor_lead' THEN 'lead' ELSE 'system' END AS cause,
            count(*)::int AS suspensions
     FROM audit_events WHERE tenant_id = :tenantId AND to_state IN (:suspended) AND occurred_at >= :since
     GROUP BY 1`,
    { replacements: { tenantId, since, suspended: suspendedStates }, type: QueryTypes.SELECT },
  );
  return suspendedByKinds.map((cause) => rows.find((r) => r.cause === cause) ?? { cause, suspensions: 0 });
}

/** Qualifications that run out on the site's calendar: today to day 30, days 31–60, days 61–90. */
async function qualificationsExpiring(sequelize: Sequelize, tenantId: string, today: string): Promise<ExpiringQualificationRow[]> {
  return sequelize.query<ExpiringQualificationRow>(
    `SELECT kind,
            count(*) FILTER (WHERE expires_on <= CAST(:d30 AS date))::int AS "within30",
            count(*) FILTER (WHERE expires_on > CAST(:d30 AS date) AND expires_on <= CAST(:d60 AS date))::int AS "within60",
            count(*) FILTER (WHERE expires_on > CAST(:d60 AS date))::int AS "within90"
     FROM qualifications
     WHERE tenant_id = :tenantId AND expires_on >= CAST(:today AS date) AND expires_on <= CAST(:d90 AS date)
     GROUP BY kind ORDER BY kind`,
    { replacements: { tenantId, today, d30: addDays(today, 30), d60: addDays(today, 60), d90: addDays(today, 90) }, type: QueryTypes.SELECT },
  );
}

/** Answers kept per process, at most one per tenant and period. */
const MAX_CACHED = 500;
/** The longest an answer is reused, however quiet the data: missed checks and isolation ages move with the clock alone. */
const MAX_AGE_MS = 10 * 60_000;
/**
 * A tenant whose figures took longer than `slowMs` to work out gets its last answer at once, with the time
 * it was made, while the new one is worked out in the background, for at most `staleForMs` after that
 * answer was made (the page says "as of" that time). Small tenants always get figures made for the request.
 */
export const reportTuning = { slowMs: 500, staleForMs: 60 * 60_000 };

interface Kept {
  version: string;
  answer: ReportsOverview<Date>;
  /** How long working it out took. */
  tookMs: number;
}
const cache = new Map<string, Kept>();
/** Figures being worked out, one at a time per tenant and period, so that concurrent requests share one run. */
const running = new Map<string, Promise<Kept>>();

function keep(key: string, kept: Kept) {
  cache.delete(key);
  if (cache.size >= MAX_CACHED) cache.delete(cache.keys().next().value as string);
  cache.set(key, kept);
}

async function workOut(deps: AppDeps, tenantId: string, days: number, version: string): Promise<Kept> {
  const { sequelize, clock } = deps;
  const started = Date.now();
  const answer = await withTenant(sequelize, tenantId, async () => {
    const { timeZone, ventCheckIntervalMinutes, plugCheckIntervalMinutes } = await loadTenantSettings(sequelize, tenantId);
    const now = clock.now();
    const today = siteDay(now, timeZone);
    const since = new Date(now.getTime() - days * DAY_MS);
    return {
      days,
      since,
      timeZone,
      stageTimes: await stageTimes(sequelize, tenantId, since),
      suspensionsByCause: await suspensionsByCause(sequelize, tenantId, since),
      qualificationsExpiring: await qualificationsExpiring(sequelize, tenantId, today),
      statesOverTime: await statesOverTime(sequelize, tenantId, stateBuckets(days, today, timeZone)),
      timeliness: await timeliness(sequelize, tenantId, { since, now, ventMinutes: ventCheckIntervalMinutes, plugMinutes: plugCheckIntervalMinutes }),
      isolationsByAge: await isolationsByAge(sequelize, tenantId, today, timeZone),
      generatedAt: now,
    } satisfies ReportsOverview<Date>;
  });
  return { version, answer, tookMs: Date.now() - started };
}

/** Works the figures out once for all who ask at the same time, and keeps the answer. */
function shared(deps: AppDeps, tenantId: string, days: number, key: string, version: string): Promise<Kept> {
  let run = running.get(key);
  if (!run) {
    run = workOut(deps, tenantId, days, version)
      .then((kept) => {
        keep(key, kept);
        return kept;
      })
      .finally(() => running.delete(key));
    running.set(key, run);
  }
  return run;
}

/**
 * The management figures of the caller's tenant. Every change to tenant data appends to the tenant's
 * audit chain in its own transaction, so the chain head's sequence number is the data version (as for
 * the board): an answer is reused while it and the site day are unchanged, and for at most ten
 * minutes. Some figures move with the clock alone, with no new data: a check not done becomes missed
 * once its due time passes, an isolation grows older, the period's start slides on; the age limit
 * keeps those at most ten minutes behind. A large tenant's figures take seconds to work out: past
 * `reportTuning.slowMs` the last answer is given at once (it carries when it was made) and the new one
 * is worked out in the background, so the page stays quick (`reportTuning`).
 */
export async function reportsOverview(deps: AppDeps, caller: CallerContext, q: ReportsQuery): Promise<ReportsOverview<Date>> {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'read', 'Report', { tenantId }, 'the reports');
  const { sequelize, clock } = deps;
  const days = Number(q.days);
  const key = `${tenantId}|${days}`;
  const version = await withTenant(sequelize, tenantId, async () => {
    const { timeZone } = await loadTenantSettings(sequelize, tenantId);
    const [head] = await sequelize.query<{ seq: string | number }>(`SELECT seq FROM audit_chain_heads WHERE tenant_id = :tenantId`, { replacements: { tenantId }, type: QueryTypes.SELECT });
    return `${head?.seq ?? 0}|${siteDay(clock.now(), timeZone)}`;
  });
  const hit = cache.get(key);
  const age = hit ? clock.now().getTime() - hit.answer.generatedAt.getTime() : -1;
  if (hit && hit.version === version && age >= 0 && age < MAX_AGE_MS) return hit.answer;
  if (hit && hit.tookMs > reportTuning.slowMs && age >= 0 && age < reportTuning.staleForMs) {
    detached(() => {
      shared(deps, tenantId, days, key, version).catch((err: unknown) => deps.logger.warn({ err, tenantId, days }, 'report figures not worked out in the background'));
    });
    return hit.answer;
  }
  return (await shared(deps, tenantId, days, key, version)).answer;
}
