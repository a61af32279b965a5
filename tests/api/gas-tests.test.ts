// Gas tests, instruments, timed checks, overdue alerts, the fire watch and shift handover, through
// the API as the demo people meet them. One hot-work permit is taken live and worked on in order.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { captureMail, type CaughtMail } from '../fixtures/mail-capture';
import { hashPassword } from '../../server/src/lib/passwords';
import { runScheduler } from '../../server/src/modules/gas-tests/scheduler';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, sign, transition, users } from '../fixtures/permit-fixtures';
import { applyAndVerifyAll, confirmChecklist, draftWithPlan, expectOk, reasonsOf, signInCrew, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

describe('gas tests, timed checks and handover through the API', () => {
  let srv: TestServer;
  let capture: Awaited<ReturnType<typeof captureMail>>;
  let crew: Crew;
  let ids: Ids;
  let permitId = '';
  let permitNumber = '';
  let inDate = '';
  let overdueCalibration = '';
  const mails: CaughtMail[] = [];
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const now = () => srv.clock.now().toISOString();
  const minutesAgo = (m: number) => new Date(srv.clock.now().getTime() - m * 60_000).toISOString();
  const clean = { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 };
  const gasTest = (client: ApiClient, readings: Record<string, number> = clean, extra: Record<string, unknown> = {}) =>
    client.post(`/api/permits/${permitId}/gas-tests`, { instrumentId: inDate, place: 'work_area', testedAt: now(), readings, ...extra });
  /** The demo monitor was bump-tested when the template was seeded; the clock moves, so bump it "now". */
  const bump = async (id = inDate) => expectOk(await crew.authoriser.patch(`/api/instruments/${id}`, { lastBumpTestAt: now() }));
  const gasTestCount = async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM gas_tests WHERE permit_id = :permitId`, { permitId }))[0].n;
  const flushMail = () => capture.flush(srv);

  beforeAll(async () => {
    capture = await captureMail(mails);
    srv = await startTestServer({ smtpPort: capture.catcher.port, env: { SESSION_IDLE_MINUTES: '600', SESSION_ABSOLUTE_HOURS: '48' } });
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    const instruments = await q<{ id: string; serial: string }>(`SELECT id, serial FROM instruments WHERE tenant_id = :t`, { t: ids.tenantId });
    inDate = instruments.find((i) => i.serial === 'FG4-20731')!.id;
    overdueCalibration = instruments.find((i) => i.serial === 'TQ4-00418')!.id;
    await bump();
    permitId = await draftWithPlan(srv, crew, ids);
    await toAccepted(crew, permitId);
    await applyAndVerifyAll(srv, crew, ids, permitId);
    await confirmChecklist(crew.lead, permitId, 'checklist');
    permitNumber = (await crew.lead.get(`/api/permits/${permitId}`)).body.number;
    expect((await crew.lead.get(`/api/permits/${permitId}`)).body.state).toBe('isolated');
  });
  afterAll(async () => {
    await srv?.close();
    await capture?.catcher.stop();
  });

  it('when anyone lists instruments, then they see the register; when the gas tester tries to add one, then 403', async () => {
    const list = await expectOk(await crew.tech.get('/api/instruments'));
    expect((list.items as { serial: string }[]).map((i) => i.serial)).toEqual(expect.arrayContaining(['FG4-20731', 'TQ4-00418']));
    expect((list.items as { serial: string }[]).map((i) => i.serial)).not.toContain('FG4-31190');
    const refused = await crew.tech.post('/api/instruments', { model: 'Test monitor', serial: 'X-1', calibrationDueOn: '2099-01-01' });
    expect(refused.status).toBe(403);
  });

  it('when the instrument is past its calibration due date, then the test is refused and says so', async () => {
    await bump(overdueCalibration);
    const res = await crew.tech.post(`/api/permits/${permitId}/gas-tests`, { instrumentId: overdueCalibration, place: 'work_area', testedAt: now(), readings: clean });
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    expect(res.body.error.message).toMatch(/TQ4-00418.*was due for calibration on \d{4}-\d{2}-\d{2}/);
    expect(res.body.error.details[0].path).toBe('instrumentId');
    expect(await gasTestCount()).toBe(0);
  });

  it('when the instrument has no bump test today (tenant rule), then the test is refused; after a bump test it is accepted', async () => {
    const created = await expectOk(
      await crew.authoriser.post('/api/instruments', { model: 'Fenmark G4 four-gas monitor', serial: 'FG4-55555', lastBumpTestAt: new Date(srv.clock.now().getTime() - 86_400_000).toISOString(), calibrationDueOn: '2099-01-01' }),
      201,
    );
    const res = await crew.tech.post(`/api/permits/${permitId}/gas-tests`, { instrumentId: created.id, place: 'work_area', testedAt: now(), readings: clean });
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    expect(res.body.error.message).toContain('has no bump test on');
    expect(res.body.error.message).toContain('requires a bump test on the day of use');
    await bump(created.id);
    expect((await crew.tech.post(`/api/permits/${permitId}/gas-tests`, { instrumentId: created.id, place: 'inside_pipe_upstream', purpose: 'before_cleaning', testedAt: now(), readings: clean })).status).toBe(201);
  });

  it('when a person with the gas tester role but no gas tester qualification records a test, then it is refused; the lead (no role) gets 403', async () => {
    await srv.deps.sequelize.query(
      `INSERT INTO memberships (tenant_id, organisation_id, user_id, role) SELECT :t, :org, id, 'gas_tester' FROM users WHERE email = :email ON CONFLICT DO NOTHING`,
      { replacements: { t: ids.tenantId, org: ids.oxbowId, email: users.tech2 } },
    );
    const before = await gasTestCount();
    const res = await gasTest(crew.tech2);
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    expect(res.body.error.message).toContain('Ana Lisgar holds no in-date gas tester qualification');
    expect((await gasTest(crew.lead)).status).toBe(403);
    expect(await gasTestCount()).toBe(before);
  });

  it('when the qualified gas tester records a passing test, then the verdict and state come back and work may start', async () => {
    const res = await gasTest(crew.tech, clean, { purpose: 'before_work' });
    const body = await expectOk(res, 201);
    expect(body.verdict).toBe('pass');
    expect(body.permitState).toBe('isolated');
    expect((body.assessment as { hotWork: boolean }).hotWork).toBe(true);
    expect((body.test as { instrument: { serial: string } }).instrument.serial).toBe('FG4-20731');
    // Issue 17, gas verdicts per place: the work area alone no longer starts the work; the pipe beyond the plug is tested too.
    expect(reasonsOf(await transition(crew.lead, permitId, 'start_work'))).toContain('Record a passing gas test inside the pipe, downstream of the plug, within 30 minutes of starting.');
    await expectOk(await gasTest(crew.tech, clean, { place: 'inside_pipe_downstream', purpose: 'before_work' }), 201);
    expect((await expectOk(await transition(crew.lead, permitId, 'start_work'))).state).toBe('live');
    const regime = await expectOk(await crew.lead.get(`/api/permits/${permitId}/regime`));
    const gas = (regime.due as { kind: string; dueAt: string; overdue: boolean }[]).find((d) => d.kind === 'gas_test')!;
    // Due 30 minutes (tenant default interval) after the last passing test.
    expect(new Date(gas.dueAt).getTime()).toBe(new Date((body.test as { testedAt: string }).testedAt).getTime() + 30 * 60_000);
    expect(gas.overdue).toBe(false);
  });

  it('when a repeat gas test becomes overdue and the scheduler runs twice, then the lead and the authoriser get one mail each, one audit event is written', async () => {
    await flushMail();
    mails.length = 0;
    srv.clock.advanceMinutes(31);
    // As the server runs it (the app role, bound by row-level security): two processes at once, then a later tick.
    await Promise.all([runScheduler(srv.appDeps), runScheduler(srv.appDeps)]);
    await runScheduler(srv.appDeps);
    await flushMail();
    await runScheduler(srv.appDeps);
    await flushMail();
    const overdue = mails.filter((m) => m.subject.startsWith(`${permitNumber} repeat gas test overdue`));
    expect(overdue.map((m) => m.to).sort()).toEqual([users.authoriser, users.lead].sort());
    expect(overdue[0].body).toContain('was due at');
    // Issue 17: the due time in the site's clock and calendar with the zone named, never a machine date.
    expect(overdue[0].body).toMatch(/was due at \d{1,2} [A-Z][a-z]{2} \d{4}, \d{2}:\d{2} C[SD]T and/);
    const events = await q<{ reason: string }>(`SELECT reason FROM audit_events WHERE permit_id = :permitId AND action = 'check_overdue' AND data->>'check' = 'gas_test'`, { permitId });
    expect(events).toHaveLength(1);
    // Issue 17: live hot work no longer carries on with its gas test overdue; past the site's grace (none by default) Holdpoint suspends it.
    expect((await expectOk(await crew.control.get(`/api/permits/${permitId}`))).state).toBe('suspended');
    await bump();
    await expectOk(await gasTest(crew.tech), 201);
    await expectOk(await gasTest(crew.tech, clean, { place: 'inside_pipe_downstream' }), 201);
    expect((await expectOk(await transition(crew.authoriser, permitId, 'resume', { reason: 'Atmosphere tested again at both places.' }))).state).toBe('live');
  });

  it('when the vent and plug checks are recorded, then a problem needs the action taken and is mailed; a clean vent check clears its due time', async () => {
    await bump();
    expect((await gasTest(crew.tech)).status).toBe(201);
    const vent = await expectOk(await crew.tech2.post(`/api/permits/${permitId}/checks`, { kind: 'vent', checkedAt: now(), vapourAwayFromWork: true, pressureBuilding: false, pressureReading: 0, pressureUnit: 'psig' }), 201);
    expect(vent.ok).toBe(true);
    const noAction = await crew.tech.post(`/api/permits/${permitId}/checks`, { kind: 'plug', checkedAt: now(), face: 'cracked' });
    expect(noAction.status).toBe(400);
    expect(noAction.body.error.details.map((d: { path: string }) => d.path)).toContain('actionTaken');
    mails.length = 0;
    const plug = await expectOk(await crew.lead.post(`/api/permits/${permitId}/checks`, { kind: 'plug', checkedAt: now(), face: 'cracked', actionTaken: 'Packed fresh bentonite over the crack; re-tested at the face.' }), 201);
    expect(plug.ok).toBe(false);
    await flushMail();
    expect(mails.filter((m) => m.subject.includes('plug check found a problem')).map((m) => m.to).sort()).toEqual([users.authoriser, users.lead].sort());
    expect((await crew.auditor.post(`/api/permits/${permitId}/checks`, { kind: 'vent', checkedAt: now(), vapourAwayFromWork: true, pressureBuilding: false })).status).toBe(403);
    const list = await expectOk(await crew.control.get(`/api/permits/${permitId}/checks?kind=plug`));
    expect(list.total).toBe(1);
    // Issue 17: the cracked plug stopped the live work at once; a later passing check of the plug and an authoriser's re-validation start it again.
    expect(plug.permitState).toBe('suspended');
    srv.clock.advanceMinutes(1);
    await expectOk(await crew.tech.post(`/api/permits/${permitId}/checks`, { kind: 'plug', checkedAt: now(), face: 'intact' }), 201);
    expect((await expectOk(await transition(crew.authoriser, permitId, 'resume', { reason: 'Plug packed and checked again.' }))).state).toBe('live');
  });

  it('when a monitor log has a bad row, then the preview lists it with reasons and the import writes nothing; a clean log imports as one series', async () => {
    // A bump test counts for the site day it was made on (the tenant's time zone, America/Chicago in
    // the demo), so the log and its bump test must fall on one site day: keep clear of local midnight.
    const siteTime = new Intl.DateTimeFormat('en-GB', { timeZone: 'America/Chicago', hour: '2-digit', minute: '2-digit', hourCycle: 'h23' }).format(srv.clock.now());
    if (siteTime >= '23:30') srv.clock.advanceMinutes(45);
    await bump();
    // The logged readings come after the morning bump test.
    srv.clock.advanceMinutes(5);
    const header = 'Time,O2 (%vol),LEL (%),H2S (ppm),CO (ppm)';
    const bad = [header, `${minutesAgo(3)},20.9,0,0,1`, `${minutesAgo(2)},20.9,abc,0,1`, `yesterday,20.9,0,0,1`].join('\n');
    const before = await gasTestCount();
    const preview = await expectOk(await crew.tech.post(`/api/permits/${permitId}/gas-tests/import`, { csv: bad, instrumentId: inDate, place: 'work_area', dryRun: true }));
    expect(preview.mapping).toEqual({ timestamp: 'Time', o2: 'O2 (%vol)', lel: 'LEL (%)', h2s: 'H2S (ppm)', co: 'CO (ppm)' });
    expect(preview.validRows).toBe(1);
    expect((preview.invalidRows as { row: number; reasons: string[] }[]).map((r) => r.row)).toEqual([3, 4]);
    expect((preview.invalidRows as { reasons: string[] }[])[0].reasons[0]).toContain('"abc" is not a number');
    const refused = await crew.tech.post(`/api/permits/${permitId}/gas-tests/import`, { csv: bad, instrumentId: inDate, place: 'work_area' });
    expect(refused.status, JSON.stringify(refused.body)).toBe(422);
    expect(refused.body.error.invalidRows).toHaveLength(2);
    expect(await gasTestCount()).toBe(before);

    const good = ['Logged at;O2;LEL;H2S;CO'.replace(/;/g, ','), `${minutesAgo(4)},20.9,0,0,1`, `${minutesAgo(3)},20.8,0,0,2`].join('\r\n');
    const mapping = { timestamp: 'Logged at', o2: 'O2', lel: 'LEL', h2s: 'H2S', co: 'CO' };
    const res = await crew.tech.agent
      .post(`/api/permits/${permitId}/gas-tests/import?instrumentId=${inDate}&place=vent_outlet&${new URLSearchParams(mapping)}`)
      .set('x-csrf-token', crew.tech.csrf)
      .set('content-type', 'text/csv')
      .send(good);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.imported).toBe(2);
    expect(res.body.permitState).toBe('live');
    const series = await q<{ n: number; source: string }>(`SELECT count(*)::int AS n, min(source) AS source FROM gas_tests WHERE series_id = :s`, { s: res.body.seriesId });
    expect(series[0]).toEqual({ n: 2, source: 'import' });
    const again = await crew.tech.post(`/api/permits/${permitId}/gas-tests/import`, { csv: good, instrumentId: inDate, place: 'vent_outlet', mapping });
    expect(again.status).toBe(422);
    expect(again.body.error.message).toContain('nothing was imported');
  });

  it('when a live reading is above the hot-work LEL limit, then the permit is suspended with the reading in the audit reason; resume needs a new pass and an authoriser', async () => {
    await bump();
    const failed = await expectOk(await gasTest(crew.tech, { o2Pct: 20.8, lelPct: 12, h2sPpm: 0, coPpm: 2 }), 201);
    expect(failed.verdict).toBe('fail');
    expect(failed.permitState).toBe('suspended');
    expect(failed.suspended).toBe(true);
    const permit = await expectOk(await crew.lead.get(`/api/permits/${permitId}`));
    expect(permit.state).toBe('suspended');
    const suspension = (permit.timeline as { action: string; reason: string; actorName: string | null }[]).filter((e) => e.action === 'suspend').at(-1)!;
    // Default hot-work limit: 0 %LEL (operator practice, no single published number; docs/calculations.md).
    expect(suspension.reason).toContain('Gas test failed: LEL 12 %LEL above the 0 %LEL limit for hot work');
    expect(suspension.reason).toContain('Sam Ferrand');
    expect(suspension.actorName).toBeNull();
    const refused = await transition(crew.lead, permitId, 'resume');
    expect(refused.status).toBe(422);
    expect(refused.body.error.details.map((d: { message: string }) => d.message)).toContain('The latest gas test failed; record a passing test first.');
    srv.clock.advanceMinutes(1);
    expect((await expectOk(await gasTest(crew.tech), 201)).permitState).toBe('suspended');
    // Issue 17: a permit Holdpoint suspended resumes only on an authoriser's re-validation, with a reason.
    expect((await expectOk(await transition(crew.authoriser, permitId, 'resume', { reason: 'Vapour source sealed; retest clear' }))).state).toBe('live');
  });

  it('when the outgoing lead signs a handover and the incoming lead accepts it, then the permit names the new holder', async () => {
    const hash = await hashPassword('holdpoint-demo');
    const [incoming] = await q<{ id: string }>(`INSERT INTO users (email, name, password_hash) VALUES ('night.lead@oxbow-repair.example', 'Ines Marwood', :hash) RETURNING id`, { hash });
    await srv.deps.sequelize.query(`INSERT INTO memberships (tenant_id, organisation_id, user_id, role) VALUES (:t, :org, :u, 'contractor_lead')`, { replacements: { t: ids.tenantId, org: ids.oxbowId, u: incoming.id } });
    // Issue 17: a handover goes only to a lead holding the in-date qualification the work needs.
    await srv.deps.sequelize.query(`INSERT INTO qualifications (tenant_id, user_id, kind, issued_on, expires_on) VALUES (:t, :u, 'hot_work_holder', current_date - 400, current_date + 400)`, {
      replacements: { t: ids.tenantId, u: incoming.id },
    });
    const night = await srv.signIn('night.lead@oxbow-repair.example');
    expect((await crew.lead.get(`/api/permits/${permitId}`)).body.holderName).toBe('Rory Kilbride');

    const unsigned = await crew.lead.post(`/api/permits/${permitId}/handovers`, { toUserId: incoming.id, openPoints: 'Weld root pass done.', password: 'wrong-password', signedName: 'Rory Kilbride' });
    expect(unsigned.status).toBe(400);
    expect((await crew.tech.post(`/api/permits/${permitId}/handovers`, { toUserId: incoming.id, openPoints: 'x', ...sign(users.lead) })).status).toBe(403);
    const handover = await expectOk(await crew.lead.post(`/api/permits/${permitId}/handovers`, { toUserId: incoming.id, openPoints: 'Root pass done; cap pass and coating to go.', ...sign(users.lead) }), 201);
    expect(handover.status).toBe('pending');
    expect((handover.readingsSummary as string[]).join('\n')).toMatch(/Gas test \d{2}:\d{2} at the work area: O2 20.9 %vol, LEL 0 %LEL, H2S 0 ppm, CO 1 ppm: PASS/);

    expect((await crew.lead.post(`/api/permits/${permitId}/handovers/${handover.id}/accept`, sign(users.lead))).status).toBe(403);
    const accepted = await expectOk(await night.post(`/api/permits/${permitId}/handovers/${handover.id}/accept`, { password: 'holdpoint-demo', signedName: 'Ines Marwood' }));
    expect(accepted.status).toBe('accepted');
    const permit = await expectOk(await crew.control.get(`/api/permits/${permitId}`));
    expect(permit.holderName).toBe('Ines Marwood');
    expect((await night.post(`/api/permits/${permitId}/handovers/${handover.id}/accept`, { password: 'holdpoint-demo', signedName: 'Ines Marwood' })).status).toBe(409);
  });

  it('when hot work stops, then hand-back is refused until the fire watch has run (60 min, NFPA 51B 2019) and a closing check clears it', async () => {
    const night = await srv.signIn('night.lead@oxbow-repair.example');
    await expectOk(await night.post(`/api/permits/${permitId}/hot-work-stopped`));
    srv.clock.advanceMinutes(30);
    const early = await transition(night, permitId, 'hand_back', { password: 'holdpoint-demo', signedName: 'Ines Marwood' });
    expect(early.status).toBe(422);
    expect(early.body.error.message).toMatch(/The fire watch runs until .* \(30 minutes more\)/);
    srv.clock.advanceMinutes(31);
    const regime = await expectOk(await night.get(`/api/permits/${permitId}/regime`));
    expect((regime.due as { kind: string; overdue: boolean }[]).find((d) => d.kind === 'fire_watch')!.overdue).toBe(true);
    await expectOk(await crew.tech.post(`/api/permits/${permitId}/checks`, { kind: 'fire_watch', checkedAt: now(), observation: 'clear' }), 201);
    const after = await expectOk(await night.get(`/api/permits/${permitId}/regime`));
    expect((after.due as { kind: string; dueAt: string | null }[]).find((d) => d.kind === 'fire_watch')!.dueAt).toBeNull();
    expect((await expectOk(await transition(night, permitId, 'hand_back', { password: 'holdpoint-demo', signedName: 'Ines Marwood' }))).state).toBe('work_complete');
  });

  it('when a permit’s validity ends, then the scheduler expires it (once, as Holdpoint)', async () => {
    const id = await draftWithPlan(srv, crew, ids, { validTo: new Date(srv.clock.now().getTime() + 20 * 60_000).toISOString() });
    await toAccepted(crew, id);
    srv.clock.advanceMinutes(21);
    await runScheduler(srv.appDeps);
    await runScheduler(srv.appDeps);
    const permit = await expectOk(await crew.lead.get(`/api/permits/${id}`));
    expect(permit.state).toBe('expired');
    expect((permit.timeline as { action: string }[]).filter((e) => e.action === 'expire')).toHaveLength(1);
  });

  it('when a permit tightens its limits, then looser values are refused and tests are judged against the tighter ones', async () => {
    const id = await draftWithPlan(srv, crew, ids, { kinds: ['cold_work'] });
    const loose = await crew.lead.put(`/api/permits/${id}/gas-limits`, { lel: { max: 12 } });
    expect(loose.status).toBe(400);
    expect(loose.body.error.details[0].path).toBe('lel.max');
    const set = await expectOk(await crew.lead.put(`/api/permits/${id}/gas-limits`, { lel: { max: 5 } }));
    expect((set.limits as { lel: { max: number } }).lel.max).toBe(5);
    await toAccepted(crew, id);
    expect((await crew.authoriser.put(`/api/permits/${id}/gas-limits`, { lel: { max: 8 } })).status).toBe(400);
    await bump();
    const res = await expectOk(await crew.tech.post(`/api/permits/${id}/gas-tests`, { instrumentId: inDate, place: 'work_area', testedAt: now(), readings: { ...clean, lelPct: 6 } }), 201);
    expect(res.verdict).toBe('fail');
    expect(res.permitState).toBe('accepted');
  });

  it('when someone of another tenant asks for the gas tests of this permit, then 404', async () => {
    const other = await srv.signIn(users.otherTenant);
    expect((await other.get(`/api/permits/${permitId}/gas-tests`)).status).toBe(404);
    expect((await other.post(`/api/permits/${permitId}/gas-tests`, { instrumentId: inDate, place: 'work_area', testedAt: now(), readings: clean })).status).toBe(404);
    expect((await other.get('/api/instruments')).body.items.map((i: { serial: string }) => i.serial)).toEqual(['FG4-31190']);
  });
});
