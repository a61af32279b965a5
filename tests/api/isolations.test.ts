import { request as httpRequest, type ClientRequest } from 'node:http';
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD, startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, sign, transition, users } from '../fixtures/permit-fixtures';

interface Step {
  id: string;
  label: string;
  kind: string;
  status: string;
  pointId: string | null;
  remotelyOperable: boolean;
  lockId: string | null;
  appliedBy: string | null;
  appliedAt: string | null;
  plugWarnings: { code: string; message: string }[];
}
interface BoardRow {
  stepId: string;
  label: string;
  lockNumber: string | null;
  controlRoomAckAppliedAt: string | null;
  permit: { id: string; number: string; state: string };
  permits: { id: string; number: string; state: string }[];
}
interface PlanStep {
  pointId?: string;
  tempLabel?: string;
  tempPosition?: number;
  kind: string;
  plugDiameterIn?: number;
}
interface Permit {
  id: string;
  number: string;
}

/** A plug that meets the rules for the 10-in line (BM-10 Sch 40, bore 10.02 in): 63 lb of paste, half water, 15.5 in long. */
const goodPlug = { bentoniteLb: 31.5, waterLb: 31.5, lengthIn: 15.5 };

/** Reads a text/event-stream response into events, so a test can wait for one. */
function openStream(url: string, cookie: string) {
  const events: { event: string; data: string; at: number }[] = [];
  let status = 0;
  let wake: (() => void) | null = null;
  const req: ClientRequest = httpRequest(url, { headers: { cookie, accept: 'text/event-stream' } }, (res) => {
    status = res.statusCode ?? 0;
    res.setEncoding('utf8');
    let buffer = '';
    res.on('data', (chunk: string) => {
      buffer += chunk;
      for (let cut = buffer.indexOf('\n\n'); cut >= 0; cut = buffer.indexOf('\n\n')) {
        const block = buffer.slice(0, cut);
        buffer = buffer.slice(cut + 2);
        const event = /^event: (.*)$/m.exec(block)?.[1];
        if (event) events.push({ event, data: /^data: (.*)$/m.exec(block)?.[1] ?? '', at: Date.now() });
      }
      wake?.();
    });
  });
  req.on('error', () => undefined);
  req.end();
  return {
    status: () => status,
    /** The first event of that name after index `from`, or a rejection after `timeoutMs`. */
    waitFor(name: string, from: number, timeoutMs: number) {
      return new Promise<{ event: string; data: string; at: number }>((resolve, reject) => {
        const timer = setTimeout(() => {
          wake = null;
          reject(new Error(`no "${name}" event within ${timeoutMs} ms; got ${JSON.stringify(events.map((e) => e.event))}`));
        }, timeoutMs);
        const look = () => {
          const hit = events.slice(from).find((e) => e.event === name);
          if (!hit) return;
          clearTimeout(timer);
          wake = null;
          resolve(hit);
        };
        wake = look;
        look();
      });
    },
    count: () => events.length,
    close: () => req.destroy(),
  };
}

describe('isolations through the API, as the demo users', () => {
  let srv: TestServer;
  let lead: ApiClient, authoriser: ApiClient, tech: ApiClient, tech2: ApiClient, control: ApiClient;
  let ids: Awaited<ReturnType<typeof demoIds>>;
  let techUserId = '';
  const point: Record<string, string> = {};

  const select = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    srv.deps.sequelize.query<T>(sql, { replacements: { tenantId: ids.tenantId, ...replacements }, type: QueryTypes.SELECT });

  /** The first lock or tag still in the store (skipping `skip` of them). */
  const inStore = async (table: 'locks' | 'tags', skip = 0) =>
    (await select<{ id: string; number: string }>(`SELECT id, number FROM ${table} WHERE tenant_id = :tenantId AND state = 'in_store' ORDER BY number LIMIT 1 OFFSET :skip`, { skip }))[0];

  async function newPermit(title: string, steps: PlanStep[], overrides: Record<string, unknown> = {}, deadEnds?: { upstream?: string; downstream?: string }): Promise<Permit> {
    const created = await lead.post('/api/permits', permitBody(ids, srv.clock.now(), { title, ...overrides }));
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const saved = await lead.put(`/api/permits/${created.body.id}/isolations`, { version: created.body.version, steps, ...(deadEnds ? { deadEnds } : {}) });
    expect(saved.status, JSON.stringify(saved.body)).toBe(200);
    return { id: created.body.id, number: created.body.number };
  }

  async function toAccepted(p: Permit) {
    expect((await transition(lead, p.id, 'submit')).status).toBe(200);
    const approved = await transition(authoriser, p.id, 'approve', sign(users.authoriser));
    expect(approved.status, JSON.stringify(approved.body)).toBe(200);
    const accepted = await transition(lead, p.id, 'accept', sign(users.lead));
    expect(accepted.status, JSON.stringify(accepted.body)).toBe(200);
  }

  const plan = async (p: Permit) => (await tech.get(`/api/permits/${p.id}/isolations`)).body.items as Step[];
  const stateOf = async (p: Permit) => (await lead.get(`/api/permits/${p.id}`)).body.state as string;
  const apply = (p: Permit, step: Step, body: Record<string, unknown>, who = tech) => who.post(`/api/permits/${p.id}/isolations/${step.id}/apply`, body);
  const verify = (p: Permit, step: Step, body: Record<string, unknown> = { method: 'position_checked' }, who = tech2) => who.post(`/api/permits/${p.id}/isolations/${step.id}/verify`, body);
  /** Taken off by whoever put it on (a lock comes off by its owner's hand). */
  const remove = (p: Permit, step: Step, body: Record<string, unknown> = {}) => (step.appliedBy === techUserId ? tech : tech2).post(`/api/permits/${p.id}/isolations/${step.id}/remove`, body);

  /**
   * HSE HSG253: a technician who applied none of the isolating devices holds the section dead at the
   * plan's first vent or drain for the site's time (15 minutes by default); then the authoriser signs
   * the isolations in place (HSE HSG250).
   */
  async function proveAndSign(p: Permit) {
    const items = await plan(p);
    const bleed = items.find((s) => s.kind === 'vent' || s.kind === 'drain')!;
    const tech2Applied = items.some((s) => ['block_valve', 'blind', 'line_stop'].includes(s.kind) && s.appliedBy && s.appliedBy !== techUserId);
    const reader = tech2Applied ? tech : tech2;
    const started = await reader.post(`/api/permits/${p.id}/isolations/provings`, { stepId: bleed.id, reading: 0, unit: 'psig' });
    expect(started.status, JSON.stringify(started.body)).toBe(201);
    srv.clock.advanceMinutes(15);
    const ended = await reader.post(`/api/permits/${p.id}/isolations/provings/${started.body.id}/end`, { reading: 0 });
    expect(ended.body.result, JSON.stringify(ended.body)).toBe('proved');
    const signed = await transition(authoriser, p.id, 'confirm_isolated', sign(users.authoriser));
    expect(signed.status, JSON.stringify(signed.body)).toBe(200);
  }

  /**
   * Applies every planned step (a minute apart, so the order of application is clear), has the
   * other technician verify every step not yet verified, proves the section and signs it isolated.
   */
  async function isolate(p: Permit) {
    for (const step of await plan(p)) {
      let appliedBy = step.appliedBy;
      if (step.status === 'planned') {
        srv.clock.advanceMinutes(1);
        const body: Record<string, unknown> = {};
        if (step.kind === 'block_valve' || step.kind === 'isolator') Object.assign(body, { lockId: (await inStore('locks')).id, tagId: (await inStore('tags')).id });
        if (step.kind === 'plug') body.asBuilt = goodPlug;
        const applied = await apply(p, step, body);
        expect(applied.status, JSON.stringify(applied.body)).toBe(200);
        appliedBy = techUserId;
        if (step.remotelyOperable) expect((await control.post(`/api/permits/${p.id}/isolations/${step.id}/acknowledge`, { what: 'remote_inhibited' })).status).toBe(200);
      }
      if (step.status === 'verified') continue;
      const verified = await verify(p, step, { method: 'position_checked' }, appliedBy === techUserId ? tech2 : tech);
      expect(verified.status, JSON.stringify(verified.body)).toBe(200);
    }
    // Every step verified is not yet Isolated: the section is proved dead and the authoriser signs.
    expect(await stateOf(p)).toBe('accepted');
    await proveAndSign(p);
    expect(await stateOf(p)).toBe('isolated');
  }

  /** No gas-test API yet: a passing test goes straight into gas_tests, timed by the test clock. */
  async function passingGasTest(p: Permit) {
    await srv.deps.sequelize.query(
      // Issue 17, gas verdicts per place: a pass inside the pipe on each side and at the work area.
      `INSERT INTO gas_tests (tenant_id, permit_id, tester_user_id, place, tested_at, readings, verdict)
       SELECT :tenantId, :permitId, :tester, place, :now, CAST('{}' AS jsonb), 'pass' FROM unnest(ARRAY['inside_pipe_upstream', 'inside_pipe_downstream', 'work_area']) AS place`,
      { replacements: { tenantId: ids.tenantId, permitId: p.id, tester: techUserId, now: srv.clock.now() } },
    );
  }

  async function confirmList(p: Permit, list: 'checklist' | 'walkdown', who: ApiClient) {
    const permit = (await who.get(`/api/permits/${p.id}`)).body;
    for (const item of permit[list] as { key: string; required: boolean; confirmed: boolean }[]) {
      if (!item.required || item.confirmed) continue;
      const res = await who.post(`/api/permits/${p.id}/checklist`, { list, key: item.key, confirmed: true });
      expect(res.status, JSON.stringify(res.body)).toBe(200);
    }
  }

  async function startWork(p: Permit) {
    await confirmList(p, 'checklist', lead);
    await passingGasTest(p);
    const started = await transition(lead, p.id, 'start_work');
    expect(started.status, JSON.stringify(started.body)).toBe(200);
  }

  /** Cold work: no fire watch, so hand-back follows the start. */
  async function toWorkCompleteColdWork(p: Permit) {
    await startWork(p);
    const handed = await transition(lead, p.id, 'hand_back', sign(users.lead));
    expect(handed.status, JSON.stringify(handed.body)).toBe(200);
  }

  async function signInCookie(email: string) {
    const csrf = await fetch(`${srv.baseUrl}/api/auth/csrf`);
    const token = (await csrf.json()).csrfToken as string;
    const cookieOf = (r: Response) => r.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
    const res = await fetch(`${srv.baseUrl}/api/auth/sign-in`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', 'x-csrf-token': token, cookie: cookieOf(csrf) },
      body: JSON.stringify({ email, password: DEMO_PASSWORD }),
    });
    expect(res.status).toBe(200);
    return cookieOf(res);
  }

  const board = async (query = '') => {
    const res = await control.get(`/api/board${query}`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    return res.body.items as BoardRow[];
  };

  /** CR-BV-149 and a temporary bleed on its body, for work on the valve itself. */
  const valveAndBleed = (name: string): PlanStep[] => [
    { pointId: point['CR-BV-149'], kind: 'block_valve' },
    { tempLabel: `Body bleed ${name}`, tempPosition: 14.9, kind: 'vent' },
  ];

  // F: the hot-work cut-out, isolated by valve, drain and a plug. A, B: two permits locking CR-BV-149 (group lockout).
  // C: a third permit that plans CR-BV-149 but has not put its lock on. D: drains and vents the section; E would vent it too.
  let F: Permit, A: Permit, B: Permit, C: Permit, D: Permit;

  beforeAll(async () => {
    // The fire watch test moves the clock an hour: keep the sessions from idling out meanwhile.
    srv = await startTestServer({ env: { SESSION_IDLE_MINUTES: '600' } });
    [lead, authoriser, tech, tech2, control] = await Promise.all([users.lead, users.authoriser, users.tech, users.tech2, users.control].map((u) => srv.signIn(u)));
    ids = await demoIds(srv);
    for (const row of await select<{ id: string; tag_code: string }>(`SELECT id, tag_code FROM isolation_points WHERE tenant_id = :tenantId AND pipeline_id = :pipe`, { pipe: ids.pipelineId }))
      point[row.tag_code] = row.id;
    techUserId = (await select<{ id: string }>(`SELECT id FROM users WHERE email = :email`, { email: users.tech }))[0].id;
  });
  afterAll(() => srv.close());

  it('when the plan calls a vent a block valve, then 400 names the step and field (steps.1.kind)', async () => {
    const created = await lead.post('/api/permits', permitBody(ids, srv.clock.now(), { title: 'Plan with a mistake' }));
    const res = await lead.put(`/api/permits/${created.body.id}/isolations`, {
      version: created.body.version,
      steps: [{ pointId: point['CR-BV-252'], kind: 'block_valve' }, { pointId: point['CR-VT-253'], kind: 'block_valve' }],
    });
    expect(res.status).toBe(400);
    expect(res.body.error.details).toEqual([{ path: 'steps.1.kind', message: expect.stringContaining('CR-VT-253') }]);
  });

  it('when the technician verifies their own isolation, then the two-person rule refuses it, and the second technician can verify it', async () => {
    F = await newPermit(
      'Cut out a dented joint at MP 22',
      [
        { pointId: point['CR-BV-252'], kind: 'block_valve' },
        { pointId: point['CR-DR-251'], kind: 'drain' },
        { tempLabel: 'Plug west of the cut', tempPosition: 22.05, kind: 'plug', plugDiameterIn: 10.02 },
      ],
      { fromPosition: 22.05, toPosition: 22.06 },
      { upstream: 'The old line west of the cut was cut out and capped at MP 22.0; no product can come from it.' },
    );
    await toAccepted(F);
    const [valve] = await plan(F);
    const notYet = await verify(F, valve);
    expect(notYet.status).toBe(409);

    srv.clock.advanceMinutes(1);
    const lock = await inStore('locks');
    const applied = await apply(F, valve, { lockId: lock.id, tagId: (await inStore('tags')).id });
    expect(applied.status, JSON.stringify(applied.body)).toBe(200);
    expect(applied.body).toMatchObject({ status: 'applied', lockNumber: lock.number, appliedByName: expect.any(String) });

    const self = await verify(F, valve, { method: 'try_out' }, tech);
    expect(self.status).toBe(422);
    expect(self.body.error.message).toMatch(/two-person rule/);
    const other = await verify(F, valve, { method: 'try_out' });
    expect(other.status, JSON.stringify(other.body)).toBe(200);
    expect(other.body).toMatchObject({ status: 'verified', verificationMethod: 'try_out' });
  });

  it('when a lock already on another isolation is chosen, then 409 says where it is', async () => {
    const [valve, drain] = await plan(F);
    const res = await apply(F, drain, { lockId: valve.lockId });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toContain('CR-BV-252');
    expect(res.body.error.message).toContain(F.number);

    srv.clock.advanceMinutes(1);
    expect((await apply(F, drain, {})).status).toBe(200);
    expect((await verify(F, drain)).status).toBe(200);
  });

  it('when the plug is built short and light, then the record carries the warnings and the permit can still be proved and signed isolated', async () => {
    const plug = (await plan(F))[2];
    srv.clock.advanceMinutes(1);
    const res = await apply(F, plug, { asBuilt: { bentoniteLb: 20, waterLb: 20, lengthIn: 10 } });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    // 10.02³/16 = 62.9 lb ± 10 % and 1.5 × 10.02 = 15.0 in: common practice, no published source (shared/calc/mud-plug.ts).
    expect(res.body.plugWarnings.map((w: { code: string }) => w.code).sort()).toEqual(['mud_below_range', 'plug_too_short']);
    expect((await verify(F, plug, { method: 'plug_length', reading: 10, unit: 'in' })).status).toBe(200);
    expect(await stateOf(F)).toBe('accepted');
    await proveAndSign(F);
    expect(await stateOf(F)).toBe('isolated');
  });

  it('when two technicians put the same lock on two steps at the same moment, then exactly one succeeds and the other hears where it went', async () => {
    // Work on the valve itself: it closes both sides; its body bleed is where the section is proved dead.
    A = await newPermit('Replace a valve actuator upstream of MP 15', valveAndBleed('A'), { kinds: ['cold_work'], fromPosition: 14.9, toPosition: 14.9 });
    B = await newPermit('Recoat the valve body at Gorse Lane', valveAndBleed('B'), { kinds: ['cold_work'], fromPosition: 14.9, toPosition: 14.9 });
    await toAccepted(A);
    await toAccepted(B);
    const [stepA] = await plan(A);
    const [stepB] = await plan(B);
    const lock = await inStore('locks');
    const [tag1, tag2] = [await inStore('tags'), await inStore('tags', 1)];

    const results = await Promise.all([apply(A, stepA, { lockId: lock.id, tagId: tag1.id }), apply(B, stepB, { lockId: lock.id, tagId: tag2.id }, tech2)]);

    expect(results.map((r) => r.status).sort()).toEqual([200, 409]);
    const loser = results.find((r) => r.status === 409)!;
    const escaped = lock.number.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
    expect(loser.body.error.message).toMatch(new RegExp(`^Lock ${escaped} is already on CR-BV-149 \\(permit PW-\\d{4}-\\d{4}\\)`));
    const onSteps = await select<{ n: number }>(`SELECT count(*)::int AS n FROM isolation_steps WHERE tenant_id = :tenantId AND lock_id = :lock`, { lock: lock.id });
    expect(onSteps[0].n).toBe(1);
    // The loser's whole transaction rolled back: its tag is still in the store.
    const loserTag = results[0].status === 409 ? tag1 : tag2;
    expect((await select<{ state: string }>(`SELECT state FROM tags WHERE id = :id`, { id: loserTag.id }))[0].state).toBe('in_store');
  });

  it('when both permits on CR-BV-149 are isolated, then the board lists both locks and each row names both permits', async () => {
    await isolate(A);
    await isolate(B);
    const rows = (await board(`?pipelineId=${ids.pipelineId}`)).filter((r) => r.label === 'CR-BV-149');
    expect(rows.map((r) => r.permit.id).sort()).toEqual([A.id, B.id].sort());
    for (const row of rows) expect(row.permits.map((p) => p.number).sort()).toEqual([A.number, B.number].sort());
    expect(new Set(rows.map((r) => r.lockNumber)).size).toBe(2);

    // Filtering by state still names every holder of the point.
    const isolatedOnly = await board(`?permitState=isolated`);
    expect(isolatedOnly.every((r) => r.permit.state === 'isolated')).toBe(true);
    expect(isolatedOnly.find((r) => r.label === 'CR-BV-149')!.permits).toHaveLength(2);

    expect((await tech.get('/api/board')).status).toBe(403);
  });

  it('when the control room acknowledges a newly applied isolation, then the board shows it acknowledged', async () => {
    const row = (await board()).find((r) => r.permit.id === A.id)!;
    expect(row.controlRoomAckAppliedAt).toBeNull();
    const ack = await control.post(`/api/permits/${A.id}/isolations/${row.stepId}/acknowledge`, { what: 'applied' });
    expect(ack.status, JSON.stringify(ack.body)).toBe(200);
    expect((await board()).find((r) => r.stepId === row.stepId)!.controlRoomAckAppliedAt).not.toBeNull();
    expect((await tech.post(`/api/permits/${A.id}/isolations/${row.stepId}/acknowledge`, { what: 'applied' })).status).toBe(403);
  });

  it("when a technician applies an isolation, then the control room's stream carries a change within 2 s", async () => {
    // A blind upstream and a block valve downstream isolate the section; a drain and a vent alone would not.
    D = await newPermit('Drain and vent the Gorse Lane section for a survey', [
      { tempLabel: 'Blind west of the survey section', tempPosition: 14.95, kind: 'blind' },
      { pointId: point['CR-DR-151'], kind: 'drain' },
      { pointId: point['CR-VT-150'], kind: 'vent' },
      { pointId: point['CR-BV-197'], kind: 'block_valve' },
    ], { kinds: ['cold_work'], fromPosition: 15, toPosition: 15.1 });
    await toAccepted(D);
    const stream = openStream(`${srv.baseUrl}/api/board/stream`, await signInCookie(users.control));
    try {
      await stream.waitFor('ready', 0, 5_000);
      expect(stream.status()).toBe(200);
      const from = stream.count();
      const [blind] = await plan(D);
      const sent = Date.now();
      const applied = await apply(D, blind, {});
      expect(applied.status).toBe(200);
      const change = await stream.waitFor('change', from, 2_000);
      expect(change.at - sent).toBeLessThan(2_000);
      expect(JSON.parse(change.data)).toMatchObject({ kind: 'isolation', permitId: D.id, stepId: blind.id, action: 'isolation_applied' });
    } finally {
      stream.close();
    }
    await isolate(D);
  });

  // HSE HSG250 (conflicting work identified): the plan is refused when saved; approval and apply check the same rule (isolation-conflicts.test.ts).
  it('when a permit would vent a point that an isolated permit holds, then saving its plan is refused naming the point and that permit', async () => {
    const created = await lead.post('/api/permits', permitBody(ids, srv.clock.now(), { title: 'Vent the section for a pig run', kinds: ['cold_work'], fromPosition: 15, toPosition: 15 }));
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const res = await lead.put(`/api/permits/${created.body.id}/isolations`, { version: created.body.version, steps: [{ pointId: point['CR-VT-150'], kind: 'vent' }] });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toContain(`CR-VT-150 is held open by ${D.number}`);
    expect(await plan({ id: created.body.id, number: created.body.number })).toEqual([]);
  });

  it('when one permit of a group lockout takes its lock off, then the valve stays isolated under the other', async () => {
    await toWorkCompleteColdWork(A);
    // Filtered to isolated permits, B's row still names A, handed back but with its lock still on.
    const filtered = (await board('?permitState=isolated')).find((r) => r.label === 'CR-BV-149')!;
    expect(filtered.permit.id).toBe(B.id);
    expect(filtered.permits.map((p) => p.state).sort()).toEqual(['isolated', 'work_complete']);
    const [stepA, bleedA] = await plan(A);
    // Reverse order of application: the body bleed went on after the valve, so it comes off first.
    expect((await remove(A, bleedA)).status).toBe(200);
    const removed = await remove(A, stepA);
    expect(removed.status, JSON.stringify(removed.body)).toBe(200);
    expect(removed.body.status).toBe('removed');
    const rows = (await board()).filter((r) => r.label === 'CR-BV-149');
    expect(rows.map((r) => r.permit.id)).toEqual([B.id]);
    expect(rows[0].permits.map((p) => p.id)).toEqual([B.id]);
    // The control room sees the removal to acknowledge.
    expect((await control.post(`/api/permits/${A.id}/isolations/${stepA.id}/acknowledge`, { what: 'removed' })).status).toBe(200);
  });

  it('when the last lock on CR-BV-149 would come off while another permit still needs the valve, then it is refused naming that permit', async () => {
    C = await newPermit('Replace the valve position indicator', valveAndBleed('C'), { kinds: ['cold_work'], fromPosition: 14.9, toPosition: 14.9 });
    await toAccepted(C);
    await toWorkCompleteColdWork(B);
    const [stepB, bleedB] = await plan(B);
    expect((await remove(B, bleedB)).status).toBe(200);
    const refused = await remove(B, stepB);
    expect(refused.status).toBe(422);
    expect(refused.body.error.message).toContain('CR-BV-149');
    expect(refused.body.error.message).toContain(C.number);
    expect((await board()).some((r) => r.stepId === stepB.id)).toBe(true);

    // Once that permit no longer needs it, the last lock may come off.
    expect((await transition(lead, C.id, 'cancel', { reason: 'Work moved to next month.' })).status).toBe(200);
    const removed = await remove(B, stepB);
    expect(removed.status, JSON.stringify(removed.body)).toBe(200);
    expect((await board()).some((r) => r.label === 'CR-BV-149')).toBe(false);
    expect((await select<{ state: string }>(`SELECT l.state FROM locks l JOIN isolation_steps s ON s.lock_id = l.id WHERE s.id = :id`, { id: stepB.id }))[0].state).toBe('in_store');
  });

  it('when work starts on a plug with unacknowledged warnings, then it is refused until the authoriser acknowledges them', async () => {
    const plug = (await plan(F))[2];
    await confirmList(F, 'checklist', lead);
    await passingGasTest(F);
    const refused = await transition(lead, F.id, 'start_work');
    expect(refused.status).toBe(422);
    expect(refused.body.error.message).toMatch(/plug record\(s\) have warnings/);
    expect((await tech.post(`/api/permits/${F.id}/isolations/${plug.id}/acknowledge`, { what: 'plug_warnings' })).status).toBe(403);
    const ack = await authoriser.post(`/api/permits/${F.id}/isolations/${plug.id}/acknowledge`, { what: 'plug_warnings' });
    expect(ack.status, JSON.stringify(ack.body)).toBe(200);
    expect(ack.body.plugWarningsAckAt).not.toBeNull();
    const started = await transition(lead, F.id, 'start_work');
    expect(started.status, JSON.stringify(started.body)).toBe(200);
  });

  it('when hot work is handed back, then it needs hot work stopped and the full fire watch first', async () => {
    const early = await transition(lead, F.id, 'hand_back', sign(users.lead));
    expect(early.status).toBe(422);
    expect(early.body.error.message).toMatch(/hot work has stopped/);
    expect((await lead.post(`/api/permits/${F.id}/hot-work-stopped`)).status).toBe(200);
    srv.clock.advanceMinutes(30);
    const watching = await transition(lead, F.id, 'hand_back', sign(users.lead));
    expect(watching.status).toBe(422);
    expect(watching.body.error.message).toMatch(/fire watch runs until/);
    // NFPA 51B (2019): fire watch at least 1 hour after hot work ends; the permit asks 60 minutes.
    srv.clock.advanceMinutes(31);
    // Issue 17: the watch ends with the fire watcher's closing check, area clear and nothing smouldering.
    expect((await transition(lead, F.id, 'hand_back', sign(users.lead))).body.error.message).toMatch(/^Record the fire watch closing check/);
    expect((await tech.post(`/api/permits/${F.id}/checks`, { kind: 'fire_watch', checkedAt: srv.clock.now().toISOString(), observation: 'clear' })).status).toBe(201);
    const handed = await transition(lead, F.id, 'hand_back', sign(users.lead));
    expect(handed.status, JSON.stringify(handed.body)).toBe(200);
  });

  it('when the permit is returned to service with isolations still on, then it is refused', async () => {
    const res = await transition(authoriser, F.id, 'return_to_service', sign(users.authoriser));
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/3 isolation\(s\) of this permit are still applied/);
  });

  it('when the first-applied isolation is removed while later ones are on, then it is refused unless a reason is given', async () => {
    const [valve, drain, plug] = await plan(F);
    const refused = await remove(F, valve);
    expect(refused.status).toBe(422);
    expect(refused.body.error.message).toMatch(/reverse order/);
    expect(refused.body.error.message).toContain('Plug west of the cut');
    expect(refused.body.error.message).toContain('CR-DR-251');

    const withReason = await remove(F, valve, { outOfOrderReason: 'Valve needed to refill the line from upstream first.' });
    expect(withReason.status, JSON.stringify(withReason.body)).toBe(200);

    const noOutcome = await remove(F, plug);
    expect(noOutcome.status).toBe(400);
    expect(noOutcome.body.error.details.map((d: { path: string }) => d.path)).toEqual(['plugOutcome']);
    expect((await remove(F, plug, { plugOutcome: 'displaced_by_product' })).status).toBe(200);
    expect((await remove(F, drain)).status).toBe(200);
    expect((await plan(F)).every((s) => s.status === 'removed')).toBe(true);
  });

  it('when the walk-down is done and the control room acknowledges, then the permit returns to service and closes', async () => {
    const noWalkdown = await transition(authoriser, F.id, 'return_to_service', sign(users.authoriser));
    expect(noWalkdown.status).toBe(422);
    expect(noWalkdown.body.error.message).toMatch(/walk-down/);
    await confirmList(F, 'walkdown', authoriser);
    const returned = await transition(authoriser, F.id, 'return_to_service', sign(users.authoriser));
    expect(returned.status, JSON.stringify(returned.body)).toBe(200);

    const early = await transition(authoriser, F.id, 'close');
    expect(early.status).toBe(422);
    expect(early.body.error.message).toMatch(/control room has not acknowledged/);
    expect((await transition(control, F.id, 'acknowledge_return')).status).toBe(200);
    const closed = await transition(authoriser, F.id, 'close');
    expect(closed.status, JSON.stringify(closed.body)).toBe(200);
    expect(closed.body.state).toBe('closed');
    expect((await board()).some((r) => r.permit.id === F.id)).toBe(false);
  });
});
