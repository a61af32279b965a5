// Lockout and isolation you can trust: what counts as an isolation, proving the section dead and the
// authoriser's "isolations in place" signature, through the real API. Sources beside each check:
// OSHA 29 CFR 1910.147(b) (energy-isolating device), HSE HSG253 (proving isolations; a check valve is
// never an isolation), HSE HSG250 (the issuer signs that the isolations are in place).
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, sign, transition, users } from '../fixtures/permit-fixtures';
import {
  applyAndVerifyAll, applyAndVerifySteps, draftWithPlan, expectOk, inStore, reasonsOf, signInCrew, steps, toAccepted, type Crew, type Ids, type PlanStepBody,
} from '../fixtures/permit-journey';

interface Readiness {
  devices: number;
  sides: { side: string; deadEnd: string | null; planned: number; verified: number }[];
  proving: { state: string; at: string | null; failure: string | null };
  deadEnds: { upstream: string | null; downstream: string | null };
  provings: { id: string; result: string; startedByName: string; endedByName: string | null; maxPressure: number; maxPressureUnit: string; holdMinutes: number }[];
  limits: { maxPressure: number; unit: string; holdMinutes: number };
  signature: { name: string; at: string } | null;
  blockers: string[];
}

const signatureMissing = 'Isolations-in-place signature missing: the authoriser signs that the isolations are made and proved.';

describe('what counts as an isolation, proving it dead and signing it in place', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  const point: Record<string, string> = {};
  let bm16 = '';

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    srv.deps.sequelize.query<T>(sql, { replacements: { tenantId: ids.tenantId, ...replacements }, type: QueryTypes.SELECT });
  const readiness = async (id: string) => (await expectOk(await crew.tech2.get(`/api/permits/${id}/isolations`))).readiness as unknown as Readiness;
  const stateOf = async (id: string) => (await expectOk(await crew.lead.get(`/api/permits/${id}`))).state;
  const startTest = (id: string, body: Record<string, unknown>, who = crew.tech2) => who.post(`/api/permits/${id}/isolations/provings`, body);
  const endTest = (id: string, provingId: string, body: Record<string, unknown>, who = crew.tech2) => who.post(`/api/permits/${id}/isolations/provings/${provingId}/end`, body);
  const signIsolated = (id: string, who = crew.authoriser, email: string = users.authoriser) => transition(who, id, 'confirm_isolated', sign(email));
  const bleedOf = async (id: string) => (await steps(crew.tech2, id)).find((s) => s.kind === 'vent' || s.kind === 'drain')!;

  /** An accepted cold-work permit on BM-10 over the given range with the given plan. */
  async function accepted(title: string, plan: PlanStepBody[], range: [number, number], deadEnds?: { upstream?: string; downstream?: string }) {
    const id = await draftWithPlan(srv, crew, ids, { kinds: ['cold_work'], title, fromPosition: range[0], toPosition: range[1] }, crew.lead, plan, deadEnds);
    await toAccepted(crew, id);
    return id;
  }

  /** The second technician, who applied nothing, holds the section at its first vent or drain for the hold time. */
  async function prove(id: string, holdMinutes = 15) {
    const test = await expectOk(await startTest(id, { stepId: (await bleedOf(id)).id, reading: 0, unit: 'psig' }), 201);
    srv.clock.advanceMinutes(holdMinutes);
    return expectOk(await endTest(id, test.id, { reading: 0 }));
  }

  beforeAll(async () => {
    srv = await startTestServer({ env: { SESSION_IDLE_MINUTES: '600' } });
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    for (const row of await q<{ id: string; tag_code: string }>(`SELECT id, tag_code FROM isolation_points WHERE tenant_id = :tenantId`)) point[row.tag_code] = row.id;
    bm16 = (await q<{ id: string }>(`SELECT id FROM pipelines WHERE tenant_id = :tenantId AND code = 'BM-16'`))[0].id;
  });
  afterAll(() => srv?.close());

  // OSHA 29 CFR 1910.147(b): vents, drains and mud plugs are not energy-isolating devices.
  it('finding J1: when the plan is a vent and two mud plugs, then with every step verified and the section held dead it still cannot be signed isolated', async () => {
    const id = await accepted(
      'Vent and plug only',
      [
        { tempLabel: 'J1-PL-W', tempPosition: 23.0, kind: 'plug', plugDiameterIn: 10 },
        { tempLabel: 'J1-VT', tempPosition: 23.1, kind: 'vent' },
        { tempLabel: 'J1-PL-E', tempPosition: 23.2, kind: 'plug', plugDiameterIn: 10 },
      ],
      [23.0, 23.2],
    );
    await applyAndVerifySteps(srv, crew, ids, id);
    // Verifying the last step no longer moves the permit by itself.
    expect(await stateOf(id)).toBe('accepted');
    await prove(id);
    const r = await readiness(id);
    expect(r.devices).toBe(0);
    expect(r.blockers[0]).toMatch(/^The plan has no isolating device\. Vents, drains and mud plugs are not isolations/);
    expect(r.blockers).toEqual(expect.arrayContaining([expect.stringMatching(/^No isolating device upstream of the work/), expect.stringMatching(/^No isolating device downstream of the work/), signatureMissing]));
    const reasons = reasonsOf(await signIsolated(id));
    expect(reasons[0]).toMatch(/^The plan has no isolating device/);
    expect(reasons.some((m) => m.startsWith('No isolating device upstream of the work'))).toBe(true);
    expect(await stateOf(id)).toBe('accepted');
  });

  it('finding J1: when only the upstream side has a valve, then signing is refused for the open downstream side; declared a dead end with a reason, the same plan can be signed', async () => {
    const plan = [
      { tempLabel: 'J1-BV-U', tempPosition: 23.5, kind: 'block_valve' },
      { tempLabel: 'J1-VT-2', tempPosition: 23.65, kind: 'vent' },
    ];
    const open = await accepted('Valve upstream only', plan, [23.6, 23.7]);
    await applyAndVerifySteps(srv, crew, ids, open);
    await prove(open);
    expect(reasonsOf(await signIsolated(open))).toEqual([
      'No isolating device downstream of the work: plan a block valve, a blind or a line stop at or beyond the end of the work range, or declare that side a dead end and say why no product can come from it.',
    ]);

    // A reason is needed to declare a dead end.
    const draft = await expectOk(await crew.lead.post('/api/permits', permitBody(ids, srv.clock.now(), { kinds: ['cold_work'], title: 'Dead end without a reason', fromPosition: 23.6, toPosition: 23.7 })), 201);
    const bare = await crew.lead.put(`/api/permits/${draft.id}/isolations`, { version: draft.version, steps: plan, deadEnds: { downstream: ' ' } });
    expect(bare.status).toBe(400);
    expect(bare.body.error.details.map((d: { path: string }) => d.path)).toEqual(['deadEnds.downstream']);

    const reason = 'The spur ends at a welded cap at MP 23.8; nothing feeds it.';
    const capped = await accepted('Valve upstream, capped spur downstream', plan, [23.6, 23.7], { downstream: reason });
    expect((await readiness(capped)).deadEnds).toEqual({ upstream: null, downstream: reason });
    await applyAndVerifyAll(srv, crew, ids, capped);
    expect(await stateOf(capped)).toBe('isolated');
  });

  // HSE HSG253: a non-return (check) valve is never relied on as an isolation.
  it('finding J2: when a cut is planned past the check valve on BM-16, then the proposal leaves it out and says why; planning it as a block valve is refused; the register still shows it', async () => {
    const draft = await expectOk(
      await crew.lead.post('/api/permits', permitBody(ids, srv.clock.now(), { kinds: ['cold_work'], title: 'Recoat at the Sable River crossing', pipelineId: bm16, fromPosition: 30.95, toPosition: 31.05 })),
      201,
    );
    const proposal = await expectOk(await crew.lead.get(`/api/permits/${draft.id}/isolations/proposal?fromPosition=30.95&toPosition=31.05`));
    const labels = (proposal.steps as unknown as { label: string; kind: string }[]).map((s) => s.label);
    expect(labels).not.toContain('HC-CV-310');
    expect(labels).toEqual(expect.arrayContaining(['HC-BV-238', 'HC-BV-427']));
    expect(proposal.warnings).toEqual(expect.arrayContaining([expect.stringContaining('HC-CV-310 is a check valve')]));

    const saved = await crew.lead.put(`/api/permits/${draft.id}/isolations`, { version: draft.version, steps: [{ pointId: point['HC-CV-310'], kind: 'block_valve' }] });
    expect(saved.status).toBe(422);
    expect(saved.body.error.details).toEqual([{ path: 'steps.0.pointId', message: expect.stringContaining('HC-CV-310 is a check valve') }]);

    const register = await expectOk(await crew.lead.get(`/api/isolation-points?pipelineId=${bm16}&pageSize=200`));
    expect((register.items as unknown as { tagCode: string }[]).map((p) => p.tagCode)).toContain('HC-CV-310');
  });

  it('finding J2: when a plan saved before the rule holds the check valve, then closing, locking and tagging it is refused and the lock and tag stay in the store', async () => {
    const id = await draftWithPlan(srv, crew, ids, { kinds: ['cold_work'], title: 'Old plan on the check valve', pipelineId: bm16, fromPosition: 31.0, toPosition: 31.0 }, crew.lead, [
      { tempLabel: 'J2-VT', tempPosition: 31.0, kind: 'vent' },
    ]);
    await toAccepted(crew, id);
    await srv.deps.sequelize.query(
      `INSERT INTO isolation_steps (tenant_id, permit_id, seq, point_id, kind, condition) VALUES (:tenantId, :id, 0, :point, 'block_valve', 'closed_locked_tagged')`,
      { replacements: { tenantId: ids.tenantId, id, point: point['HC-CV-310'] } },
    );
    const step = (await steps(crew.tech, id)).find((s) => s.label === 'HC-CV-310')!;
    const lockId = await inStore(srv, 'locks', ids.tenantId);
    const tagId = await inStore(srv, 'tags', ids.tenantId);
    const res = await crew.tech.post(`/api/permits/${id}/isolations/${step.id}/apply`, { lockId, tagId });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/^HC-CV-310 is a check valve\. .*never an isolation/);
    const [lock] = await q<{ state: string }>(`SELECT state FROM locks WHERE id = :lockId`, { lockId });
    const [tag] = await q<{ state: string }>(`SELECT state FROM tags WHERE id = :tagId`, { tagId });
    expect([lock.state, tag.state]).toEqual(['in_store', 'in_store']);
  });

  // A line stop (stopple) or mechanical plug is an isolating device with its own record, not a bentonite plug.
  it('finding J3: when the stopple position is planned, then it is a line stop recorded by device, size and set pressure, never by mud weights, and it closes its side of the work', async () => {
    const draft = await expectOk(await crew.lead.post('/api/permits', permitBody(ids, srv.clock.now(), { kinds: ['cold_work'], title: 'Line stop ahead of the terminal', fromPosition: 30.0, toPosition: 30.1 })), 201);
    const asPlug = await crew.lead.put(`/api/permits/${draft.id}/isolations`, { version: draft.version, steps: [{ pointId: point['CR-MP-302'], kind: 'plug', plugDiameterIn: 10 }] });
    expect(asPlug.status).toBe(400);
    expect(asPlug.body.error.details).toEqual([{ path: 'steps.0.kind', message: expect.stringContaining('CR-MP-302') }]);

    const id = await accepted(
      'Line stop ahead of the terminal, planned right',
      [
        { pointId: point['CR-BV-252'], kind: 'block_valve' },
        { pointId: point['CR-VT-253'], kind: 'vent' },
        { pointId: point['CR-MP-302'], kind: 'line_stop' },
      ],
      [30.0, 30.1],
    );
    expect((await readiness(id)).sides).toEqual([
      { side: 'upstream', deadEnd: null, planned: 1, verified: 0 },
      { side: 'downstream', deadEnd: null, planned: 1, verified: 0 },
    ]);
    const plan = await steps(crew.tech, id);
    for (const s of plan.slice(0, 2)) {
      const body = s.kind === 'block_valve' ? { lockId: await inStore(srv, 'locks', ids.tenantId), tagId: await inStore(srv, 'tags', ids.tenantId) } : {};
      await expectOk(await crew.tech.post(`/api/permits/${id}/isolations/${s.id}/apply`, body));
    }
    const stop = plan[2];
    expect(stop.kind).toBe('line_stop');
    const apply = (body: Record<string, unknown>) => crew.tech.post(`/api/permits/${id}/isolations/${stop.id}/apply`, body);
    const weights = await apply({ asBuilt: { bentoniteLb: 31, waterLb: 31, lengthIn: 15.5 } });
    expect(weights.status).toBe(400);
    expect(weights.body.error.details.map((d: { path: string }) => d.path).sort()).toEqual(['asBuilt', 'lineStop']);
    const neither = await apply({ lineStop: { device: 'Stopple plugging head', sizeIn: 10 } });
    expect(neither.status).toBe(400);
    expect(neither.body.error.details.map((d: { path: string }) => d.path)).toEqual(['lineStop.setPressure']);
    const set = await expectOk(await apply({ lineStop: { device: 'Stopple plugging head, 10 in fitting', sizeIn: 10, setPressure: 150, setPressureUnit: 'psig' } }));
    expect(set.lineStopAsBuilt).toMatchObject({ device: 'Stopple plugging head, 10 in fitting', sizeIn: 10, setPressure: 150, setPressureUnit: 'psig', setAt: expect.any(String) });
    for (const s of plan) await expectOk(await crew.tech2.post(`/api/permits/${id}/isolations/${s.id}/verify`, { method: 'position_checked' }));
    expect((await readiness(id)).sides.map((s) => s.verified)).toEqual([1, 1]);
    await prove(id);
    await expectOk(await signIsolated(id));
    expect(await stateOf(id)).toBe('isolated');
  });

  // HSE HSG253: prove the section dead at a bleed or vent, held without build-up; "position checked" proves no valve.
  describe('finding J4: proving the section dead', () => {
    let id = '';
    let runningId = '';
    const plan = [
      { tempLabel: 'J4-BV-U', tempPosition: 24.0, kind: 'block_valve' },
      { tempLabel: 'J4-VT', tempPosition: 24.05, kind: 'vent' },
      { tempLabel: 'J4-BV-D', tempPosition: 24.1, kind: 'block_valve' },
    ];

    it('when the valves are not on yet, then a hold test cannot start; once every step is verified with "position checked" the permit is still not isolated', async () => {
      id = await accepted('Proving the section', plan, [24.0, 24.1]);
      const [valve, vent] = await steps(crew.tech, id);
      const unfitted = await startTest(id, { stepId: vent.id, reading: 0, unit: 'psig' });
      expect(unfitted.status).toBe(422);
      expect(unfitted.body.error.details).toEqual([{ path: 'stepId', message: 'J4-VT is not fitted yet; apply it before reading its gauge.' }]);
      await expectOk(await crew.tech.post(`/api/permits/${id}/isolations/${valve.id}/apply`, { lockId: await inStore(srv, 'locks', ids.tenantId), tagId: await inStore(srv, 'tags', ids.tenantId) }));
      await expectOk(await crew.tech.post(`/api/permits/${id}/isolations/${vent.id}/apply`, {}));
      const early = await startTest(id, { stepId: vent.id, reading: 0, unit: 'psig' });
      expect(early.status).toBe(422);
      expect(early.body.error.message).toBe('Put every isolating device on before proving the section: J4-BV-D is not on yet.');
      await applyAndVerifySteps(srv, crew, ids, id);
      for (const s of [valve, vent]) await expectOk(await crew.tech2.post(`/api/permits/${id}/isolations/${s.id}/verify`, { method: 'position_checked' }));
      expect(await stateOf(id)).toBe('accepted');
      const reasons = reasonsOf(await signIsolated(id));
      expect(reasons).toEqual([expect.stringMatching(/^Section not proved dead: once the isolating devices are on, read the pressure at a vent or drain/)]);
    });

    it('when the wrong person, place or reading starts the test, then each is refused in words', async () => {
      const [valve, vent] = await steps(crew.tech, id);
      const atValve = await startTest(id, { stepId: valve.id, reading: 0, unit: 'psig' });
      expect(atValve.status).toBe(422);
      expect(atValve.body.error.details).toEqual([{ path: 'stepId', message: expect.stringMatching(/^J4-BV-U is not a vent or drain/) }]);
      const byApplier = await startTest(id, { stepId: vent.id, reading: 0, unit: 'psig' }, crew.tech);
      expect(byApplier.status).toBe(422);
      expect(byApplier.body.error.message).toMatch(/^You applied J4-BV-U, J4-BV-D, so someone who did not apply the isolations must read the gauge/);
      expect((await startTest(id, { stepId: vent.id, reading: 0, unit: 'psig' }, crew.lead)).status).toBe(403);
      const pressured = await startTest(id, { stepId: vent.id, reading: 2, unit: 'psig' });
      expect(pressured.status).toBe(422);
      expect(pressured.body.error.details).toEqual([
        { path: 'reading', message: 'The gauge at J4-VT reads 2 psig, above this site’s limit of 0 psig for a dead section. Bleed the section down before starting the hold test.' },
      ]);
      expect((await startTest(id, { stepId: vent.id, reading: 0 })).status).toBe(400);
    });

    it('when the reading holds for less than the hold time, then the end is refused; a build-up fails the test at once and blocks the signature', async () => {
      const vent = (await steps(crew.tech, id))[1];
      const started = await expectOk(await startTest(id, { stepId: vent.id, reading: 0, unit: 'psig' }), 201);
      expect(started).toMatchObject({ result: 'running', at: 'J4-VT', maxPressure: 0, maxPressureUnit: 'psig', holdMinutes: 15, startedByName: expect.any(String) });
      runningId = started.id;
      expect((await startTest(id, { stepId: vent.id, reading: 0, unit: 'psig' })).status).toBe(409);
      srv.clock.advanceMinutes(5);
      const soon = await endTest(id, runningId, { reading: 0 });
      expect(soon.status).toBe(422);
      expect(soon.body.error.message).toMatch(/^Hold the test for 15 minutes without build-up: .*\(10 minutes to go\)\.$/);
      srv.clock.advanceMinutes(3);
      const built = await expectOk(await endTest(id, runningId, { reading: 1.5 }));
      expect(built).toMatchObject({ result: 'failed', failure: 'the pressure built up from 0 psig to 1.5 psig', endReading: 1.5 });
      const reasons = reasonsOf(await signIsolated(id));
      expect(reasons).toEqual([
        'Section not proved dead: the last hold test at J4-VT failed (the pressure built up from 0 psig to 1.5 psig). Find the isolation that lets pressure through, then test again.',
      ]);
      expect((await endTest(id, runningId, { reading: 0 })).status).toBe(409);
    });

    it('when the site sets its own limit and hold time, then a new test is judged by them, in any gauge unit', async () => {
      await srv.deps.sequelize.query(
        `UPDATE tenants SET settings = settings || jsonb_build_object('provingMaxPressure', 1, 'provingPressureUnit', 'kPa', 'provingHoldMinutes', 10) WHERE id = :t`,
        { replacements: { t: ids.tenantId } },
      );
      try {
        const vent = (await steps(crew.tech, id))[1];
        // 0.2 psig is 1.38 kPa: above a 1 kPa limit.
        const over = await startTest(id, { stepId: vent.id, reading: 0.2, unit: 'psig' });
        expect(over.status).toBe(422);
        expect(over.body.error.message).toContain('above this site’s limit of 1 kPa');
        const started = await expectOk(await startTest(id, { stepId: vent.id, reading: 0.1, unit: 'psig' }), 201);
        expect(started).toMatchObject({ maxPressure: 1, maxPressureUnit: 'kPa', holdMinutes: 10 });
        srv.clock.advanceMinutes(10);
        // The second reader may be someone else who applied nothing; here the same technician ends it.
        const ended = await expectOk(await endTest(id, started.id, { reading: 0.1, notes: 'Gauge steady at the vent.' }));
        expect(ended).toMatchObject({ result: 'proved', failure: null, notes: 'Gauge steady at the vent.' });
      } finally {
        await srv.deps.sequelize.query(`UPDATE tenants SET settings = settings - 'provingMaxPressure' - 'provingPressureUnit' - 'provingHoldMinutes' WHERE id = :t`, {
          replacements: { t: ids.tenantId },
        });
      }
      const r = await readiness(id);
      expect(r.proving).toEqual({ state: 'proved', at: 'J4-VT', failure: null });
      expect(r.provings.map((p) => p.result)).toEqual(['failed', 'proved']);
      expect(r.blockers).toEqual([signatureMissing]);
      const trail = await q<{ action: string }>(`SELECT action FROM audit_events WHERE tenant_id = :tenantId AND permit_id = :id AND entity_type = 'isolation_proving' ORDER BY seq`, { id });
      expect(trail.map((t) => t.action)).toEqual(['proving_started', 'proving_failed', 'proving_started', 'section_proved']);
    });

    // HSE HSG250: the permit issuer signs that the isolations are in place before work starts.
    it('finding J5: when the isolations are made and proved, then only the authoriser may sign them in place, with password and typed name, and the signature is on record', async () => {
      expect((await signIsolated(id, crew.lead, users.lead)).status).toBe(403);
      expect((await transition(crew.tech2, id, 'confirm_isolated')).status).toBe(403);
      const unsigned = await transition(crew.authoriser, id, 'confirm_isolated');
      expect(unsigned.status).toBe(400);
      expect(unsigned.body.error.details.map((d: { path: string }) => d.path).sort()).toEqual(['password', 'signedName']);
      const asAuthoriser = await expectOk(await crew.authoriser.get(`/api/permits/${id}`));
      const action = (asAuthoriser.actions as unknown as { event: string; allowed: boolean; needsSignature: boolean; label: string }[]).find((a) => a.event === 'confirm_isolated');
      expect(action).toMatchObject({ allowed: true, needsSignature: true, label: 'Sign isolations in place' });

      const signed = await expectOk(await signIsolated(id));
      expect(signed.state).toBe('isolated');
      const [row] = await q<{ signed_name: string; password_confirmed: boolean }>(
        `SELECT signed_name, password_confirmed FROM permit_signatures WHERE tenant_id = :tenantId AND permit_id = :id AND event = 'confirm_isolated'`,
        { id },
      );
      expect(row).toEqual({ signed_name: 'Priya Castellan', password_confirmed: true });
      const r = await readiness(id);
      expect(r.signature).toMatchObject({ name: 'Priya Castellan' });
      expect(r.blockers).toEqual([]);
      // Once signed, the section is not proved again under this permit.
      const vent = (await steps(crew.tech, id))[1];
      expect((await startTest(id, { stepId: vent.id, reading: 0, unit: 'psig' })).status).toBe(422);
    });
  });

  it('finding J5: when the authoriser opens an accepted permit whose isolations are not proved, then the signature action is there but blocked, with what is missing', async () => {
    const id = await accepted('Blocked signature', [{ tempLabel: 'J5-BV', tempPosition: 24.5, kind: 'block_valve' }, { tempLabel: 'J5-VT', tempPosition: 24.55, kind: 'vent' }], [24.5, 24.6], {
      downstream: 'Capped test spur beyond MP 24.7.',
    });
    const detail = await expectOk(await crew.authoriser.get(`/api/permits/${id}`));
    const action = (detail.actions as unknown as { event: string; allowed: boolean; reasons: string[] }[]).find((a) => a.event === 'confirm_isolated')!;
    expect(action.allowed).toBe(false);
    expect(action.reasons).toEqual([
      '2 of 2 isolation step(s) are not yet applied and verified by a second person.',
      'The isolating device upstream of the work is not yet applied and verified by a second person.',
      expect.stringMatching(/^Section not proved dead: /),
    ]);
    const asLead = await expectOk(await crew.lead.get(`/api/permits/${id}`));
    expect((asLead.actions as unknown as { event: string }[]).map((a) => a.event)).not.toContain('confirm_isolated');
  });
});
