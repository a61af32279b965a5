// Times people give for what they saw or did on a permit (an isolation applied, a plug built, a gas
// test, a timed check, a monitor's log) lie within the permit's life, not in the future, and at most
// the tenant's late-entry window back; an entry made after the event is marked "entered late".
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, steps, tempPlan, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

type ErrorBody = { error: { code: string; message: string; details: { path: string; message: string }[] } };

describe('finding 10: times given for observations are bounded by the permit, the clock and the late-entry window', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let permitId = '';
  let issuedAt: Date;
  let monitor = '';
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const minutesFromNow = (m: number) => new Date(srv.clock.now().getTime() + m * 60_000).toISOString();
  const clean = { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 };
  const gasTest = (testedAt: string) => crew.tech.post(`/api/permits/${permitId}/gas-tests`, { instrumentId: monitor, place: 'work_area', testedAt, readings: clean });
  const ventCheck = (checkedAt: string) => crew.tech.post(`/api/permits/${permitId}/checks`, { kind: 'vent', checkedAt, vapourAwayFromWork: true, pressureBuilding: false });
  const refused = (res: { status: number; body: unknown }, path: string, words: RegExp) => {
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    const { error } = res.body as ErrorBody;
    expect(error.code).toBe('unprocessable');
    expect(error.message).toMatch(words);
    expect(error.details.map((d) => d.path)).toEqual([path]);
  };
  const setLateWindow = (minutes: number | null) =>
    srv.deps.sequelize.query(
      minutes === null
        ? `UPDATE tenants SET settings = settings - 'lateEntryWindowMinutes' WHERE id = :t`
        : `UPDATE tenants SET settings = settings || jsonb_build_object('lateEntryWindowMinutes', :minutes) WHERE id = :t`,
      { replacements: { t: ids.tenantId, minutes } },
    );

  beforeAll(async () => {
    srv = await startTestServer({ env: { SESSION_IDLE_MINUTES: '600', SESSION_ABSOLUTE_HOURS: '48' } });
    // The monitor's bump test counts for its site day (America/Chicago): keep the whole test within one.
    const siteHour = () => Number(new Intl.DateTimeFormat('en-GB', { timeZone: 'America/Chicago', hour: '2-digit', hourCycle: 'h23' }).format(srv.clock.now()));
    while (siteHour() < 3 || siteHour() > 19) srv.clock.advanceMinutes(60);
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    const [inDate] = await q<{ id: string }>(`SELECT id FROM instruments WHERE tenant_id = :t AND serial = 'FG4-20731'`, { t: ids.tenantId });
    monitor = inDate.id;
    await expectOk(await crew.authoriser.patch(`/api/instruments/${monitor}`, { lastBumpTestAt: srv.clock.now().toISOString() }));
    srv.clock.advanceMinutes(5);
    // The vent and the plug first in the plan, so applying them is in the plan's order and only their times are judged.
    const [valve, vent, plug] = tempPlan;
    permitId = await draftWithPlan(srv, crew, ids, {}, crew.lead, [vent, plug, valve]);
    await toAccepted(crew, permitId);
    issuedAt = srv.clock.now();
    // An hour and a half into the permit: the default late-entry window (60 minutes) now reaches back past half of it.
    srv.clock.advanceMinutes(90);
  });
  afterAll(() => srv?.close());

  it('when an isolation is recorded as applied in 1970, before the permit was issued, in the future or over an hour ago, then 422 says why and the step stays planned', async () => {
    const vent = (await steps(crew.tech, permitId)).find((s) => s.kind === 'vent')!;
    const apply = (appliedAt: string) => crew.tech.post(`/api/permits/${permitId}/isolations/${vent.id}/apply`, { appliedAt });
    refused(await apply('1970-01-01T00:00:00Z'), 'appliedAt', /before the permit was issued/);
    refused(await apply(new Date(issuedAt.getTime() - 60_000).toISOString()), 'appliedAt', /before the permit was issued/);
    refused(await apply(minutesFromNow(10)), 'appliedAt', /in the future/);
    refused(await apply(minutesFromNow(-70)), 'appliedAt', /more than 60 minutes ago/);
    const [row] = await q<{ status: string; applied_at: Date | null }>(`SELECT status, applied_at FROM isolation_steps WHERE id = :id`, { id: vent.id });
    expect(row).toEqual({ status: 'planned', applied_at: null });
  });

  it('when an isolation applied half an hour ago is recorded now, then it is accepted and marked entered late, in the record and the audit trail', async () => {
    const vent = (await steps(crew.tech, permitId)).find((s) => s.kind === 'vent')!;
    const appliedAt = minutesFromNow(-30);
    const step = await expectOk(await crew.tech.post(`/api/permits/${permitId}/isolations/${vent.id}/apply`, { appliedAt }));
    expect(step).toMatchObject({ status: 'applied', appliedEnteredLate: true });
    expect(new Date(step.appliedAt as unknown as string).toISOString()).toBe(appliedAt);
    const [event] = await q<{ data: Record<string, unknown> }>(`SELECT data FROM audit_events WHERE entity_id = :id AND action = 'isolation_applied'`, { id: vent.id });
    expect(event.data).toMatchObject({ enteredLate: true, appliedAt });
  });

  it('when a plug is recorded as built in 1970, then 422; applied a minute "ahead" (within clock skew) it is accepted and not late', async () => {
    const plug = (await steps(crew.tech, permitId)).find((s) => s.kind === 'plug')!;
    const asBuilt = { bentoniteLb: 31, waterLb: 31, lengthIn: 15.5 };
    refused(await crew.tech.post(`/api/permits/${permitId}/isolations/${plug.id}/apply`, { asBuilt: { ...asBuilt, builtAt: '1970-01-01T00:00:00Z' } }), 'asBuilt.builtAt', /before the permit was issued/);
    const step = await expectOk(await crew.tech.post(`/api/permits/${permitId}/isolations/${plug.id}/apply`, { asBuilt, appliedAt: minutesFromNow(1) }));
    expect(step).toMatchObject({ status: 'applied', appliedEnteredLate: false });
  });

  it('when a gas test is dated 1970, before the permit was issued or in the future, then 422 and nothing is written', async () => {
    const count = async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM gas_tests WHERE permit_id = :permitId`, { permitId }))[0].n;
    const before = await count();
    refused(await gasTest('1970-01-01T00:00:00Z'), 'testedAt', /before the permit was issued/);
    refused(await gasTest(new Date(issuedAt.getTime() - 60_000).toISOString()), 'testedAt', /before the permit was issued/);
    refused(await gasTest(minutesFromNow(3)), 'testedAt', /in the future/);
    expect(await count()).toBe(before);
  });

  it('when a gas test taken 30 minutes ago is recorded, then it is marked entered late; one taken now is not; a tenant window of 15 minutes refuses it', async () => {
    const late = await expectOk(await gasTest(minutesFromNow(-30)), 201);
    expect((late.test as unknown as { enteredLate: boolean }).enteredLate).toBe(true);
    const onTime = await expectOk(await gasTest(minutesFromNow(0)), 201);
    expect((onTime.test as unknown as { enteredLate: boolean }).enteredLate).toBe(false);
    const list = await expectOk(await crew.lead.get(`/api/permits/${permitId}/gas-tests`));
    const listed = list.items as unknown as { id: string; enteredLate: boolean }[];
    expect(listed.find((t) => t.id === (late.test as unknown as { id: string }).id)?.enteredLate).toBe(true);
    try {
      await setLateWindow(15);
      refused(await gasTest(minutesFromNow(-30)), 'testedAt', /more than 15 minutes ago/);
    } finally {
      await setLateWindow(null);
    }
  });

  it('when a vent check is dated 1970, then 422; one made 20 minutes ago is accepted and marked entered late', async () => {
    refused(await ventCheck('1970-01-01T00:00:00Z'), 'checkedAt', /before the permit was issued/);
    refused(await ventCheck(minutesFromNow(-61)), 'checkedAt', /more than 60 minutes ago/);
    const check = await expectOk(await ventCheck(minutesFromNow(-20)), 201);
    expect(check.enteredLate).toBe(true);
    const list = await expectOk(await crew.lead.get(`/api/permits/${permitId}/checks`));
    expect((list.items as unknown as { id: string; enteredLate: boolean }[]).find((c) => c.id === check.id)?.enteredLate).toBe(true);
  });

  it('when a monitor log has readings from before the permit was issued or older than the window, then those rows are refused; recent past readings import marked entered late', async () => {
    const header = 'Time,O2 (%vol),LEL (%),H2S (ppm),CO (ppm)';
    const row = (at: string) => `${at},20.9,0,0,1`;
    // The first reading is after the monitor's bump test but before the permit was issued.
    const bad = [header, row(new Date(issuedAt.getTime() - 2 * 60_000).toISOString()), row(minutesFromNow(-80)), row(minutesFromNow(-25))].join('\n');
    const preview = await expectOk(await crew.tech.post(`/api/permits/${permitId}/gas-tests/import`, { csv: bad, instrumentId: monitor, place: 'work_area', dryRun: true }));
    const invalid = preview.invalidRows as unknown as { row: number; reasons: string[] }[];
    expect(invalid.map((r) => r.row)).toEqual([2, 3]);
    expect(invalid[0].reasons.join(' ')).toMatch(/before the permit was issued/);
    expect(invalid[1].reasons.join(' ')).toMatch(/more than 60 minutes ago/);
    expect((await crew.tech.post(`/api/permits/${permitId}/gas-tests/import`, { csv: bad, instrumentId: monitor, place: 'work_area' })).status).toBe(422);

    const good = [header, row(minutesFromNow(-25)), row(minutesFromNow(-24))].join('\n');
    const res = await expectOk(await crew.tech.post(`/api/permits/${permitId}/gas-tests/import`, { csv: good, instrumentId: monitor, place: 'work_area' }), 201);
    const stored = await q<{ entered_late: boolean }>(`SELECT entered_late FROM gas_tests WHERE series_id = :s`, { s: res.seriesId });
    expect(stored).toEqual([{ entered_late: true }, { entered_late: true }]);
  });
});
