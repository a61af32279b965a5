// Finding 4: CSV files as monitors and spreadsheets set to a European locale write them (semicolons,
// decimal commas, day-first dates), with a byte-order mark, CRLF and quoted values, through the real
// import routes. Number symbols per CLDR (de: decimal ",", list separator ";"); quoting per RFC 4180.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { siteDay, siteTimeOfDay } from '@shared/time/zone';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, users } from '../fixtures/permit-fixtures';
import { applyAndVerifyAll, draftWithPlan, expectOk, signInCrew, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

const chicago = 'America/Chicago';

describe('finding 4: CSV dialects through the import routes', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let permitId = '';
  let instrumentId = '';
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  /** "03.12.2026 07:15:00": site time, day first, as a monitor set to a German locale logs it. */
  const europeanStamp = (minutesAgo: number) => {
    const at = new Date(srv.clock.now().getTime() - minutesAgo * 60_000);
    const [y, m, d] = siteDay(at, chicago).split('-');
    return `${d}.${m}.${y} ${siteTimeOfDay(at, chicago)}:00`;
  };
  const postCsv = (path: string, csv: string) => crew.tech.agent.post(path).set('x-csrf-token', crew.tech.csrf).set('content-type', 'text/csv').send(csv);

  beforeAll(async () => {
    srv = await startTestServer({ env: { SESSION_IDLE_MINUTES: '600', SESSION_ABSOLUTE_HOURS: '48' } });
    // A bump test counts for its site day: keep the log and its bump test clear of local midnight.
    if (siteTimeOfDay(srv.clock.now(), chicago) >= '23:30') srv.clock.advanceMinutes(45);
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    [{ id: instrumentId }] = await q<{ id: string }>(`SELECT id FROM instruments WHERE tenant_id = :t AND serial = 'FG4-20731'`, { t: ids.tenantId });
    permitId = await draftWithPlan(srv, crew, ids);
    await toAccepted(crew, permitId);
    await applyAndVerifyAll(srv, crew, ids, permitId);
    await expectOk(await crew.authoriser.patch(`/api/instruments/${instrumentId}`, { lastBumpTestAt: srv.clock.now().toISOString() }));
    srv.clock.advanceMinutes(5);
  });
  afterAll(async () => {
    await srv?.close();
  });

  it('when a monitor log is semicolon-delimited with decimal commas and day-first times, then every reading imports with its value', async () => {
    const csv = ['Date/Time;O2 %vol;LEL %;H2S ppm;CO ppm', `${europeanStamp(4)};20,9;0;0;1,5`, `${europeanStamp(3)};20,8;0;0;2`].join('\r\n');
    const preview = await postCsv(`/api/permits/${permitId}/gas-tests/import?instrumentId=${instrumentId}&place=work_area&dryRun=true`, csv);
    expect(preview.status, JSON.stringify(preview.body)).toBe(200);
    expect(preview.body).toMatchObject({ rows: 2, validRows: 2, invalidRows: [], mapping: { timestamp: 'Date/Time', o2: 'O2 %vol', lel: 'LEL %', h2s: 'H2S ppm', co: 'CO ppm' } });
    const res = await postCsv(`/api/permits/${permitId}/gas-tests/import?instrumentId=${instrumentId}&place=work_area`, csv);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.imported).toBe(2);
    const rows = await q<{ readings: Record<string, number> }>(`SELECT readings FROM gas_tests WHERE series_id = :s ORDER BY tested_at`, { s: res.body.seriesId });
    expect(rows.map((r) => r.readings)).toEqual([
      { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1.5 },
      { o2Pct: 20.8, lelPct: 0, h2sPpm: 0, coPpm: 2 },
    ]);
  });

  it('when a log has a byte-order mark, CRLF line ends and quoted headers holding commas, then it imports', async () => {
    const csv = '\uFEFF' + ['"Time, site","O2, %vol",LEL,H2S,CO', `"${europeanStamp(2)}",20.9,0,0,1`, ''].join('\r\n');
    const res = await postCsv(`/api/permits/${permitId}/gas-tests/import?instrumentId=${instrumentId}&place=vent_outlet`, csv);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body).toMatchObject({ imported: 1, mapping: { timestamp: 'Time, site', o2: 'O2, %vol' } });
  });

  it('when a semicolon log has a broken row, then the refusal lists the row and its reason as before and nothing is written', async () => {
    const csv = ['Time;O2;LEL;H2S;CO', `${europeanStamp(1)};20,9;abc;0;1`].join('\n');
    const before = await q<{ n: number }>(`SELECT count(*)::int AS n FROM gas_tests WHERE permit_id = :permitId`, { permitId });
    const res = await crew.tech.post(`/api/permits/${permitId}/gas-tests/import`, { csv, instrumentId, place: 'work_area' });
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    expect(res.body.error.details).toEqual([{ path: 'row 2', message: 'Flammable gas (% LEL) "abc" is not a number.' }]);
    expect(await q<{ n: number }>(`SELECT count(*)::int AS n FROM gas_tests WHERE permit_id = :permitId`, { permitId })).toEqual(before);
  });

  it('when the asset register comes semicolon-delimited with a byte-order mark, CRLF and quoted values holding semicolons, then it imports', async () => {
    const admin = await srv.signIn(users.admin);
    const header = 'record_type;pipeline_code;name;product;nps;schedule;wall_thickness_in;inside_diameter_in;mop_psig;start_position;end_position;notes;tag_code;kind;position;valve_type;normal_position;remotely_operable;description';
    const csv =
      '\uFEFF' +
      [
        header,
        'pipeline;IM-5;"Import Line Five; south";ngl;6;STD;;;1440;0;22.5;"Says ""hi""; then stops";;;;;;;',
        'point;IM-5;;;;;;;;;;;IM5-BV-1;block valve;0;Ball;Closed;yes;"Station valve; east"',
        '',
      ].join('\r\n');
    const res = await admin.agent.post('/api/imports/assets').set('x-csrf-token', admin.csrf).set('content-type', 'text/csv').send(csv);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body).toMatchObject({ valid: true, applied: true, rows: 2, pipelines: { create: 1 }, points: { create: 1 } });
    const [pipe] = await q<{ name: string; notes: string }>(`SELECT name, notes FROM pipelines WHERE tenant_id = :t AND code = 'IM-5'`, { t: ids.tenantId });
    expect(pipe).toEqual({ name: 'Import Line Five; south', notes: 'Says "hi"; then stops' });
    const [point] = await q<{ description: string }>(`SELECT description FROM isolation_points WHERE tenant_id = :t AND tag_code = 'IM5-BV-1'`, { t: ids.tenantId });
    expect(point.description).toBe('Station valve; east');
  });
});
