// The numbers for management (issue 21, part 4): figures computed by PostgreSQL from rows this test
// writes, checked against the same figures worked out by hand below.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ReportsOverview } from '@shared/types/reports';
import { addDays, siteDay } from '@shared/time/zone';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, users } from '../fixtures/permit-fixtures';
import type { Ids } from '../fixtures/permit-journey';

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

  it('when stage times are asked for, then median and 90th percentile are those of PostgreSQL percentile_cont, worked out by hand', async () => {
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
