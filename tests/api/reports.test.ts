// The numbers for management (issue 21, part 4): figures computed by PostgreSQL from rows this test
// writes, checked against the same figures worked out by hand below.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ReportsOverview } from '@shared/types/reports';
import { addDays, siteDay, startOfSiteDay } from '@shared/time/zone';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, users } from '../fixtures/permit-fixtures';
import type { Ids } from '../fixtures/permit-journey';
import { reportTuning } from '../../server/src/modules/reports/reports.service';

const HOUR = 3_600_000;
const DAY = 24 * HOUR;

describe('issue 21 part 4: the numbers for management', () => {
  let srv: TestServer;
  let ids: Ids;
  let authoriser: ApiClient;
  let now: Date;
  let seq = 1_000_000;
  let otherTenantId: string;

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  /** One state change in the audit trail, written as the owner (the chain head moves only where the test says so). */
  const event = (tenantId: string, permitId: string, toState: string, at: Date, actorRole: string | null = 'authoriser') =>
    srv.deps.sequelize.query(
      `INSERT INTO audit_events (tenant_id, seq, entity_type, entity_id, permit_id, action, to_state, actor_role, occurred_at, prev_hash, hash)
       VALUES (:tenantId, :seq, 'permit', :permitId, :permitId, 'transition', :toState, :actorRole, :at, 'test', 'test')`,
      { replacements: { tenantId, seq: seq++, permitId, toState, actorRole, at } },
    );
  const ago = (hours: number) => new Date(now.getTime() - hours * HOUR);
  const overview = async (client: ApiClient, days = '30') => {
    const res = await client.get(`/api/reports/overview?days=${days}`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    return res.body as unknown as ReportsOverview;
  };
  const uuid = async () => (await q<{ id: string }>(`SELECT gen_random_uuid() AS id`))[0].id;

  beforeAll(async () => {
    srv = await startTestServer();
    ids = await demoIds(srv);
    [{ id: otherTenantId }] = await q<{ id: string }>(`SELECT id FROM tenants WHERE slug = 'harlowridge'`);
    // Ten years on, every demo event is outside the 30-day period and every demo qualification has run out.
    now = new Date(srv.clock.now().getTime() + 3650 * DAY);
    srv.clock.set(now);
    authoriser = await srv.signIn(users.authoriser);

    // Sent for approval → approved: 1, 2, 3, 4 and 10 hours.
    const live: string[] = [];
    for (const hours of [1, 2, 3, 4, 10]) {
      const id = await uuid();
      await event(ids.tenantId, id, 'requested', ago(200 + hours));
      await event(ids.tenantId, id, 'approved', ago(200));
      live.push(id);
    }
    // Approved → work started: 2, 4, 6 and 8 hours (four of the five above).
    for (const [i, hours] of [2, 4, 6, 8].entries()) await event(ids.tenantId, live[i], 'live', ago(200 - hours));
    // An isolation certificate issued on the first permit an hour before its work started is the certificate
    // going live, not the work: approval to work start stays 2 hours.
    await srv.deps.sequelize.query(
      `INSERT INTO audit_events (tenant_id, seq, entity_type, entity_id, permit_id, action, to_state, actor_role, occurred_at, prev_hash, hash)
       VALUES (:tenantId, :seq, 'isolation_certificate', gen_random_uuid(), :permitId, 'certificate_issued', 'live', 'authoriser', :at, 'test', 'test')`,
      { replacements: { tenantId: ids.tenantId, seq: seq++, permitId: live[0], at: ago(199) } },
    );
    // Work started → returned to service: 5 hours (the first).
    await event(ids.tenantId, live[0], 'returned_to_service', ago(200 - 2 - 5));
    // Approved 35 days ago: outside the period, so not counted, whenever it was sent.
    const old = await uuid();
    await event(ids.tenantId, old, 'requested', ago(40 * 24));
    await event(ids.tenantId, old, 'approved', ago(35 * 24));
    // Suspensions: two by the control room, one by the lead, one by Holdpoint (no person), one by an authoriser 40 days ago.
    await event(ids.tenantId, live[1], 'suspended', ago(50), 'control_room');
    await event(ids.tenantId, live[2], 'suspended', ago(40), 'control_room');
    await event(ids.tenantId, live[3], 'suspended', ago(30), 'contractor_lead');
    await event(ids.tenantId, live[1], 'suspended', ago(20), null);
    await event(ids.tenantId, live[2], 'suspended', ago(40 * 24), 'authoriser');
    // The other tenant: three suspensions and a one-hour approval that must not reach these figures.
    const theirs = await uuid();
    await event(otherTenantId, theirs, 'requested', ago(11));
    await event(otherTenantId, theirs, 'approved', ago(10));
    for (const h of [9, 8, 7]) await event(otherTenantId, theirs, 'suspended', ago(h), 'control_room');

    // Qualifications by site calendar day: today, day 30, day 31, day 90 count; day 91 and yesterday do not.
    const [{ time_zone: zone }] = await q<{ time_zone: string }>(`SELECT time_zone FROM tenants WHERE id = :t`, { t: ids.tenantId });
    const today = siteDay(now, zone);
    const [lead] = await q<{ id: string }>(`SELECT id FROM users WHERE email = :e`, { e: users.lead });
    for (const offset of [0, 30, 31, 90, 91, -1]) {
      await srv.deps.sequelize.query(
        `INSERT INTO qualifications (tenant_id, user_id, kind, issued_on, expires_on) VALUES (:t, :u, 'gas_tester', CAST(:issued AS date), CAST(:expires AS date))`,
        { replacements: { t: ids.tenantId, u: lead.id, issued: addDays(today, -400), expires: addDays(today, offset) } },
      );
    }
    // The demo's own qualifications have all run out by then: only the ones above can count.
    const [{ demoLatest }] = await q<{ demoLatest: string }>(`SELECT max(expires_on)::text AS "demoLatest" FROM qualifications WHERE tenant_id = :t AND issued_on <> CAST(:d AS date)`, {
      t: ids.tenantId,
      d: addDays(today, -400),
    });
    expect(demoLatest < today).toBe(true);
  }, 120_000);
  afterAll(async () => {
    await srv?.close();
  });

  it('when stage times are asked for, then median and 90th percentile are those of PostgreSQL percentile_cont, worked out by hand; finding 21.4f: when an isolation certificate goes live, then that is not the work starting', async () => {
    const r = await overview(authoriser);
    // percentile_cont(p) over n sorted values takes position (n−1)·p, interpolating linearly between neighbours.
    // [1, 2, 3, 4, 10]: median at 2 → 3; p90 at 3.6 → 4 + 0.6·(10 − 4) = 7.6.
    // [2, 4, 6, 8]: median at 1.5 → 4 + 0.5·2 = 5; p90 at 2.7 → 6 + 0.7·2 = 7.4.
    // [5]: both 5.
    const byStage = Object.fromEntries(r.stageTimes.map((s) => [s.stage, s]));
    expect(byStage.request_to_approval.permits).toBe(5);
    expect(byStage.request_to_approval.medianHours).toBeCloseTo(3, 9);
    expect(byStage.request_to_approval.p90Hours).toBeCloseTo(7.6, 9);
    expect(byStage.approval_to_live).toMatchObject({ permits: 4 });
    expect(byStage.approval_to_live.medianHours).toBeCloseTo(5, 9);
    expect(byStage.approval_to_live.p90Hours).toBeCloseTo(7.4, 9);
    expect(byStage.live_to_return).toMatchObject({ permits: 1, medianHours: 5, p90Hours: 5 });
  });

  it('when suspensions are counted, then each cause counts its own in the period and none of the other tenant', async () => {
    const r = await overview(authoriser);
    expect(Object.fromEntries(r.suspensionsByCause.map((s) => [s.cause, s.suspensions]))).toEqual({ lead: 1, authoriser: 0, control_room: 2, system: 1 });
    // Over a year the authoriser's suspension 40 days ago counts too.
    const year = await overview(authoriser, '365');
    expect(year.suspensionsByCause.find((s) => s.cause === 'authoriser')?.suspensions).toBe(1);
  });

  it('when qualifications expire, then they are counted in 30, 60 and 90 day bands of the site calendar', async () => {
    const r = await overview(authoriser);
    expect(r.qualificationsExpiring).toEqual([{ kind: 'gas_tester', within30: 2, within60: 1, within90: 1 }]);
  });

  it("when the other tenant reads its figures, then this tenant's rows are not in them", async () => {
    const outsider = await srv.signIn(users.otherTenant);
    const r = await overview(outsider);
    expect(r.stageTimes.find((s) => s.stage === 'request_to_approval')).toMatchObject({ permits: 1, medianHours: 1, p90Hours: 1 });
    expect(r.suspensionsByCause.find((s) => s.cause === 'control_room')?.suspensions).toBe(3);
    expect(r.qualificationsExpiring).toEqual([]);
  });

  it('when nothing has changed, then the answer is reused; when the audit chain moves, then it is worked out again', async () => {
    const first = await overview(authoriser);
    // Written without moving the chain head: the data version is the same, so the stored answer comes back.
    await event(ids.tenantId, await uuid(), 'suspended', ago(1), 'contractor_lead');
    const reused = await overview(authoriser);
    expect(reused.generatedAt).toBe(first.generatedAt);
    expect(reused.suspensionsByCause.find((s) => s.cause === 'lead')?.suspensions).toBe(1);
    // Every change made through Holdpoint moves the chain head in its own transaction.
    await srv.deps.sequelize.query(
      `INSERT INTO audit_chain_heads (tenant_id, seq) VALUES (:t, 1) ON CONFLICT (tenant_id) DO UPDATE SET seq = audit_chain_heads.seq + 1`,
      { replacements: { t: ids.tenantId } },
    );
    srv.clock.set(new Date(now.getTime() + 1000));
    const fresh = await overview(authoriser);
    expect(fresh.suspensionsByCause.find((s) => s.cause === 'lead')?.suspensions).toBe(2);
  });

  it('finding 21.4g: when the figures took long to work out and the data changes, then the last answer comes at once with its time and the new one follows from the background', async () => {
    const bumpHead = () =>
      srv.deps.sequelize.query(`INSERT INTO audit_chain_heads (tenant_id, seq) VALUES (:t, 1) ON CONFLICT (tenant_id) DO UPDATE SET seq = audit_chain_heads.seq + 1`, { replacements: { t: ids.tenantId } });
    const before = { ...reportTuning };
    try {
      // Every answer counts as slow here: the scale dataset's 365 days take seconds.
      reportTuning.slowMs = -1;
      const tick = () => srv.clock.set(new Date(srv.clock.now().getTime() + 1000));
      /** Asks until the answer was made at the clock's present time (an older one may come first, as below). */
      const current = async () => {
        const at = srv.clock.now().toISOString();
        let r = await overview(authoriser, '365');
        for (const deadline = Date.now() + 10_000; r.generatedAt !== at && Date.now() < deadline; r = await overview(authoriser, '365')) await new Promise((ok) => setTimeout(ok, 100));
        expect(r.generatedAt).toBe(at);
        return r;
      };
      await bumpHead();
      tick();
      const first = await current();
      const suspensions = first.suspensionsByCause.find((s) => s.cause === 'lead')!.suspensions;
      await event(ids.tenantId, await uuid(), 'suspended', ago(2), 'contractor_lead');
      await bumpHead();
      tick();
      // The data moved: the last answer comes at once, as it was, with the time it was made …
      const stale = await overview(authoriser, '365');
      expect(stale.generatedAt).toBe(first.generatedAt);
      expect(stale.suspensionsByCause.find((s) => s.cause === 'lead')!.suspensions).toBe(suspensions);
      // … and the new one, worked out in the background meanwhile, comes next.
      const fresh = await current();
      expect(fresh.suspensionsByCause.find((s) => s.cause === 'lead')!.suspensions).toBe(suspensions + 1);
      // Past the time an old answer may stand in, the request waits for new figures.
      reportTuning.staleForMs = 0;
      await event(ids.tenantId, await uuid(), 'suspended', ago(2), 'contractor_lead');
      await bumpHead();
      const waited = await overview(authoriser, '365');
      expect(waited.suspensionsByCause.find((s) => s.cause === 'lead')!.suspensions).toBe(suspensions + 2);
    } finally {
      Object.assign(reportTuning, before);
    }
  });

  it('when the period is not one offered or the query names an unknown field, then it is refused with 400; a contractor lead and the control room are refused', async () => {
    const bad = await authoriser.get('/api/reports/overview?days=7');
    expect(bad.status).toBe(400);
    expect(bad.body.error.details).toEqual([expect.objectContaining({ path: 'days', message: 'Choose 30, 90 or 365 days.' })]);
    expect((await authoriser.get('/api/reports/overview?tenantId=x')).status).toBe(400);
    expect((await (await srv.signIn(users.lead)).get('/api/reports/overview')).status).toBe(403);
    expect((await (await srv.signIn(users.control)).get('/api/reports/overview')).status).toBe(403);
    expect((await (await srv.signIn(users.auditor)).get('/api/reports/overview')).status).toBe(200);
    expect((await (await srv.signIn(users.admin)).get('/api/reports/overview')).status).toBe(200);
  });
});

/*
 * The three figures added later: permits by state over time, gas tests and checks on time, late or
 * missed, and isolations in place by age. Their own server and database, so the rows they write do
 * not move the figures checked above.
 */
describe('issue 21 part 4: states over time, timeliness and isolation ages', () => {
  let srv: TestServer;
  let authoriser: ApiClient;
  let now: Date;
  let zone: string;
  let today: string;
  let tenantId: string;
  let otherTenantId: string;
  let seq = 2_000_000;
  const baselineInPlace = { over90: 0 };

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const run = (sql: string, replacements: Record<string, unknown>) => srv.deps.sequelize.query(sql, { replacements });
  const uuid = async () => (await q<{ id: string }>(`SELECT gen_random_uuid() AS id`))[0].id;
  const at = (start: Date, minutes: number) => new Date(start.getTime() + minutes * 60_000);
  const ago = (hours: number) => new Date(now.getTime() - hours * HOUR);
  /** The site's midnight starting `day` (America/Chicago in the demo: 06:00 UTC in winter, 05:00 in summer). */
  const midnight = (day: string) => startOfSiteDay(day, zone);
  const change = (tenant: string, permitId: string, toState: string, when: Date, entityType = 'permit') =>
    run(
      `INSERT INTO audit_events (tenant_id, seq, entity_type, entity_id, permit_id, action, to_state, actor_role, occurred_at, prev_hash, hash)
       VALUES (:tenant, :seq, :entityType, :permitId, :permitId, 'transition', :toState, 'authoriser', :when, 'test', 'test')`,
      { tenant, seq: seq++, entityType, permitId, toState, when },
    );
  /**
   * A permit row of its own, in the state its last state change below leaves it in (the states over time
   * count today's permits and take back the changes since; the on-time figures read its gas-test interval,
   * hot work and fire watch).
   */
  const permit = async (tenant: string, state: string, o: { kinds?: string[]; interval?: number; hotWorkEndedAt?: Date; fireWatchMinutes?: number } = {}) => {
    const id = await uuid();
    await run(
      `INSERT INTO permits (id, tenant_id, number, state, kinds, title, pipeline_id, from_position, to_position, valid_from, valid_to, contractor_organisation_id,
                            requester_user_id, gas_test_interval_minutes, fire_watch_minutes, hot_work_ended_at)
       SELECT :id, :tenant, 'RPT-' || substr(CAST(:id AS text), 1, 8), :state, CAST(ARRAY[:kinds] AS text[]), 'Report figures', pl.id, 1, 2, :from, :to, m.organisation_id,
              m.user_id, :interval, :fire, :hot
       FROM (SELECT id FROM pipelines WHERE tenant_id = :tenant ORDER BY code LIMIT 1) pl,
            (SELECT organisation_id, user_id FROM memberships WHERE tenant_id = :tenant ORDER BY user_id LIMIT 1) m`,
      {
        id, tenant, state, kinds: o.kinds ?? ['cold_work'], interval: o.interval ?? 30, fire: o.fireWatchMinutes ?? 60, hot: o.hotWorkEndedAt ?? null,
        from: new Date(now.getTime() - 40 * DAY), to: new Date(now.getTime() + DAY),
      },
    );
    return id;
  };
  const person = async (tenant: string) => (await q<{ id: string }>(`SELECT user_id AS id FROM memberships WHERE tenant_id = :tenant ORDER BY user_id LIMIT 1`, { tenant }))[0].id;
  const gasTest = async (permitId: string, when: Date, verdict: 'pass' | 'fail' = 'pass', tenant = tenantId) =>
    run(`INSERT INTO gas_tests (tenant_id, permit_id, tester_user_id, place, tested_at, readings, verdict) VALUES (:tenant, :permitId, :user, 'work_area', :when, '[]', :verdict)`, {
      tenant, permitId, user: await person(tenant), when, verdict,
    });
  const check = async (permitId: string, kind: 'vent' | 'plug' | 'fire_watch', when: Date, ok = true) =>
    run(
      `INSERT INTO permit_checks (tenant_id, permit_id, kind, checked_at, ok, action_taken, recorded_by) VALUES (:tenant, :permitId, :kind, :when, :ok, :action, :user)`,
      { tenant: tenantId, permitId, kind, when, ok, action: ok ? null : 'Stopped the work and called the authoriser.', user: await person(tenantId) },
    );
  let stepSeq = 1;
  const step = async (tenant: string, permitId: string, kind: string, appliedAt: Date, o: { removedAt?: Date; planned?: boolean } = {}) => {
    const condition = { vent: 'vent_open', plug: 'plug_built', block_valve: 'closed_locked_tagged', drain: 'drained' }[kind];
    const user = await person(tenant);
    const status = o.planned ? 'planned' : o.removedAt ? 'removed' : 'applied';
    const n = stepSeq++;
    await run(
      `INSERT INTO isolation_steps (tenant_id, permit_id, seq, temp_label, temp_position, kind, condition, status, applied_by, applied_at, applied_seq, removed_by, removed_at)
       VALUES (:tenant, :permitId, :n, :label, 1.5, :kind, :condition, :status, :appliedBy, :appliedAt, :appliedSeq, :removedBy, :removedAt)`,
      {
        tenant, permitId, n, label: `T-${n}`, kind, condition, status, appliedBy: o.planned ? null : user, appliedAt: o.planned ? null : appliedAt,
        appliedSeq: o.planned ? null : n, removedBy: o.removedAt ? user : null, removedAt: o.removedAt ?? null,
      },
    );
  };
  const overview = async (client: ApiClient, days = '30') => {
    const res = await client.get(`/api/reports/overview?days=${days}`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    return res.body as unknown as ReportsOverview;
  };
  const countsOn = (r: ReportsOverview, day: string) => {
    const row = r.statesOverTime.find((x) => x.day === day);
    expect(row, `a bucket ending ${day}`).toBeDefined();
    return row!.counts;
  };
  /** What one bucket adds to another, state by state (states with no change left out). */
  const difference = (later: Partial<Record<string, number>>, earlier: Partial<Record<string, number>>) =>
    Object.fromEntries(
      [...new Set([...Object.keys(later), ...Object.keys(earlier)])].map((s) => [s, (later[s] ?? 0) - (earlier[s] ?? 0)]).filter(([, n]) => n !== 0),
    );

  beforeAll(async () => {
    srv = await startTestServer();
    ({ tenantId } = await demoIds(srv));
    [{ id: otherTenantId }] = await q<{ id: string }>(`SELECT id FROM tenants WHERE slug = 'harlowridge'`);
    [{ time_zone: zone }] = await q<{ time_zone: string }>(`SELECT time_zone FROM tenants WHERE id = :t`, { t: tenantId });
    // Ten years and a day on: every demo record is outside the periods and every demo isolation is over 90 days old
    // (a day later than above, so that this process's answers kept for the other database are not reused).
    now = new Date(srv.clock.now().getTime() + 3651 * DAY);
    srv.clock.set(now);
    today = siteDay(now, zone);
    authoriser = await srv.signIn(users.authoriser);
    [{ n: baselineInPlace.over90 }] = await q<{ n: number }>(`SELECT count(*)::int AS n FROM isolation_steps WHERE tenant_id = :t AND status IN ('applied', 'verified')`, { t: tenantId });

    // --- Permits by state over time (day D is 20 site days ago; nothing else of this file happens near it).
    const d = addDays(today, -20);
    const a = await permit(tenantId, 'cancelled');
    await change(tenantId, a, 'draft', at(midnight(d), 60));
    await change(tenantId, a, 'requested', at(midnight(addDays(d, 1)), -1)); // 23:59 on D, site time: D's bucket (on the UTC calendar it is the next day)
    await change(tenantId, a, 'approved', midnight(addDays(d, 1))); // 00:00 on D+1, site time: D+1's bucket
    await change(tenantId, a, 'cancelled', at(midnight(addDays(d, 3)), 120));
    const b = await permit(tenantId, 'requested');
    await change(tenantId, b, 'draft', at(midnight(d), 120));
    await change(tenantId, b, 'requested', at(midnight(d), 180));
    // An isolation certificate issued "live" on B is the certificate's state, not the permit's.
    await change(tenantId, b, 'live', at(midnight(addDays(d, 1)), 60), 'isolation_certificate');
    // The other tenant's permit on the same day.
    await change(otherTenantId, await permit(otherTenantId, 'draft'), 'draft', at(midnight(d), 180));

    // --- Repeat gas tests (interval 30 min), while the permit is live.
    const g = await permit(tenantId, 'work_complete', { interval: 30 });
    const t0 = ago(100);
    await change(tenantId, g, 'live', t0);
    await gasTest(g, at(t0, -10)); // before work: the next is due at t0+20
    await gasTest(g, at(t0, 20)); // on time (exactly at its due time); the next is due at t0+50
    await gasTest(g, at(t0, 55)); // late by 5 min, the work live all along; the next is due at t0+85
    await gasTest(g, at(t0, 80), 'fail'); // a failing test answers nothing
    await change(tenantId, g, 'suspended', at(t0, 100)); // the work stopped before a passing test came: missed
    await gasTest(g, at(t0, 110)); // while suspended: due at t0+140, when the permit is no longer live
    await change(tenantId, g, 'work_complete', at(t0, 130));
    // Still live now, its test due 1 h 35 min ago and not done: missed already.
    const g2 = await permit(tenantId, 'live', { interval: 30 });
    await change(tenantId, g2, 'live', ago(2));
    await gasTest(g2, at(ago(2), -5));
    // Due five minutes from now: not yet due (the test of the age limit below moves the clock past it).
    const g3 = await permit(tenantId, 'live', { interval: 30 });
    await change(tenantId, g3, 'live', ago(1));
    await gasTest(g3, at(now, -25));
    // The other tenant's permit with a late test: not counted here.
    const og = await permit(otherTenantId, 'work_complete', { interval: 30 });
    await change(otherTenantId, og, 'live', ago(50));
    await gasTest(og, ago(50), 'pass', otherTenantId);
    await gasTest(og, at(ago(50), 45), 'pass', otherTenantId);
    await change(otherTenantId, og, 'work_complete', at(ago(50), 60));

    // --- Vent and plug checks (the tenant's intervals: 60 min by default), while the isolations stand signed in place.
    const v = await permit(tenantId, 'work_complete');
    const i0 = ago(300);
    await step(tenantId, v, 'vent', at(i0, -30), { removedAt: at(i0, 250) });
    await step(tenantId, v, 'plug', at(i0, -20), { removedAt: at(i0, 150) });
    await change(tenantId, v, 'isolated', i0); // vent and plug checks fall due from here: at i0+60
    await check(v, 'vent', at(i0, 50)); // on time; the next is due at i0+110
    await check(v, 'vent', at(i0, 125)); // late by 15 min, still isolated; the next is due at i0+185
    await change(tenantId, v, 'live', at(i0, 150)); // work starting does not move a vent check once one was made
    await change(tenantId, v, 'work_complete', at(i0, 200)); // no vent check came after i0+185: missed
    // No plug check at all: due at i0+60 and missed (work starting at i0+150 is a new start, not a check;
    // its own due time i0+210 finds the plug removed and the work handed back).

    // --- Fire-watch closing checks (60-minute watch), while work is under way.
    const f1 = await permit(tenantId, 'live', { kinds: ['hot_work'], hotWorkEndedAt: ago(60) });
    await change(tenantId, f1, 'live', ago(70));
    await check(f1, 'fire_watch', at(ago(60), 30)); // during the watch: not a closing check
    await check(f1, 'fire_watch', at(ago(60), 60)); // at the end of the watch: on time
    const f2 = await permit(tenantId, 'live', { kinds: ['hot_work'], hotWorkEndedAt: ago(40) });
    await change(tenantId, f2, 'live', ago(45));
    await check(f2, 'fire_watch', at(ago(40), 65), false); // smouldering found: not a clear closing check
    await check(f2, 'fire_watch', at(ago(40), 75)); // clear, 15 min after the end: late
    const f3 = await permit(tenantId, 'work_complete', { kinds: ['hot_work'], hotWorkEndedAt: ago(30), fireWatchMinutes: 90 });
    await change(tenantId, f3, 'live', ago(35));
    await change(tenantId, f3, 'work_complete', at(ago(30), 100)); // handed back 10 min after the 90-minute watch ended, no closing check: missed

    // --- Isolations in place by age in site days, today's site midnight and those before it.
    const w = await permit(tenantId, 'live');
    await step(tenantId, w, 'vent', at(midnight(today), 1)); // 0 days
    await step(tenantId, w, 'block_valve', at(midnight(today), -1)); // 23:59 yesterday, site time: 1 day (on the UTC calendar it may be today)
    await step(tenantId, w, 'block_valve', midnight(addDays(today, -7))); // 7 days
    await step(tenantId, w, 'plug', at(midnight(addDays(today, -7)), -1)); // 8 days
    await step(tenantId, w, 'plug', at(midnight(addDays(today, -30)), 60)); // 30 days
    await step(tenantId, w, 'vent', at(midnight(addDays(today, -31)), 60)); // 31 days
    await step(tenantId, w, 'vent', at(midnight(addDays(today, -90)), 60)); // 90 days
    await step(tenantId, w, 'drain', at(midnight(addDays(today, -91)), 60)); // 91 days
    await step(tenantId, w, 'vent', at(midnight(today), 2), { removedAt: at(midnight(today), 3) }); // removed: not in place
    await step(tenantId, w, 'block_valve', now, { planned: true }); // planned: not in place
    await step(otherTenantId, og, 'vent', now); // the other tenant's
  }, 120_000);
  afterAll(async () => {
    await srv?.close();
  });

  it('finding 21.4a: when permits change state, then each site day counts them as at its end, a change at 23:59 site time on that day and one at midnight on the next', async () => {
    const r = await overview(authoriser, '30');
    // Thirty site days, oldest first, the last today.
    expect(r.statesOverTime.map((x) => x.day)).toEqual(Array.from({ length: 30 }, (_, i) => addDays(today, i - 29)));
    const d = addDays(today, -20);
    const before = countsOn(r, addDays(d, -1));
    // D: A drafted then sent at 23:59, B drafted and sent → two more requested, no draft left over.
    expect(difference(countsOn(r, d), before)).toEqual({ requested: 2 });
    // D+1: A approved at 00:00; B's certificate going live is not B going live.
    expect(difference(countsOn(r, addDays(d, 1)), before)).toEqual({ requested: 1, approved: 1 });
    expect(difference(countsOn(r, addDays(d, 2)), before)).toEqual({ requested: 1, approved: 1 });
    // D+3 onwards: A cancelled.
    expect(difference(countsOn(r, addDays(d, 3)), before)).toEqual({ requested: 1, cancelled: 1 });
    expect(difference(countsOn(r, addDays(d, 5)), before)).toEqual({ requested: 1, cancelled: 1 });
    // Every count is a whole, positive number of permits.
    for (const row of r.statesOverTime) for (const n of Object.values(row.counts)) expect(n).toBeGreaterThan(0);
  });

  it('finding 21.4b: when the period is 90 or 365 days, then the buckets are site weeks ending today, and the other tenant counts only its own permits', async () => {
    const r = await overview(authoriser, '90');
    expect(r.statesOverTime.map((x) => x.day)).toEqual(Array.from({ length: 13 }, (_, i) => addDays(today, 7 * (i - 12))));
    // The weeks ending 21 and 14 days ago: A and B came and A went in between.
    expect(difference(countsOn(r, addDays(today, -14)), countsOn(r, addDays(today, -21)))).toEqual({ requested: 1, cancelled: 1 });
    const year = await overview(authoriser, '365');
    expect(year.statesOverTime).toHaveLength(53);
    expect(year.statesOverTime.at(-1)?.day).toBe(today);
    // The other tenant: its one drafted permit (its other permit came later).
    const outsider = await overview(await srv.signIn(users.otherTenant), '30');
    expect(countsOn(outsider, addDays(today, -21))).toEqual({});
    expect(countsOn(outsider, addDays(today, -20))).toEqual({ draft: 1 });
  });

  it('finding 21.4c: when gas tests and checks are due, then each is on time, late or missed as worked out by hand, and the other tenant is not counted', async () => {
    const r = await overview(authoriser, '30');
    expect(r.timeliness).toEqual([
      // On time at t0+20; late at t0+55; missed at t0+85 (suspended first) and on the permit still live now.
      { kind: 'gas_test', onTime: 1, late: 1, missed: 2 },
      // Due i0+60: done at i0+50; due i0+110: done at i0+125; due i0+185: never.
      { kind: 'vent', onTime: 1, late: 1, missed: 1 },
      // Due i0+60: never.
      { kind: 'plug', onTime: 0, late: 0, missed: 1 },
      // At the end of the watch; 15 min after it (a check finding smouldering does not count); never.
      { kind: 'fire_watch', onTime: 1, late: 1, missed: 1 },
    ]);
    // The other tenant: one late repeat test (due 30 min after the first, done at 45).
    const outsider = await overview(await srv.signIn(users.otherTenant), '30');
    expect(outsider.timeliness.find((t) => t.kind === 'gas_test')).toEqual({ kind: 'gas_test', onTime: 0, late: 1, missed: 0 });
  });

  it('finding 21.4d: when isolations stand in place, then they are counted by site days since applied and by kind; removed and planned steps and the other tenant are not', async () => {
    const r = await overview(authoriser, '30');
    const byBand = Object.fromEntries(r.isolationsByAge.map((x) => [x.band, x]));
    expect(r.isolationsByAge.map((x) => x.band)).toEqual(['under_1_day', 'days_1_to_7', 'days_8_to_30', 'days_31_to_90', 'over_90_days']);
    expect(byBand.under_1_day).toEqual({ band: 'under_1_day', byKind: { vent: 1 }, total: 1 });
    expect(byBand.days_1_to_7).toEqual({ band: 'days_1_to_7', byKind: { block_valve: 2 }, total: 2 });
    // 8 days; 30 days; plus the vent step of the timeliness permit, applied 12½ days ago and removed since (not counted).
    expect(byBand.days_8_to_30).toEqual({ band: 'days_8_to_30', byKind: { plug: 2 }, total: 2 });
    expect(byBand.days_31_to_90).toEqual({ band: 'days_31_to_90', byKind: { vent: 2 }, total: 2 });
    // The demo's own isolations, applied ten years ago, and the 91-day drain.
    expect(byBand.over_90_days.total).toBe(baselineInPlace.over90 + 1);
    expect(byBand.over_90_days.byKind.drain).toBeGreaterThanOrEqual(1);
    const outsider = await overview(await srv.signIn(users.otherTenant), '30');
    expect(outsider.isolationsByAge.find((x) => x.band === 'under_1_day')).toEqual({ band: 'under_1_day', byKind: { vent: 1 }, total: 1 });
  });

  it('finding 21.4e: when ten minutes pass with no change to the data, then the answer is worked out again (a test falls due and is missed)', async () => {
    const first = await overview(authoriser, '30');
    const reused = await overview(authoriser, '30');
    expect(reused.generatedAt).toBe(first.generatedAt);
    const missed = first.timeliness.find((t) => t.kind === 'gas_test')!.missed;
    srv.clock.set(new Date(now.getTime() + 11 * 60_000));
    const later = await overview(authoriser, '30');
    expect(later.generatedAt).not.toBe(first.generatedAt);
    // The third live permit's test was due five minutes after "now" and has not been done.
    expect(later.timeliness.find((t) => t.kind === 'gas_test')!.missed).toBe(missed + 1);
  });
});
