// "My work" (issue 18, "A start page per role"): each person's lists through the real API and
// database, as the demo people meet them: an item appears when it waits for them, leaves when done,
// and another tenant's work never shows.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { myWorkListKeys, type MyWork } from '@shared/types/my-work';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, sign, transition, users } from '../fixtures/permit-fixtures';
import { applyAndVerifyAll, confirmChecklist, draftWithPlan, expectOk, inStore, signInCrew, steps, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

describe('My work through the API', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let other: ApiClient;
  let monitor = '';
  const now = () => srv.clock.now().toISOString();
  const myWork = async (c: ApiClient) => (await expectOk(await c.get('/api/my-work'))) as unknown as MyWork;
  const numbers = (items: { permit: { number: string } }[] | undefined) => (items ?? []).map((i) => i.permit.number);
  const numberOf = async (id: string) => (await expectOk(await crew.lead.get(`/api/permits/${id}`))).number as string;
  const bump = async () => expectOk(await crew.authoriser.patch(`/api/instruments/${monitor}`, { lastBumpTestAt: now() }));
  const gasAt = async (id: string, place: string) =>
    expectOk(await crew.tech.post(`/api/permits/${id}/gas-tests`, { instrumentId: monitor, place, testedAt: now(), readings: { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 } }), 201);

  /** The test plan applied, verified, proved and signed; the checklist done; the plug checked; gas passed; work started. */
  async function livePermit() {
    const id = await draftWithPlan(srv, crew, ids);
    await toAccepted(crew, id);
    await applyAndVerifyAll(srv, crew, ids, id);
    await confirmChecklist(crew.lead, id, 'checklist');
    await bump();
    await expectOk(await crew.tech.post(`/api/permits/${id}/checks`, { kind: 'plug', checkedAt: now(), face: 'intact' }), 201);
    await gasAt(id, 'inside_pipe_downstream');
    await gasAt(id, 'work_area');
    expect((await expectOk(await transition(crew.lead, id, 'start_work'))).state).toBe('live');
    return id;
  }

  beforeAll(async () => {
    srv = await startTestServer({ env: { SESSION_IDLE_MINUTES: '3000', SESSION_ABSOLUTE_HOURS: '72' } });
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    other = await srv.signIn(users.otherTenant);
    const [row] = await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM instruments WHERE tenant_id = :t AND serial = 'FG4-20731'`, { replacements: { t: ids.tenantId }, type: QueryTypes.SELECT });
    monitor = row.id;
  });
  afterAll(async () => {
    await srv?.close();
  });

  it('MW-1: when a person holds no role with lists (auditor), then the answer has no lists and nothing counted; an unknown parameter is refused with 400', async () => {
    const work = await myWork(crew.auditor);
    expect(work).toMatchObject({ lead: null, technician: null, gasTester: null, authoriser: null, controlRoom: null, total: 0 });
    // Exactly the fields of MyWork (shared/types/my-work.ts): the type checker refuses a list that misses one or adds one.
    const fields: { [K in keyof Required<MyWork>]: true } = { lead: true, technician: true, gasTester: true, authoriser: true, controlRoom: true, counts: true, total: true, limit: true, generatedAt: true };
    expect(Object.keys(work).sort()).toEqual(Object.keys(fields).sort());
    expect(Object.keys(work.counts).sort()).toEqual([...myWorkListKeys].sort());
    const bad = await crew.auditor.get('/api/my-work?role=authoriser');
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.map((d: { path: string }) => d.path)).toContain('role');
  });

  it('MW-2: when a permit is sent for approval, then it waits for the authoriser (not for the lead who wrote it, nor another tenant), and leaves the list once approved, to wait for the lead to accept', async () => {
    const id = await draftWithPlan(srv, crew, ids);
    const number = await numberOf(id);
    await expectOk(await transition(crew.lead, id, 'submit'));
    const waiting = await myWork(crew.authoriser);
    expect(numbers(waiting.authoriser?.toApprove)).toContain(number);
    expect(waiting.counts.toApprove).toBeGreaterThanOrEqual(1);
    expect(waiting.lead).toBeNull();
    const lead = await myWork(crew.lead);
    expect(lead.authoriser).toBeNull();
    expect(numbers(lead.lead?.toAccept)).not.toContain(number);
    const theirs = await myWork(other);
    expect(numbers(theirs.authoriser?.toApprove)).not.toContain(number);
    expect(theirs.counts.toApprove).toBe(0);

    await expectOk(await transition(crew.authoriser, id, 'approve', sign(users.authoriser)));
    expect(numbers((await myWork(crew.authoriser)).authoriser?.toApprove)).not.toContain(number);
    expect(numbers((await myWork(crew.lead)).lead?.toAccept)).toContain(number);
    await expectOk(await transition(crew.lead, id, 'accept', sign(users.lead)));
    const accepted = await myWork(crew.lead);
    expect(numbers(accepted.lead?.toAccept)).not.toContain(number);
    expect(numbers(accepted.lead?.liveWork)).toContain(number);
  });

  it('MW-3: when the authoriser sends a permit back, then the lead sees it with the reason in words', async () => {
    const id = await draftWithPlan(srv, crew, ids);
    const number = await numberOf(id);
    await expectOk(await transition(crew.lead, id, 'submit'));
    await expectOk(await transition(crew.authoriser, id, 'reject', { reason: 'Name the vent outlet on the plan.' }));
    const item = (await myWork(crew.lead)).lead?.sentBack.find((i) => i.permit.number === number);
    expect(item?.reason).toBe('Name the vent outlet on the plan.');
  });

  it('MW-4: when a permit is accepted, then its steps wait for the technician to apply; an applied step waits for another technician to verify and for the control room to acknowledge, and leaves each list when done', async () => {
    const id = await draftWithPlan(srv, crew, ids);
    const number = await numberOf(id);
    await toAccepted(crew, id);
    const planned = await steps(crew.tech, id);
    const toApply = (await myWork(crew.tech)).technician?.stepsToApply.filter((s) => s.permit.number === number) ?? [];
    expect(toApply.map((s) => s.stepId).sort()).toEqual(planned.map((s) => s.id).sort());
    expect((await myWork(other)).technician).toBeNull();

    const valve = planned.find((s) => s.kind === 'block_valve')!;
    await expectOk(await crew.tech.post(`/api/permits/${id}/isolations/${valve.id}/apply`, { lockId: await inStore(srv, 'locks', ids.tenantId), tagId: await inStore(srv, 'tags', ids.tenantId) }));
    const mine = await myWork(crew.tech);
    expect(mine.technician?.stepsToApply.map((s) => s.stepId)).not.toContain(valve.id);
    // The person who applied it does not verify it.
    expect(mine.technician?.stepsToVerify.map((s) => s.stepId)).not.toContain(valve.id);
    expect((await myWork(crew.tech2)).technician?.stepsToVerify.map((s) => s.stepId)).toContain(valve.id);
    const control = await myWork(crew.control);
    expect(control.controlRoom?.isolationsToAcknowledge.filter((s) => s.stepId === valve.id).map((s) => s.action)).toEqual(['applied']);
    expect((await myWork(other)).controlRoom).toBeNull();

    await expectOk(await crew.tech2.post(`/api/permits/${id}/isolations/${valve.id}/verify`, { method: 'position_checked' }));
    expect((await myWork(crew.tech2)).technician?.stepsToVerify.map((s) => s.stepId)).not.toContain(valve.id);
    await expectOk(await crew.control.post(`/api/permits/${id}/isolations/${valve.id}/acknowledge`, { what: 'applied' }));
    expect((await myWork(crew.control)).controlRoom?.isolationsToAcknowledge.map((s) => s.stepId)).not.toContain(valve.id);
  });

  it('MW-5: when a plug is built outside the rules, then its warnings wait for the authoriser, and leave once acknowledged', async () => {
    const id = await draftWithPlan(srv, crew, ids);
    await toAccepted(crew, id);
    const plug = (await steps(crew.tech, id)).find((s) => s.kind === 'plug')!;
    const applied = await expectOk(await crew.tech.post(`/api/permits/${id}/isolations/${plug.id}/apply`, { asBuilt: { bentoniteLb: 20, waterLb: 20, lengthIn: 10 }, outOfOrderReason: 'The valve crew is delayed; the plug goes in first.' }));
    expect((applied.plugWarnings as unknown[]).length).toBeGreaterThan(0);
    expect((await myWork(crew.authoriser)).authoriser?.plugWarnings.map((s) => s.stepId)).toContain(plug.id);
    expect((await myWork(other)).authoriser?.plugWarnings.map((s) => s.stepId)).not.toContain(plug.id);
    await expectOk(await crew.authoriser.post(`/api/permits/${id}/isolations/${plug.id}/acknowledge`, { what: 'plug_warnings' }));
    expect((await myWork(crew.authoriser)).authoriser?.plugWarnings.map((s) => s.stepId)).not.toContain(plug.id);
  });

  it('MW-6: when two permits are live, then the gas tester sees their repeat tests in due order with the due times, the earliest first, and a new passing test moves one back', async () => {
    const first = await livePermit();
    srv.clock.advanceMinutes(10);
    const second = await livePermit();
    const [a, b] = await Promise.all([numberOf(first), numberOf(second)]);
    const due = (w: MyWork) => (w.gasTester?.gasTestsDue ?? []).filter((g) => [a, b].includes(g.permit.number));
    const before = due(await myWork(crew.tech));
    expect(before.map((g) => g.permit.number)).toEqual([a, b]);
    expect(new Date(before[0].dueAt).getTime()).toBeLessThan(new Date(before[1].dueAt).getTime());
    expect(before.every((g) => !g.overdue)).toBe(true);
    expect((await myWork(other)).gasTester).toBeNull();

    srv.clock.advanceMinutes(5);
    await bump();
    await gasAt(first, 'work_area');
    expect(due(await myWork(crew.tech)).map((g) => g.permit.number)).toEqual([b, a]);

    // Past the second permit's due time: it is overdue, and still first.
    srv.clock.advanceMinutes(30);
    const late = due(await myWork(crew.tech));
    expect(late.map((g) => [g.permit.number, g.overdue])).toEqual([[b, true], [a, false]]);
    // The lead sees the same due time on their live work.
    const live = (await myWork(crew.lead)).lead?.liveWork.find((p) => p.permit.number === b);
    expect(live?.due[0]).toMatchObject({ kind: 'gas_test', dueAt: late[0].dueAt, overdue: true });

    // The control room stops the work: it waits for an authoriser's re-validation, and no gas test is due any more.
    await expectOk(await transition(crew.control, second, 'suspend', { reason: 'Gas alarm at the block valve.' }));
    const revalidate = (await myWork(crew.authoriser)).authoriser?.toRevalidate.find((p) => p.permit.number === b);
    expect(revalidate?.reason).toBe('Gas alarm at the block valve.');
    expect(due(await myWork(crew.tech)).map((g) => g.permit.number)).toEqual([a]);
  });

  it('MW-8 (finding 1, one rule for who re-validates): when the lead stops their own live work, then it waits for no authoriser and the lead sees the reason on their live work; once the time runs out, it waits for the authoriser', async () => {
    const id = await livePermit();
    const number = await numberOf(id);
    await expectOk(await transition(crew.lead, id, 'suspend', { reason: 'Crew break at the pit.' }));
    const authoriser = await myWork(crew.authoriser);
    expect(numbers(authoriser.authoriser?.toRevalidate)).not.toContain(number);
    expect(authoriser.counts.toRevalidate).toBe(authoriser.authoriser?.toRevalidate.length);
    const live = (await myWork(crew.lead)).lead?.liveWork.find((p) => p.permit.number === number);
    expect(live).toMatchObject({ permit: { state: 'suspended' }, reason: 'Crew break at the pit.' });

    // Time running out marks it expired: only the authoriser's re-validation lets work go on.
    await srv.deps.sequelize.query(`UPDATE permits SET expired_flag = true WHERE id = :id`, { replacements: { id } });
    expect(numbers((await myWork(crew.authoriser)).authoriser?.toRevalidate)).toContain(number);
  });

  it('MW-7: when the control room has isolations not yet acknowledged, then the board filter "not acknowledged only" shows just those, and a bad value is refused with 400', async () => {
    const all = await expectOk(await crew.control.get('/api/board'));
    const items = all.items as { stepId: string; controlRoomAckAppliedAt: string | null; remotelyOperable: boolean; remoteAckAt: string | null }[];
    const open = items.filter((i) => !i.controlRoomAckAppliedAt || (i.remotelyOperable && !i.remoteAckAt));
    expect(open.length).toBeGreaterThan(0);
    expect(open.length).toBeLessThan(items.length);
    const filtered = await expectOk(await crew.control.get('/api/board?unacknowledged=true'));
    expect((filtered.items as { stepId: string }[]).map((i) => i.stepId).sort()).toEqual(open.map((i) => i.stepId).sort());
    expect(filtered.total).toBe(open.length);
    // The same steps the control room's "My work" lists as applied or remote inhibition to acknowledge.
    const listed = new Set((await myWork(crew.control)).controlRoom?.isolationsToAcknowledge.filter((s) => s.action !== 'removed').map((s) => s.stepId));
    expect([...listed].sort()).toEqual(open.map((i) => i.stepId).sort());
    const bad = await crew.control.get('/api/board?unacknowledged=maybe');
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.map((d: { path: string }) => d.path)).toContain('unacknowledged');
  });
});
