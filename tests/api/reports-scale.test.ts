// Issue 21 part 4, acceptance: every figure of the report page on the scale dataset (a hundredth of it,
// so the file stays within seconds) checked against SQL written here by hand, apart from the service's:
// row by row with correlated look-ups where the service uses window functions and running sums, the
// site's midnights worked out by PostgreSQL's own zone arithmetic where the service uses the zone
// module, and the percentiles interpolated here in TypeScript.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ReportsOverview } from '@shared/types/reports';
import { buildScaleDataset } from '../../scripts/scale/build-dataset';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { users } from '../fixtures/permit-fixtures';

const periods = ['30', '90', '365'] as const;

describe('issue 21 part 4: the report figures on the scale dataset against hand-written SQL', () => {
  let srv: TestServer;
  let authoriser: ApiClient;
  let tenantId: string;
  let zone: string;
  const answers: Record<string, ReportsOverview> = {};

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });

  beforeAll(async () => {
    srv = await startTestServer();
    await buildScaleDataset(srv.databaseUrl, { factor: 0.01 });
    [{ id: tenantId, time_zone: zone }] = await q<{ id: string; time_zone: string }>(`SELECT id, time_zone FROM tenants WHERE slug = 'bramblecote'`);
    // The dataset records no vent, plug or fire-watch checks: give the permits with a vent in place a check
    // every 50 to 81 minutes since it was applied, and two hot-work permits in three a closing check 0, 5, 10
    // or 15 minutes after their watch, so every kind has some on time, some late and some missed.
    await srv.deps.sequelize.query(
      `INSERT INTO permit_checks (tenant_id, permit_id, kind, checked_at, ok, recorded_by)
       SELECT s.tenant_id, s.permit_id, 'vent', s.applied_at + make_interval(mins => n * 50 + (hashtext(s.id::text || n) & 31)), true, s.applied_by
       FROM isolation_steps s CROSS JOIN generate_series(1, 40) AS n
       WHERE s.tenant_id = :tenantId AND s.kind = 'vent' AND s.status IN ('applied', 'verified')
         AND s.applied_at + make_interval(mins => n * 50 + (hashtext(s.id::text || n) & 31)) < now()`,
      { replacements: { tenantId } },
    );
    await srv.deps.sequelize.query(
      `INSERT INTO permit_checks (tenant_id, permit_id, kind, checked_at, ok, recorded_by)
       SELECT p.tenant_id, p.id, 'fire_watch', p.hot_work_ended_at + make_interval(mins => p.fire_watch_minutes + (hashtext(p.number) & 3) * 5), true, p.requester_user_id
       FROM permits p
       WHERE p.tenant_id = :tenantId AND p.hot_work_ended_at IS NOT NULL AND hashtext(p.id::text) % 3 <> 0`,
      { replacements: { tenantId } },
    );
    authoriser = await srv.signIn(users.authoriser);
    for (const days of periods) {
      const res = await authoriser.get(`/api/reports/overview?days=${days}`);
      expect(res.status, JSON.stringify(res.body)).toBe(200);
      answers[days] = res.body as ReportsOverview;
    }
  }, 240_000);
  afterAll(() => srv?.close());

  it('when the scale dataset is read, then the figures are not empty (the comparisons below compare something)', () => {
    const year = answers['365'];
    expect(year.stageTimes.every((s) => s.permits > 0)).toBe(true);
    expect(year.statesOverTime.at(-1)!.counts.closed).toBeGreaterThan(100);
    for (const kind of ['gas_test', 'vent', 'fire_watch']) {
      const row = year.timeliness.find((t) => t.kind === kind)!;
      expect(row.onTime * row.late * row.missed, `${kind}: ${JSON.stringify(row)}`).toBeGreaterThan(0);
    }
    expect(year.isolationsByAge.reduce((n, b) => n + b.total, 0)).toBe(80);
  });

  it('when the states over time are worked out permit by permit at each site midnight, then they are the same', async () => {
    for (const days of periods) {
      const r = answers[days];
      const today = (await q<{ d: string }>(`SELECT to_char(CAST(:now AS timestamptz) AT TIME ZONE :zone, 'YYYY-MM-DD') AS d`, { now: r.generatedAt, zone }))[0].d;
      const step = days === '30' ? 1 : 7;
      const buckets = Math.ceil(Number(days) / step);
      const expectedDays = await q<{ d: string }>(`SELECT to_char(CAST(:today AS date) - (:step * i), 'YYYY-MM-DD') AS d FROM generate_series(:last, 0, -1) AS i`, {
        today, step, last: buckets - 1,
      });
      expect(r.statesOverTime.map((x) => x.day)).toEqual(expectedDays.map((x) => x.d));
      // Only some buckets, to keep the file quick: the first, the last and every fifth.
      for (const [i, row] of r.statesOverTime.entries()) {
        if (i % 5 !== 0 && i !== r.statesOverTime.length - 1) continue;
        const counts = await q<{ state: string; n: number }>(
          `SELECT latest.state, count(*)::int AS n
           FROM (SELECT DISTINCT permit_id FROM audit_events WHERE tenant_id = :tenantId AND entity_type = 'permit') p
           CROSS JOIN LATERAL (
             SELECT e.to_state AS state FROM audit_events e
             WHERE e.tenant_id = :tenantId AND e.permit_id = p.permit_id AND e.entity_type = 'permit' AND e.to_state IS NOT NULL
               AND e.occurred_at < (CAST(:day AS date) + 1)::timestamp AT TIME ZONE :zone
             ORDER BY e.occurred_at DESC, e.seq DESC LIMIT 1) latest
           GROUP BY latest.state`,
          { tenantId, day: row.day, zone },
        );
        expect(row.counts, `${days} days, ${row.day}`).toEqual(Object.fromEntries(counts.map((c) => [c.state, c.n])));
      }
    }
  });

  it('when the stage times, suspensions and expiring qualifications are worked out by hand, then they are the same', async () => {
    // percentile_cont by hand: position (n − 1)·p in the sorted values, linear between neighbours.
    const percentile = (sorted: number[], p: number) => {
      if (!sorted.length) return null;
      const pos = (sorted.length - 1) * p;
      const lo = Math.floor(pos);
      return sorted[lo] + (pos - lo) * ((sorted[Math.min(lo + 1, sorted.length - 1)] ?? sorted[lo]) - sorted[lo]);
    };
    for (const days of periods) {
      const r = answers[days];
      const firsts = await q<{ requested: Date | null; approved: Date | null; live: Date | null; returned: Date | null }>(
        `SELECT (SELECT min(occurred_at) FROM audit_events e WHERE e.tenant_id = :tenantId AND e.permit_id = p.permit_id AND e.entity_type = 'permit' AND e.to_state = 'requested') AS requested,
                (SELECT min(occurred_at) FROM audit_events e WHERE e.tenant_id = :tenantId AND e.permit_id = p.permit_id AND e.entity_type = 'permit' AND e.to_state = 'approved') AS approved,
                (SELECT min(occurred_at) FROM audit_events e WHERE e.tenant_id = :tenantId AND e.permit_id = p.permit_id AND e.entity_type = 'permit' AND e.to_state = 'live') AS live,
                (SELECT min(occurred_at) FROM audit_events e WHERE e.tenant_id = :tenantId AND e.permit_id = p.permit_id AND e.entity_type = 'permit' AND e.to_state = 'returned_to_service') AS returned
         FROM (SELECT DISTINCT permit_id FROM audit_events WHERE tenant_id = :tenantId AND entity_type = 'permit') p`,
        { tenantId },
      );
      const since = new Date(r.since).getTime();
      const hours = (from: Date | null, to: Date | null) => (from && to && +to >= since && +from <= +to ? (+to - +from) / 3_600_000 : null);
      const stages = {
        request_to_approval: firsts.map((f) => hours(f.requested, f.approved)),
        approval_to_live: firsts.map((f) => hours(f.approved, f.live)),
        live_to_return: firsts.map((f) => hours(f.live, f.returned)),
      };
      for (const s of r.stageTimes) {
        const values = stages[s.stage].filter((h): h is number => h !== null).sort((a, b) => a - b);
        expect(s.permits, `${days} days, ${s.stage}`).toBe(values.length);
        expect(s.medianHours ?? 0).toBeCloseTo(percentile(values, 0.5) ?? 0, 6);
        expect(s.p90Hours ?? 0).toBeCloseTo(percentile(values, 0.9) ?? 0, 6);
      }
      const suspensions = await q<{ actor_role: string | null }>(
        `SELECT actor_role FROM audit_events WHERE tenant_id = :tenantId AND to_state = 'suspended' AND occurred_at >= :since`,
        { tenantId, since: new Date(r.since) },
      );
      const cause = (role: string | null) => (role === 'authoriser' ? 'authoriser' : role === 'control_room' ? 'control_room' : role === 'contractor_lead' ? 'lead' : 'system');
      for (const row of r.suspensionsByCause) expect(row.suspensions, `${days} days, ${row.cause}`).toBe(suspensions.filter((x) => cause(x.actor_role) === row.cause).length);
      const expiring = await q<{ kind: string; within30: number; within60: number; within90: number }>(
        `SELECT kind, sum(CASE WHEN left_days BETWEEN 0 AND 30 THEN 1 ELSE 0 END)::int AS within30,
                sum(CASE WHEN left_days BETWEEN 31 AND 60 THEN 1 ELSE 0 END)::int AS within60, sum(CASE WHEN left_days BETWEEN 61 AND 90 THEN 1 ELSE 0 END)::int AS within90
         FROM (SELECT kind, expires_on - CAST(CAST(:now AS timestamptz) AT TIME ZONE :zone AS date) AS left_days FROM qualifications WHERE tenant_id = :tenantId) x
         WHERE left_days BETWEEN 0 AND 90 GROUP BY kind ORDER BY kind`,
        { tenantId, now: r.generatedAt, zone },
      );
      expect(r.qualificationsExpiring).toEqual(expiring);
    }
  });

  it('when gas tests and checks are judged one due time at a time, then on time, late and missed are the same', async () => {
    for (const days of periods) {
      const r = answers[days];
      // Every due time: after each passing gas test; after each vent or plug check, or after a signing in place or
      // a start of work with no check of the kind before it, unless another such start came before the due time;
      // at the end of each fire watch. `done` is the record that answers it (none when a new start came first).
      const rows = await q<{ kind: string; on_time: number; late: number; missed: number }>(
        `WITH due AS (
           SELECT 'gas_test' AS kind, g.permit_id, g.tested_at + p.gas_test_interval_minutes * interval '1 minute' AS due_at,
                  (SELECT min(n.tested_at) FROM gas_tests n WHERE n.tenant_id = g.tenant_id AND n.permit_id = g.permit_id AND n.verdict = 'pass' AND n.tested_at > g.tested_at AND n.tested_at <= :now) AS done_at,
                  ARRAY['live'] AS standing
           FROM gas_tests g JOIN permits p ON p.tenant_id = g.tenant_id AND p.id = g.permit_id
           WHERE g.tenant_id = :tenantId AND g.verdict = 'pass'
           UNION ALL
           SELECT c.kind, c.permit_id, c.checked_at + interval '60 minutes',
                  (SELECT min(n.checked_at) FROM permit_checks n WHERE n.tenant_id = c.tenant_id AND n.permit_id = c.permit_id AND n.kind = c.kind AND n.checked_at > c.checked_at AND n.checked_at <= :now),
                  ARRAY['isolated', 'live', 'suspended']
           FROM permit_checks c WHERE c.tenant_id = :tenantId AND c.kind IN ('vent', 'plug')
           UNION ALL
           SELECT k.kind, e.permit_id, e.occurred_at + interval '60 minutes',
                  (SELECT min(n.checked_at) FROM permit_checks n WHERE n.tenant_id = e.tenant_id AND n.permit_id = e.permit_id AND n.kind = k.kind AND n.checked_at > e.occurred_at AND n.checked_at <= :now
                     AND NOT EXISTS (SELECT 1 FROM audit_events s WHERE s.tenant_id = e.tenant_id AND s.permit_id = e.permit_id AND s.entity_type = 'permit'
                                     AND s.to_state IN ('isolated', 'live') AND s.from_state IS DISTINCT FROM s.to_state AND s.occurred_at > e.occurred_at AND s.occurred_at < n.checked_at)),
                  ARRAY['isolated', 'live', 'suspended']
           FROM audit_events e CROSS JOIN (VALUES ('vent'), ('plug')) k(kind)
           WHERE e.tenant_id = :tenantId AND e.entity_type = 'permit' AND e.to_state IN ('isolated', 'live') AND e.from_state IS DISTINCT FROM e.to_state
             AND NOT EXISTS (SELECT 1 FROM permit_checks c WHERE c.tenant_id = e.tenant_id AND c.permit_id = e.permit_id AND c.kind = k.kind AND c.checked_at <= e.occurred_at)
             AND NOT EXISTS (SELECT 1 FROM audit_events s WHERE s.tenant_id = e.tenant_id AND s.permit_id = e.permit_id AND s.entity_type = 'permit'
                             AND s.to_state IN ('isolated', 'live') AND s.from_state IS DISTINCT FROM s.to_state
                             AND s.occurred_at > e.occurred_at AND s.occurred_at <= e.occurred_at + interval '60 minutes'
                             AND NOT EXISTS (SELECT 1 FROM permit_checks c WHERE c.tenant_id = e.tenant_id AND c.permit_id = e.permit_id AND c.kind = k.kind AND c.checked_at <= s.occurred_at)
                             AND NOT EXISTS (SELECT 1 FROM permit_checks c WHERE c.tenant_id = e.tenant_id AND c.permit_id = e.permit_id AND c.kind = k.kind AND c.checked_at > e.occurred_at AND c.checked_at <= s.occurred_at))
           UNION ALL
           SELECT 'fire_watch', p.id, p.hot_work_ended_at + least(greatest(p.fire_watch_minutes, 30), 480) * interval '1 minute',
                  (SELECT min(c.checked_at) FROM permit_checks c WHERE c.tenant_id = p.tenant_id AND c.permit_id = p.id AND c.kind = 'fire_watch' AND c.ok
                     AND c.checked_at >= p.hot_work_ended_at + least(greatest(p.fire_watch_minutes, 30), 480) * interval '1 minute'),
                  ARRAY['live', 'suspended']
           FROM permits p WHERE p.tenant_id = :tenantId AND 'hot_work' = ANY (p.kinds) AND p.hot_work_ended_at IS NOT NULL),
         fell_due AS (
           SELECT d.* FROM due d
           WHERE d.due_at >= :since AND d.due_at <= :now
             AND (SELECT s.to_state FROM audit_events s WHERE s.tenant_id = :tenantId AND s.permit_id = d.permit_id AND s.entity_type = 'permit' AND s.to_state IS NOT NULL
                    AND s.occurred_at <= d.due_at ORDER BY s.occurred_at DESC, s.seq DESC LIMIT 1) = ANY (d.standing)
             AND (d.kind NOT IN ('vent', 'plug') OR EXISTS (SELECT 1 FROM isolation_steps i WHERE i.tenant_id = :tenantId AND i.permit_id = d.permit_id AND i.kind = d.kind
                    AND i.applied_at <= d.due_at AND coalesce(i.removed_at, 'infinity') > d.due_at)))
         SELECT kind,
                sum(CASE WHEN done_at - due_at < interval '1 minute' THEN 1 ELSE 0 END)::int AS on_time,
                sum(CASE WHEN done_at - due_at >= interval '1 minute' AND NOT EXISTS (
                      SELECT 1 FROM audit_events s WHERE s.tenant_id = :tenantId AND s.permit_id = f.permit_id AND s.entity_type = 'permit' AND s.to_state IS NOT NULL
                        AND s.occurred_at > f.due_at AND s.occurred_at <= f.done_at AND NOT s.to_state = ANY (f.standing)) THEN 1 ELSE 0 END)::int AS late,
                sum(CASE WHEN done_at IS NULL OR (done_at - due_at >= interval '1 minute' AND EXISTS (
                      SELECT 1 FROM audit_events s WHERE s.tenant_id = :tenantId AND s.permit_id = f.permit_id AND s.entity_type = 'permit' AND s.to_state IS NOT NULL
                        AND s.occurred_at > f.due_at AND s.occurred_at <= f.done_at AND NOT s.to_state = ANY (f.standing))) THEN 1 ELSE 0 END)::int AS missed
         FROM fell_due f GROUP BY kind`,
        { tenantId, since: new Date(r.since), now: new Date(r.generatedAt) },
      );
      for (const row of r.timeliness) {
        const mine = rows.find((x) => x.kind === row.kind) ?? { on_time: 0, late: 0, missed: 0 };
        expect(row, `${days} days`).toEqual({ kind: row.kind, onTime: mine.on_time, late: mine.late, missed: mine.missed });
      }
    }
  });

  it('when the isolations in place are aged on the site calendar by PostgreSQL, then the bands are the same', async () => {
    const r = answers['30'];
    const rows = await q<{ age: number; kind: string }>(
      `SELECT (CAST(:now AS timestamptz) AT TIME ZONE :zone)::date - (applied_at AT TIME ZONE :zone)::date AS age, kind
       FROM isolation_steps WHERE tenant_id = :tenantId AND status IN ('applied', 'verified')`,
      { tenantId, now: r.generatedAt, zone },
    );
    const band = (age: number) => (age < 1 ? 'under_1_day' : age <= 7 ? 'days_1_to_7' : age <= 30 ? 'days_8_to_30' : age <= 90 ? 'days_31_to_90' : 'over_90_days');
    for (const b of r.isolationsByAge) {
      const mine = rows.filter((x) => band(x.age) === b.band);
      const byKind: Record<string, number> = {};
      for (const x of mine) byKind[x.kind] = (byKind[x.kind] ?? 0) + 1;
      expect(b, b.band).toEqual({ band: b.band, byKind, total: mine.length });
    }
  });
});
