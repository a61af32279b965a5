// Stop-work conditions (issue 17, "Stop-work conditions", and issue 16's checks while isolated),
// through the real API and database as the crew meets them. Each test names its source.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { addDays, siteDay, startOfSiteDay } from '../../shared/time/zone';
import { runScheduler } from '../../server/src/modules/gas-tests/scheduler';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, sign, transition, users } from '../fixtures/permit-fixtures';
import { applyAndVerifyAll, confirmChecklist, draftWithPlan, expectOk, reasonsOf, signInCrew, steps, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

describe('stop-work conditions through the API', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let monitor = '';
  const clean = { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 };
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const now = () => srv.clock.now().toISOString();
  const setSettings = (settings: Record<string, unknown>) =>
    srv.deps.sequelize.query(`UPDATE tenants SET settings = settings || CAST(:s AS jsonb) WHERE id = :t`, { replacements: { t: ids.tenantId, s: JSON.stringify(settings) } });
  const bump = async () => expectOk(await crew.authoriser.patch(`/api/instruments/${monitor}`, { lastBumpTestAt: now() }));
  const gasAt = async (id: string, place: string, readings: Record<string, number> = clean) =>
    expectOk(await crew.tech.post(`/api/permits/${id}/gas-tests`, { instrumentId: monitor, place, testedAt: now(), readings }), 201);
  const check = (id: string, body: Record<string, unknown>) => crew.tech.post(`/api/permits/${id}/checks`, { checkedAt: now(), ...body });
  const state = async (id: string) => (await expectOk(await crew.lead.get(`/api/permits/${id}`))).state;

  /** A hot-work permit on the test plan (valve upstream, vent, plug on the downstream side), signed isolated. */
  async function isolatedPermit(overrides: Record<string, unknown> = {}) {
    const id = await draftWithPlan(srv, crew, ids, overrides);
    await toAccepted(crew, id);
    await applyAndVerifyAll(srv, crew, ids, id);
    await confirmChecklist(crew.lead, id, 'checklist');
    return id;
  }
  /** The plug checked and a pass inside the pipe beyond the plug and at the work area; then work starts. */
  async function live(id: string) {
    await bump();
    await expectOk(await check(id, { kind: 'plug', face: 'intact' }), 201);
    await gasAt(id, 'inside_pipe_downstream');
    await gasAt(id, 'work_area');
    expect((await expectOk(await transition(crew.lead, id, 'start_work'))).state).toBe('live');
  }

  beforeAll(async () => {
    srv = await startTestServer({ env: { SESSION_IDLE_MINUTES: '3000', SESSION_ABSOLUTE_HOURS: '72' } });
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    monitor = (await q<{ id: string }>(`SELECT id FROM instruments WHERE tenant_id = :t AND serial = 'FG4-20731'`, { t: ids.tenantId }))[0].id;
  });
  afterAll(async () => {
    await srv?.close();
  });

  it('finding 17.1: when a plug check finds the plug cracked on live work, then Holdpoint suspends the permit at once, says why in the audit trail and mails the alarm; work resumes only after a later passing plug check (common practice, no published source)', async () => {
    const id = await isolatedPermit();
    await live(id);
    const plug = (await steps(crew.tech, id)).find((s) => s.kind === 'plug')!;
    const recorded = await expectOk(await check(id, { kind: 'plug', isolationStepId: plug.id, face: 'cracked', actionTaken: 'Work stopped, crew withdrawn.' }), 201);
    expect(recorded.permitState).toBe('suspended');
    const [p] = await q<{ state: string; suspended_by_kind: string; number: string }>(`SELECT state, suspended_by_kind, number FROM permits WHERE id = :id`, { id });
    expect(p).toMatchObject({ state: 'suspended', suspended_by_kind: 'system' });
    const [event] = await q<{ reason: string; actor_user_id: string | null }>(`SELECT reason, actor_user_id FROM audit_events WHERE permit_id = :id AND action = 'suspend' ORDER BY seq DESC LIMIT 1`, { id });
    expect(event.actor_user_id).toBeNull();
    expect(event.reason).toMatch(/^Plug check found the plug cracked/);
    const mail = await q<{ to_address: string }>(`SELECT to_address FROM mail_outbox WHERE subject LIKE :s ORDER BY to_address`, { s: `${p.number} Suspended:%` });
    expect(mail.map((m) => m.to_address)).toEqual(expect.arrayContaining([users.authoriser, users.control, users.lead]));

    srv.clock.advanceMinutes(1);
    await gasAt(id, 'inside_pipe_downstream');
    await gasAt(id, 'work_area');
    const refused = reasonsOf(await transition(crew.authoriser, id, 'resume', { reason: 'Plug rebuilt and checked.' }));
    expect(refused.join(' ')).toMatch(/Plug check of TEST-PL-1 on .* found the plug cracked\. Check it again/);
    srv.clock.advanceMinutes(1);
    await expectOk(await check(id, { kind: 'plug', isolationStepId: plug.id, face: 'intact' }), 201);
    expect((await expectOk(await transition(crew.authoriser, id, 'resume', { reason: 'Plug rebuilt and checked.' }))).state).toBe('live');
  });

  it('finding 17.1: when a vent check finds vapour blowing toward the work on live work, then the permit is suspended by Holdpoint', async () => {
    const id = await isolatedPermit();
    await live(id);
    const recorded = await expectOk(await check(id, { kind: 'vent', vapourAwayFromWork: false, pressureBuilding: true, actionTaken: 'Crew withdrawn upwind.' }), 201);
    expect(recorded.permitState).toBe('suspended');
    const [event] = await q<{ reason: string }>(`SELECT reason FROM audit_events WHERE permit_id = :id AND action = 'suspend' ORDER BY seq DESC LIMIT 1`, { id });
    expect(event.reason).toContain('Vent check found vapour toward the work and pressure building');
  });

  it('finding 17.2: when the repeat gas test on live hot work is overdue beyond the site grace, then the scheduler suspends the permit once, with the reason and the alarm (default grace: none)', async () => {
    const id = await isolatedPermit();
    await live(id);
    await setSettings({ gasTestOverdueGraceMinutes: 10 });
    srv.clock.advanceMinutes(35); // 5 min overdue on a 30-minute interval: within the grace
    await runScheduler(srv.appDeps);
    expect(await state(id)).toBe('live');
    srv.clock.advanceMinutes(10);
    await Promise.all([runScheduler(srv.appDeps), runScheduler(srv.appDeps)]);
    await runScheduler(srv.appDeps);
    expect(await state(id)).toBe('suspended');
    const events = await q<{ reason: string }>(`SELECT reason FROM audit_events WHERE permit_id = :id AND action = 'suspend'`, { id });
    expect(events).toHaveLength(1);
    expect(events[0].reason).toMatch(/^Repeat gas test overdue on hot work: it was due at .* (CST|CDT)/);
    await setSettings({ gasTestOverdueGraceMinutes: 0 });

    const other = await isolatedPermit();
    await live(other);
    srv.clock.advanceMinutes(31);
    await runScheduler(srv.appDeps);
    expect(await state(other)).toBe('suspended');
  });

  it('finding 17.3: when a gas test fails inside the pipe and a later pass is at the work area, then work cannot resume until a pass at the same place; start needs a pass at every place the regime requires', async () => {
    const id = await isolatedPermit();
    await bump();
    await expectOk(await check(id, { kind: 'plug', face: 'intact' }), 201);
    await gasAt(id, 'work_area');
    const before = reasonsOf(await transition(crew.lead, id, 'start_work'));
    expect(before).toContain('Record a passing gas test inside the pipe, downstream of the plug, within 30 minutes of starting.');
    await gasAt(id, 'inside_pipe_downstream');
    expect((await expectOk(await transition(crew.lead, id, 'start_work'))).state).toBe('live');

    srv.clock.advanceMinutes(2);
    const failed = await gasAt(id, 'inside_pipe_downstream', { ...clean, lelPct: 3 });
    expect(failed.permitState).toBe('suspended');
    srv.clock.advanceMinutes(1);
    await gasAt(id, 'work_area');
    const refused = reasonsOf(await transition(crew.authoriser, id, 'resume', { reason: 'Re-tested.' }));
    expect(refused).toContain('The latest gas test inside the pipe, downstream of the plug, failed; record a passing test at the same place first.');
    // The gas-test section shows the same: the verdict at each place and why work cannot resume.
    const regime = await expectOk(await crew.lead.get(`/api/permits/${id}/regime`));
    const stopWork = regime.stopWork as { places: { place: string; latest: string; required: boolean }[]; blockers: string[] };
    expect(stopWork.places.find((p) => p.place === 'inside_pipe_downstream')).toMatchObject({ latest: 'fail', required: true });
    expect(stopWork.places.find((p) => p.place === 'work_area')).toMatchObject({ latest: 'pass', required: true });
    expect(stopWork.blockers).toContain('The latest gas test inside the pipe, downstream of the plug, failed; record a passing test at the same place first.');
    srv.clock.advanceMinutes(1);
    await gasAt(id, 'inside_pipe_downstream');
    expect((await expectOk(await transition(crew.authoriser, id, 'resume', { reason: 'Re-tested at both places.' }))).state).toBe('live');
  });

  it('finding 17.3: when a reading at a vent outlet shows vapour, then it is judged against the vent-outlet limit (common practice, no published source), never the 0 %LEL hot-work limit', async () => {
    const id = await isolatedPermit();
    await live(id);
    const vent = await gasAt(id, 'vent_outlet', { ...clean, lelPct: 15 });
    expect(vent.verdict).toBe('pass');
    expect(vent.permitState).toBe('live');
    const lel = (vent.assessment as { gases: { lel: { limit: { max: number }; source: string } } }).gases.lel;
    expect(lel.limit.max).toBe(25);
    expect(lel.source).toContain('common practice, no published source');
    const high = await gasAt(id, 'vent_outlet', { ...clean, lelPct: 40 });
    expect(high.verdict).toBe('fail');
    // A monitor log taken at the vent outlet is judged the same way.
    srv.clock.advanceMinutes(2);
    const csv = ['Time,O2 (%vol),LEL (%),H2S (ppm),CO (ppm)', `${now()},20.9,15,0,1`].join('\n');
    const preview = await expectOk(await crew.tech.post(`/api/permits/${id}/gas-tests/import`, { csv, instrumentId: monitor, place: 'vent_outlet', dryRun: true }));
    expect((preview.preview as { verdict: string }[]).map((r) => r.verdict)).toEqual(['pass']);
  });

  it('finding 17.4: when the fire watch time is over but no closing check "area clear, nothing smouldering" is recorded, then hand-back is refused (NFPA 51B, 2019 edition)', async () => {
    const id = await isolatedPermit();
    await live(id);
    await expectOk(await crew.lead.post(`/api/permits/${id}/hot-work-stopped`, {}));
    srv.clock.advanceMinutes(61);
    const refused = reasonsOf(await transition(crew.lead, id, 'hand_back', sign(users.lead)));
    expect(refused.join(' ')).toMatch(/Record the fire watch closing check \(area clear, nothing smouldering\), made after the watch ended at .* (CST|CDT)\./);
    await expectOk(await check(id, { kind: 'fire_watch', observation: 'clear' }), 201);
    expect((await expectOk(await transition(crew.lead, id, 'hand_back', sign(users.lead)))).state).toBe('work_complete');
  });

  it('finding 17.4: when a permit asks for a 30-minute fire watch, then it is refused citing NFPA 51B (2019 edition) unless the site chose the OSHA half hour (29 CFR 1910.252(a)(2)(iii)(B))', async () => {
    const refused = await crew.lead.post('/api/permits', permitBody(ids, srv.clock.now(), { fireWatchMinutes: 30 }));
    expect(refused.status, JSON.stringify(refused.body)).toBe(400);
    expect(refused.body.error.details).toContainEqual({ path: 'fireWatchMinutes', message: 'NFPA 51B (2019 edition) requires a fire watch of at least 60 minutes after hot work.' });
    await setSettings({ fireWatchBasis: 'osha_half_hour', fireWatchMinutes: 30 });
    const id = await draftWithPlan(srv, crew, ids, { fireWatchMinutes: 30 });
    expect((await expectOk(await crew.lead.get(`/api/permits/${id}`))).fireWatchMinutes).toBe(30);
    await setSettings({ fireWatchBasis: 'nfpa_51b_2019', fireWatchMinutes: 60 });
  });

  it('finding 17.5: when a site raises the hot-work flammable limit without a stated reason, then 0 %LEL stays; with a reason, the limit and the reason are shown, never as a published 10 %LEL', async () => {
    const id = await isolatedPermit();
    await setSettings({ hotWorkLelPct: 5 });
    let regime = await expectOk(await crew.lead.get(`/api/permits/${id}/regime`));
    let hot = (regime.limits as { hotWorkLel: { max: number; source: string } }).hotWorkLel;
    expect(hot.max).toBe(0);
    expect(hot.source).toContain('no published figure');
    await setSettings({ hotWorkLelPct: 5, hotWorkLelReason: 'Operator standard OS-114 for cold-cut then weld on drained lines.' });
    regime = await expectOk(await crew.lead.get(`/api/permits/${id}/regime`));
    hot = (regime.limits as { hotWorkLel: { max: number; source: string } }).hotWorkLel;
    expect(hot.max).toBe(5);
    expect(hot.source).toContain('reason given: Operator standard OS-114');
    expect(hot.source).not.toMatch(/published .*10|10 %LEL.*published/);
    await setSettings({ hotWorkLelPct: 0 });
  });

  it('finding 16.6: when the isolations are signed in place, then vent and plug checks fall due before work starts; a plug left overnight is checked again before work starts (common practice, no published source)', async () => {
    const id = await isolatedPermit({ validTo: new Date(srv.clock.now().getTime() + 36 * 3600_000).toISOString() });
    const regime = await expectOk(await crew.lead.get(`/api/permits/${id}/regime`));
    const due = regime.due as { kind: string; dueAt: string | null }[];
    expect(due.find((d) => d.kind === 'plug')!.dueAt).not.toBeNull();
    expect(due.find((d) => d.kind === 'vent')!.dueAt).not.toBeNull();

    // The next morning on the site's clock: the plug was built yesterday and never checked since.
    const { timeZone } = (await q<{ timeZone: string }>(`SELECT time_zone AS "timeZone" FROM tenants WHERE id = :t`, { t: ids.tenantId }))[0];
    srv.clock.set(new Date(startOfSiteDay(addDays(siteDay(srv.clock.now(), timeZone), 1), timeZone).getTime() + 7 * 3600_000));
    await bump();
    await gasAt(id, 'inside_pipe_downstream');
    await gasAt(id, 'work_area');
    const refused = reasonsOf(await transition(crew.lead, id, 'start_work'));
    expect(refused.join(' ')).toMatch(/The plugs have been in overnight \(last checked .*\); check them again today before work starts or resumes\./);
    await expectOk(await check(id, { kind: 'plug', face: 'intact' }), 201);
    expect((await expectOk(await transition(crew.lead, id, 'start_work'))).state).toBe('live');
  });
});
