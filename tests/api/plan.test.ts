// The week ahead (issue 21, part 3): permits per pipeline over the next 14 days and the past 7, with
// overlapping work ranges and shared points found by PostgreSQL, scoped to the caller's tenant.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { PlanAnswer } from '@shared/types/plan';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, type Crew, type Ids } from '../fixtures/permit-journey';

const DAY = 86_400_000;

describe('issue 21 part 3: the week ahead', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  const made: Record<'a' | 'b' | 'c' | 'd' | 'e', { id: string; number: string }> = {} as never;

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const plan = async (query = '') => (await expectOk(await crew.authoriser.get(`/api/plan${query}`))) as unknown as PlanAnswer;
  const at = (days: number, hours = 0) => new Date(srv.clock.now().getTime() + days * DAY + hours * 3_600_000).toISOString();

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    // a and b: overlapping stretches (MP 41.0–41.4 and 41.2–41.6) on BM-10, both open on day 2.
    // c: the same days, a stretch of its own. d: the same stretch as a, but a week later.
    // e: far from a along the line, but at the same time planned on the same vent as a.
    const specs = {
      a: { title: 'Plan test A: sleeve at MP 41', fromPosition: 41.0, toPosition: 41.4, validFrom: at(2), validTo: at(3) },
      b: { title: 'Plan test B: recoat at MP 41', fromPosition: 41.2, toPosition: 41.6, validFrom: at(2, 6), validTo: at(4) },
      c: { title: 'Plan test C: dig at MP 45', fromPosition: 45.0, toPosition: 45.2, validFrom: at(2), validTo: at(3) },
      d: { title: 'Plan test D: sleeve at MP 41 later', fromPosition: 41.0, toPosition: 41.4, validFrom: at(9), validTo: at(10) },
      e: { title: 'Plan test E: valve work at MP 47', fromPosition: 47.0, toPosition: 47.2, validFrom: at(2, 12), validTo: at(3, 12) },
    } as const;
    for (const [key, body] of Object.entries(specs)) {
      const id = await draftWithPlan(srv, crew, ids, body);
      await expectOk(await transition(crew.lead, id, 'submit'));
      const [row] = await q<{ number: string }>(`SELECT number FROM permits WHERE id = :id`, { id });
      made[key as keyof typeof made] = { id, number: row.number };
    }
    // a and e both plan an isolation on the same register point (arranged as the owner: the plans are frozen once sent).
    const [vent] = await q<{ id: string }>(`SELECT id FROM isolation_points WHERE tenant_id = :t AND pipeline_id = :p ORDER BY position LIMIT 1`, { t: ids.tenantId, p: ids.pipelineId });
    await srv.deps.sequelize.query(`UPDATE isolation_steps SET point_id = :point WHERE tenant_id = :t AND permit_id IN (:ids) AND kind = 'vent'`, {
      replacements: { point: vent.id, t: ids.tenantId, ids: [made.a.id, made.e.id] },
    });
    // Two overlapping permits of the other tenant on its own line, in the same days, written as the owner.
    await srv.deps.sequelize.query(
      `INSERT INTO permits (tenant_id, number, state, kinds, title, pipeline_id, from_position, to_position, valid_from, valid_to, contractor_organisation_id, requester_user_id)
       SELECT t.id, 'HR-PLAN-' || n, 'requested', ARRAY['cold_work'], 'Other tenant plan test', pl.id, 41.0, 41.4, :from, :to, o.id, u.id
       FROM tenants t, LATERAL (SELECT id FROM pipelines WHERE tenant_id = t.id ORDER BY code LIMIT 1) pl,
            LATERAL (SELECT id FROM organisations WHERE tenant_id = t.id ORDER BY name LIMIT 1) o, users u, generate_series(1, 2) n
       WHERE t.slug = 'harlowridge' AND u.email = :email`,
      { replacements: { from: at(2), to: at(3), email: users.otherTenant } },
    );
    await srv.deps.sequelize.query(`INSERT INTO organisations (tenant_id, name, kind) VALUES (:t, 'Plan Test Coatings', 'contractor')`, { replacements: { t: ids.tenantId } });
  }, 180_000);
  afterAll(async () => {
    await srv?.close();
  });

  const pairsOf = (answer: PlanAnswer, kind: 'work_range' | 'shared_point', number: string) =>
    answer.overlaps
      .filter((o) => o.kind === kind && (o.first.number === number || o.second.number === number))
      .map((o) => (o.first.number === number ? o.second.number : o.first.number))
      .sort();

  it('when two permits work overlapping stretches at the same time, then the plan names the overlap, its stretch and its hours', async () => {
    const answer = await plan();
    const mine = answer.permits.filter((p) => Object.values(made).some((m) => m.id === p.id));
    expect(mine.map((p) => p.number).sort()).toEqual(Object.values(made).map((m) => m.number).sort());
    expect(pairsOf(answer, 'work_range', made.a.number)).toEqual([made.b.number]);
    // c is on its own stretch, d on a's stretch a week later: neither meets anyone of ours.
    expect(pairsOf(answer, 'work_range', made.c.number)).toEqual([]);
    expect(pairsOf(answer, 'work_range', made.d.number)).toEqual([]);
    const ab = answer.overlaps.find((o) => o.kind === 'work_range' && [o.first.number, o.second.number].sort().join() === [made.a.number, made.b.number].sort().join())!;
    // The shared stretch is the intersection [max(from), min(to)] = [41.2, 41.4]; the shared hours [max(start), min(end)].
    expect([ab.fromPosition, ab.toPosition]).toEqual([41.2, 41.4]);
    expect([new Date(ab.from).toISOString(), new Date(ab.to).toISOString()]).toEqual([at(2, 6), at(3)]);
    const a = answer.permits.find((p) => p.id === made.a.id)!;
    expect(a).toMatchObject({ awaitingApproval: true, workOverlaps: 1, sharedPoints: 1, pipelineId: ids.pipelineId, contractorName: 'Oxbow Line Repair' });
  });

  it('when two permits plan an isolation on the same point while both are open, then the plan shows the shared point by its label', async () => {
    const answer = await plan();
    expect(pairsOf(answer, 'shared_point', made.a.number)).toEqual([made.e.number]);
    const shared = answer.overlaps.find((o) => o.kind === 'shared_point' && o.first.id !== o.second.id && [o.first.id, o.second.id].includes(made.e.id))!;
    expect(shared.pointLabel).toBeTruthy();
    expect(answer.permits.find((p) => p.id === made.e.id)).toMatchObject({ sharedPoints: 1, workOverlaps: 0 });
  });

  it("when another tenant's authoriser reads the plan, then none of this tenant's permits or overlaps appear, and this tenant sees none of theirs", async () => {
    const outsider = await srv.signIn(users.otherTenant);
    const theirs = (await expectOk(await outsider.get('/api/plan'))) as unknown as PlanAnswer;
    const ourIds = new Set(Object.values(made).map((m) => m.id));
    expect(theirs.permits.filter((p) => ourIds.has(p.id))).toEqual([]);
    expect(theirs.overlaps.filter((o) => ourIds.has(o.first.id) || ourIds.has(o.second.id))).toEqual([]);
    const otherTenantPermits = await q<{ id: string }>(`SELECT p.id FROM permits p JOIN tenants t ON t.id = p.tenant_id WHERE t.slug = 'harlowridge'`);
    expect(otherTenantPermits.length).toBeGreaterThan(0);
    expect(theirs.permits.map((p) => p.id).sort()).toEqual(otherTenantPermits.map((r) => r.id).sort());
    expect(theirs.overlaps.filter((o) => o.kind === 'work_range')).toHaveLength(1);
    const ours = await plan();
    const foreign = new Set(otherTenantPermits.map((r) => r.id));
    expect(ours.permits.filter((p) => foreign.has(p.id))).toEqual([]);
    expect(ours.pipelines.map((p) => p.id)).toContain(ids.pipelineId);
    expect(theirs.pipelines.map((p) => p.id)).not.toContain(ids.pipelineId);
  });

  it('when the plan is filtered by pipeline or contractor, then only those permits are listed, and an overlap with a permit filtered out still shows', async () => {
    const [other] = await q<{ id: string }>(`SELECT id FROM pipelines WHERE tenant_id = :t AND id <> :p LIMIT 1`, { t: ids.tenantId, p: ids.pipelineId });
    const onOther = await plan(`?pipelineId=${other.id}`);
    expect(onOther.permits.every((p) => p.pipelineId === other.id)).toBe(true);
    expect(onOther.permits.some((p) => p.id === made.a.id)).toBe(false);

    const byOxbow = await plan(`?contractorId=${ids.oxbowId}&pipelineId=${ids.pipelineId}`);
    expect(byOxbow.permits.every((p) => p.contractorId === ids.oxbowId && p.pipelineId === ids.pipelineId)).toBe(true);
    expect(byOxbow.permits.some((p) => p.id === made.a.id)).toBe(true);

    const [elsewhere] = await q<{ id: string }>(`SELECT id FROM organisations WHERE tenant_id = :t AND kind = 'contractor' AND id <> :o LIMIT 1`, { t: ids.tenantId, o: ids.oxbowId });
    const byOther = await plan(`?contractorId=${elsewhere.id}`);
    expect(byOther.permits.some((p) => p.contractorId === ids.oxbowId)).toBe(false);
    expect(byOther.contractors.map((c) => c.id)).toEqual(expect.arrayContaining([ids.oxbowId, elsewhere.id]));
  });

  it('when the window is asked for explicitly, then permits outside it are left out; the default window is the past 7 days and the next 14', async () => {
    const narrow = await plan(`?from=${encodeURIComponent(at(8))}&to=${encodeURIComponent(at(11))}`);
    const listed = new Set(narrow.permits.map((p) => p.id));
    expect(listed.has(made.d.id)).toBe(true);
    expect(listed.has(made.a.id)).toBe(false);
    const wide = await plan();
    const span = Date.parse(wide.to) - Date.parse(wide.from);
    // 21 site days, give or take a daylight-saving hour.
    expect(Math.abs(span - 21 * DAY)).toBeLessThanOrEqual(3_600_000);
    expect(Date.parse(wide.from)).toBeLessThanOrEqual(srv.clock.now().getTime() - 7 * DAY + DAY);
  });

  it('when the window is backwards, too long or the query names an unknown field, then it is refused with 400 in plain words', async () => {
    const backwards = await crew.authoriser.get(`/api/plan?from=${encodeURIComponent(at(3))}&to=${encodeURIComponent(at(1))}`);
    expect(backwards.status).toBe(400);
    expect(backwards.body.error.details).toEqual(expect.arrayContaining([expect.objectContaining({ path: 'to', message: 'The end must be after the start.' })]));
    const tooLong = await crew.authoriser.get(`/api/plan?from=${encodeURIComponent(at(0))}&to=${encodeURIComponent(at(90))}`);
    expect(tooLong.status).toBe(400);
    const unknown = await crew.authoriser.get('/api/plan?tenantId=x');
    expect(unknown.status).toBe(400);
    const badId = await crew.authoriser.get('/api/plan?pipelineId=not-an-id');
    expect(badId.status).toBe(400);
  });

  it('finding PLAN-PERF: when a permit meets more than ten others, then the plan names the first ten by number, counts every one on the permit and counts the meetings not listed', async () => {
    // Twelve permits sent for approval on one stretch at the same hours (written as the owner, numbered in order):
    // each meets the other eleven, 66 meetings in all. Each permit names the first ten others by number, so the
    // only meeting no permit names is the one of the eleventh and the twelfth.
    await srv.deps.sequelize.query(
      `INSERT INTO permits (tenant_id, number, state, kinds, title, pipeline_id, from_position, to_position, valid_from, valid_to, contractor_organisation_id, requester_user_id)
       SELECT :t, 'PLAN-CAP-' || lpad(n::text, 2, '0'), 'requested', ARRAY['cold_work'], 'Plan cap test ' || n, :p, 60.0, 60.5, :from, :to, :o, u.id
       FROM users u, generate_series(1, 12) n WHERE u.email = :email`,
      { replacements: { t: ids.tenantId, p: ids.pipelineId, o: ids.oxbowId, from: at(5), to: at(6), email: users.lead } },
    );
    const answer = await plan();
    const cap = (n: number) => `PLAN-CAP-${String(n).padStart(2, '0')}`;
    const numbers = (from: number, to: number) => Array.from({ length: to - from + 1 }, (_, i) => cap(from + i));
    const listed = answer.permits.filter((p) => p.number.startsWith('PLAN-CAP-'));
    expect(listed).toHaveLength(12);
    expect(listed.every((p) => p.workOverlaps === 11)).toBe(true);
    expect(pairsOf(answer, 'work_range', cap(12))).toEqual(numbers(1, 10));
    expect(pairsOf(answer, 'work_range', cap(11))).toEqual(numbers(1, 10));
    expect(pairsOf(answer, 'work_range', cap(1))).toEqual(numbers(2, 12));
    expect(answer.overlaps.filter((o) => o.first.number.startsWith('PLAN-CAP-') && o.second.number.startsWith('PLAN-CAP-'))).toHaveLength(65);
    // Everything else in this tenant's plan meets fewer than ten others and is listed in full.
    expect(answer.overlapsMore).toBe(1);
  });

  it('when a contractor lead asks for the plan, then it is refused; the control room and the auditor may read it', async () => {
    expect((await crew.lead.get('/api/plan')).status).toBe(403);
    expect((await crew.control.get('/api/plan')).status).toBe(200);
    expect((await crew.auditor.get('/api/plan')).status).toBe(200);
  });
});
