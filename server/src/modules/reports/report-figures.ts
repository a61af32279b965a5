import { QueryTypes, type Sequelize } from 'sequelize';
import type { IsolationAgeBand, IsolationAgeRow, StatesOverTimeRow, TimelinessKind, TimelinessRow } from '@shared/types/reports';
import { isolationAgeBands, timelinessKinds } from '@shared/types/reports';
import type { PermitState } from '@shared/permit/states';
import { isolationCheckStates, liveStates, permitStates, workUnderWayStates } from '@shared/permit/states';
import { FIRE_WATCH_MAX_MINUTES, FIRE_WATCH_MIN_MINUTES } from '@shared/calc/fire-watch';
import { inPlaceStatuses } from '@shared/isolations/step-rules';
import type { StepKind } from '@shared/isolations/step-kinds';
import { addDays, endOfSiteDay, startOfSiteDay } from '@shared/time/zone';

/** The longest interval a repeat gas test, vent or plug check may have (the schemas' limit): older records cannot fall due in the period. */
const LONGEST_INTERVAL_MINUTES = 480;
/** Entering these, a permit's vent and plug checks start to fall due (signed isolated; work started or resumed): the due-time rules' `isolatedSince` and `liveSince`. */
const checkStartStates: readonly PermitState[] = ['isolated', ...liveStates];

/**
 * The buckets of "permits by state over time", oldest first: each site day of a 30-day period, each
 * site week (seven site days ending on the bucket's day) of a longer one, the last ending today. A
 * bucket ends at the site's midnight after its last day, worked out by the zone module.
 */
export function stateBuckets(days: number, today: string, timeZone: string): { day: string; end: Date }[] {
  const step = days <= 30 ? 1 : 7;
  const count = Math.ceil(days / step);
  return Array.from({ length: count }, (_, i) => addDays(today, -(count - 1 - i) * step)).map((day) => ({ day, end: endOfSiteDay(day, timeZone) }));
}

/**
 * How many of the tenant's permits stood in each state at the end of each bucket: today's count of
 * permits in each state (`permits.state`, written in the same transaction as each state change and
 * its audit event), less what the state changes after each bucket's end did. A permit stands in the
 * state of its last state change (`audit_events` of the permit with a `to_state`, by time then
 * sequence); each change adds one to its state and takes one from the permit's state before it, so
 * a permit created after a bucket's end is not in that bucket. Only the permits that changed since
 * the first bucket's end are read change by change (the permit state index of migration 0230, in
 * permit and time order), not the tenant's whole history. Another entity's state (an isolation
 * certificate issued "live") is not the permit's.
 */
export async function statesOverTime(sequelize: Sequelize, tenantId: string, buckets: { day: string; end: Date }[]): Promise<StatesOverTimeRow[]> {
  const rows = await sequelize.query<{ b: number; counts: Partial<Record<PermitState, number>> | null }>(
    `WITH touched AS (
       SELECT DISTINCT permit_id FROM audit_events
       WHERE tenant_id = :tenantId AND to_state IN (:states) AND occurred_at >= :firstEnd AND permit_id IS NOT NULL),
     changes AS (
       SELECT occurred_at, to_state, lag(to_state) OVER (PARTITION BY permit_id ORDER BY occurred_at, seq) AS left_state
       FROM audit_events
       WHERE tenant_id = :tenantId AND entity_type = 'permit' AND to_state IS NOT NULL AND permit_id = ANY (ARRAY(SELECT permit_id FROM touched))),
     undone AS (
       -- A change at or after the end of bucket k is taken back from buckets 1 to k.
       SELECT width_bucket(c.occurred_at, CAST(ARRAY[:ends] AS timestamptz[])) AS b, m.state, sum(m.delta) AS delta
       FROM changes c CROSS JOIN LATERAL (VALUES (c.to_state, 1), (c.left_state, -1)) AS m(state, delta)
       WHERE c.occurred_at >= :firstEnd AND m.state IS NOT NULL
       GROUP BY 1, 2),
     today AS (SELECT state, count(*) AS n FROM permits WHERE tenant_id = :tenantId GROUP BY state),
     standing AS (
       SELECT g.b, s.state,
              coalesce((SELECT t.n FROM today t WHERE t.state = s.state), 0) - coalesce((SELECT sum(u.delta) FROM undone u WHERE u.state = s.state AND u.b >= g.b), 0) AS n
       FROM generate_series(1, :buckets) AS g(b) CROSS JOIN (SELECT state FROM today UNION SELECT state FROM undone) s)
     SELECT b, jsonb_object_agg(state, n::int) FILTER (WHERE n > 0) AS counts FROM standing GROUP BY b`,
    {
      replacements: { tenantId, states: permitStates, ends: buckets.map((x) => x.end), firstEnd: buckets[0].end, buckets: buckets.length },
      type: QueryTypes.SELECT,
    },
  );
  const byBucket = new Map(rows.map((r) => [Number(r.b), r.counts ?? {}]));
  return buckets.map((x, i) => ({ day: x.day, counts: byBucket.get(i + 1) ?? {} }));
}

/**
 * Repeat gas tests and vent, plug and fire-watch checks whose due time fell in the period, the due
 * times worked out from the records as the due-time rules (`shared/permit/due-times.ts`) and the
 * overdue rounds do, with today's intervals (the permit's gas-test interval, the tenant's vent and
 * plug check intervals):
 * - gas test: due `gas_test_interval_minutes` after each passing test (any place), while the permit
 *   is live;
 * - vent and plug: due the tenant's interval after each check of that kind, or, before the permit's
 *   first check of that kind, after the isolations were signed in place or work (re)started (a later
 *   start before the due time moves it: the earlier one never fell due), while the isolations stand
 *   signed in place and a step of that kind is in place (applied and not removed at the due time);
 * - fire watch: the closing check is due when the watch may end (`hot_work_ended_at` plus the
 *   permit's watch, held within 30–480 min as `fireWatchEnd` does) while work is under way; only a
 *   clear check at or after that time answers it.
 * The permit's state at a moment is that of its last state change at or before it. An occurrence is
 * on time when the next record (for the periodic kinds, the next one before any new start) came by
 * its due time, to the minute (times are entered to the minute); late when it came after, the work
 * standing all the while; missed when none came while the work stood, including one still not done
 * now (so the figure depends on the clock, not only on the data).
 */
export async function timeliness(sequelize: Sequelize, tenantId: string, q: { since: Date; now: Date; ventMinutes: number; plugMinutes: number }): Promise<TimelinessRow[]> {
  const rows = await sequelize.query<TimelinessRow>(
    `WITH gas_chain AS (
       -- In the order of gas_tests_last_pass_idx (permit, newest first): the next passing test is the row before.
       SELECT 'gas_test' AS kind, g.permit_id, g.tested_at AS at, lag(g.tested_at) OVER (PARTITION BY g.permit_id ORDER BY g.tested_at DESC) AS next_at, true AS next_is_record
       FROM gas_tests g
       WHERE g.tenant_id = :tenantId AND g.verdict = 'pass' AND g.tested_at >= :earliest AND g.tested_at <= :now),
     check_anchors AS (
       SELECT c.kind, c.permit_id, c.checked_at AS at, true AS is_record
       FROM permit_checks c
       WHERE c.tenant_id = :tenantId AND c.kind IN ('vent', 'plug') AND c.checked_at >= :earliest AND c.checked_at <= :now
       UNION ALL
       -- From audit_events_state_change_idx alone (migration 0220). No transition leads from a state into itself here; an
       -- isolation certificate's "live" is written with the permit's "isolated", at the same moment, which it supersedes.
       SELECT k.kind, e.permit_id, e.occurred_at, false
       FROM audit_events e CROSS JOIN (VALUES ('vent'), ('plug')) AS k(kind)
       WHERE e.tenant_id = :tenantId AND e.to_state IN (:starts) AND e.occurred_at >= :earliest AND e.occurred_at <= :now
         AND NOT EXISTS (SELECT 1 FROM permit_checks c WHERE c.tenant_id = e.tenant_id AND c.permit_id = e.permit_id AND c.kind = k.kind AND c.checked_at <= e.occurred_at)),
     intervals AS (
       SELECT p.id AS permit_id, p.gas_test_interval_minutes FROM permits p
       WHERE p.tenant_id = :tenantId AND p.id = ANY (ARRAY(SELECT DISTINCT permit_id FROM gas_chain))),
     periodic AS (
       SELECT c.kind, c.permit_id, c.at + make_interval(mins => i.gas_test_interval_minutes) AS due_at, c.next_at, c.next_is_record
       FROM gas_chain c JOIN intervals i ON i.permit_id = c.permit_id
       UNION ALL
       SELECT kind, permit_id, at + make_interval(mins => CASE kind WHEN 'vent' THEN :ventMinutes ELSE :plugMinutes END), lead(at) OVER w, lead(is_record) OVER w
       FROM check_anchors WINDOW w AS (PARTITION BY kind, permit_id ORDER BY at, is_record)),
     occurrences AS MATERIALIZED (
       SELECT o.kind, o.permit_id, o.due_at, CASE WHEN o.next_is_record THEN o.next_at END AS done_at
       FROM periodic o
       WHERE o.due_at >= :since AND o.due_at <= :now
         AND (o.next_at IS NULL OR o.next_is_record OR o.next_at > o.due_at)
         AND (o.kind = 'gas_test' OR EXISTS (
           SELECT 1 FROM isolation_steps s
           WHERE s.tenant_id = :tenantId AND s.permit_id = o.permit_id AND s.kind = o.kind AND s.applied_at <= o.due_at AND (s.removed_at IS NULL OR s.removed_at > o.due_at)))
       UNION ALL
       SELECT 'fire_watch', p.id, w.due_at,
              (SELECT min(f.checked_at) FROM permit_checks f WHERE f.tenant_id = p.tenant_id AND f.permit_id = p.id AND f.kind = 'fire_watch' AND f.ok AND f.checked_at >= w.due_at)
       FROM permits p
       CROSS JOIN LATERAL (SELECT p.hot_work_ended_at + make_interval(mins => least(greatest(p.fire_watch_minutes, :fireMin), :fireMax)) AS due_at) w
       WHERE p.tenant_id = :tenantId AND p.hot_work_ended_at IS NOT NULL AND p.hot_work_ended_at >= :earliest AND p.hot_work_ended_at <= :now
         AND 'hot_work' = ANY (p.kinds) AND w.due_at >= :since AND w.due_at <= :now),
     changes AS (
       SELECT permit_id, occurred_at, seq, to_state, lag(to_state) OVER (PARTITION BY permit_id ORDER BY occurred_at, seq) AS before
       FROM audit_events
       WHERE tenant_id = :tenantId AND entity_type = 'permit' AND to_state IS NOT NULL AND permit_id = ANY (ARRAY(SELECT DISTINCT permit_id FROM occurrences))),
     spans AS (
       -- The state each permit concerned stood in, from one change of state to the next (a repeated state is no change).
       SELECT permit_id, to_state AS state, occurred_at AS from_at, lead(occurred_at) OVER (PARTITION BY permit_id ORDER BY occurred_at, seq) AS to_at
       FROM changes WHERE before IS DISTINCT FROM to_state),
     judged AS (
       SELECT o.kind,
              CASE WHEN o.done_at < o.due_at + interval '1 minute' THEN 'on_time'
                   WHEN o.done_at IS NULL THEN 'missed'
                   -- Live is the only state a gas test falls due in, so the span it fell due in is the whole time the work stood.
                   WHEN o.kind = 'gas_test' THEN CASE WHEN s.to_at IS NULL OR o.done_at < s.to_at THEN 'late' ELSE 'missed' END
                   WHEN NOT EXISTS (
                     SELECT 1 FROM audit_events e
                     WHERE e.tenant_id = :tenantId AND e.entity_type = 'permit' AND e.to_state IS NOT NULL AND e.permit_id = o.permit_id
                       AND e.occurred_at > o.due_at AND e.occurred_at <= o.done_at
                       AND NOT (e.to_state = ANY (CASE o.kind WHEN 'fire_watch' THEN ARRAY[:underWay] ELSE ARRAY[:isolationChecks] END))) THEN 'late'
                   ELSE 'missed' END AS outcome
       FROM occurrences o
       JOIN spans s ON s.permit_id = o.permit_id AND s.from_at <= o.due_at AND (s.to_at IS NULL OR s.to_at > o.due_at)
       WHERE CASE o.kind WHEN 'gas_test' THEN s.state IN (:live) WHEN 'fire_watch' THEN s.state IN (:underWay) ELSE s.state IN (:isolationChecks) END)
     SELECT kind, count(*) FILTER (WHERE outcome = 'on_time')::int AS "onTime", count(*) FILTER (WHERE outcome = 'late')::int AS late,
            count(*) FILTER (WHERE outcome = 'missed')::int AS missed
     FROM judged GROUP BY kind`,
    {
      replacements: {
        tenantId,
        since: q.since,
        now: q.now,
        earliest: new Date(q.since.getTime() - LONGEST_INTERVAL_MINUTES * 60_000),
        ventMinutes: q.ventMinutes,
        plugMinutes: q.plugMinutes,
        starts: checkStartStates,
        live: liveStates,
        underWay: workUnderWayStates,
        isolationChecks: isolationCheckStates,
        fireMin: FIRE_WATCH_MIN_MINUTES,
        fireMax: FIRE_WATCH_MAX_MINUTES,
      },
      type: QueryTypes.SELECT,
    },
  );
  return timelinessKinds.map((kind: TimelinessKind) => rows.find((r) => r.kind === kind) ?? { kind, onTime: 0, late: 0, missed: 0 });
}

/**
 * Isolations in place now (steps applied or verified, as the board counts them, whatever the
 * permit's state) by the kind of step and by their age in site days: today's date on the site's
 * calendar less the site day they were applied (0: under a day, 1–7, 8–30, 31–90, over 90). The
 * bands' edges are the site's midnights, worked out by the zone module.
 */
export async function isolationsByAge(sequelize: Sequelize, tenantId: string, today: string, timeZone: string): Promise<IsolationAgeRow[]> {
  const edge = (daysAgo: number) => startOfSiteDay(addDays(today, -daysAgo), timeZone);
  const rows = await sequelize.query<{ band: IsolationAgeBand; kind: StepKind; n: number }>(
    `SELECT CASE WHEN applied_at >= :d0 THEN 'under_1_day' WHEN applied_at >= :d7 THEN 'days_1_to_7' WHEN applied_at >= :d30 THEN 'days_8_to_30'
                 WHEN applied_at >= :d90 THEN 'days_31_to_90' ELSE 'over_90_days' END AS band,
            kind, count(*)::int AS n
     FROM isolation_steps
     WHERE tenant_id = :tenantId AND status IN (:inPlace)
     GROUP BY 1, 2`,
    { replacements: { tenantId, inPlace: inPlaceStatuses, d0: edge(0), d7: edge(7), d30: edge(30), d90: edge(90) }, type: QueryTypes.SELECT },
  );
  return isolationAgeBands.map((band) => {
    const mine = rows.filter((r) => r.band === band);
    return { band, byKind: Object.fromEntries(mine.map((r) => [r.kind, r.n])), total: mine.reduce((sum, r) => sum + r.n, 0) };
  });
}
