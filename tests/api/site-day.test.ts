// Finding 3: "on that day" rules are judged on the calendar day where the line is (the tenant's zone),
// never on the UTC date. The demo tenant Bramblecote is in America/Chicago: in winter 19:00 CST is
// already 01:00 UTC the next day (IANA tz database: CST is UTC-06:00).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { addDays, siteDay, siteTimeOfDay, wallTimeToInstant, wallTimeToIso } from '@shared/time/zone';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds } from '../fixtures/permit-fixtures';
import { applyAndVerifyAll, draftWithPlan, expectOk, signInCrew, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

const chicago = 'America/Chicago';

describe('finding 3: qualifications and monitor logs on the site day', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let day = '';
  let permitId = '';
  let instrumentId = '';
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const clean = { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 };

  beforeAll(async () => {
    srv = await startTestServer({ env: { SESSION_IDLE_MINUTES: '600', SESSION_ABSOLUTE_HOURS: '48' } });
    const [{ zone }] = await q<{ zone: string }>(`SELECT time_zone AS zone FROM tenants WHERE slug = 'bramblecote'`);
    expect(zone).toBe(chicago);
    // 19:00 on today's site day, set before anyone signs in so sessions start on the moved clock; the
    // UTC date is already the next day (19:00 CST = 01:00Z, 19:00 CDT = 00:00Z).
    day = siteDay(srv.clock.now(), chicago);
    const [y, m, d] = day.split('-').map(Number);
    srv.clock.set(wallTimeToInstant({ year: y, month: m, day: d, hour: 19, minute: 0, second: 0 }, chicago)!);
    expect(siteDay(srv.clock.now(), chicago)).toBe(day);
    expect(srv.clock.now().toISOString().slice(0, 10)).toBe(addDays(day, 1));
    ids = await demoIds(srv);
    // Every qualification of the tenant runs out at the end of this site day.
    await srv.deps.sequelize.query(`UPDATE qualifications SET issued_on = CAST(:issued AS date), expires_on = CAST(:day AS date) WHERE tenant_id = :t`, {
      replacements: { t: ids.tenantId, day, issued: addDays(day, -300) },
    });
    const [inst] = await q<{ id: string }>(`UPDATE instruments SET calibration_due_on = CAST(:due AS date) WHERE tenant_id = :t AND serial = 'FG4-20731' RETURNING id`, {
      t: ids.tenantId,
      due: addDays(day, 90),
    });
    instrumentId = inst.id;
    crew = await signInCrew(srv);
  });
  afterAll(async () => {
    await srv?.close();
  });

  it('when a qualification expires today and it is 19:00 at a Chicago site, then it is still in date: the lead accepts, the technicians isolate', async () => {
    expect(siteTimeOfDay(srv.clock.now(), chicago)).toBe('19:00');
    permitId = await draftWithPlan(srv, crew, ids);
    // accept needs the lead's in-date hot work qualification; apply and verify the technicians' lockout and verifier ones.
    await toAccepted(crew, permitId);
    await applyAndVerifyAll(srv, crew, ids, permitId);
    expect((await crew.lead.get(`/api/permits/${permitId}`)).body.state).toBe('isolated');
  });

  it('when the gas tester records a test at 19:05 site time on the day their qualification expires, then it is accepted', async () => {
    await expectOk(await crew.authoriser.patch(`/api/instruments/${instrumentId}`, { lastBumpTestAt: srv.clock.now().toISOString() }));
    srv.clock.advanceMinutes(2);
    const res = await crew.tech.post(`/api/permits/${permitId}/gas-tests`, { instrumentId, place: 'work_area', testedAt: srv.clock.now().toISOString(), readings: clean });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
  });

  it('when a monitor log holds readings from this evening (site time, the next UTC date), then the tester counts as qualified on that day', async () => {
    srv.clock.advanceMinutes(3);
    const wall = (minutesAgo: number) => new Date(srv.clock.now().getTime() - minutesAgo * 60_000);
    const local = (at: Date) => `${siteDay(at, chicago)} ${siteTimeOfDay(at, chicago)}`;
    const csv = ['Time,O2,LEL,H2S,CO', `${local(wall(2))},20.9,0,0,1`, `${local(wall(1))},20.9,0,0,1`].join('\n');
    const res = await crew.tech.post(`/api/permits/${permitId}/gas-tests/import`, { csv, instrumentId, place: 'work_area' });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.imported).toBe(2);
  });

  it('when the site clock passes midnight, then the same qualification is out of date and the message names the new site day', async () => {
    const midnight = new Date(wallTimeToIso(`${addDays(day, 1)}T00:00`, chicago));
    srv.clock.set(new Date(midnight.getTime() + 60_000));
    const res = await crew.tech.post(`/api/permits/${permitId}/gas-tests`, { instrumentId, place: 'work_area', testedAt: srv.clock.now().toISOString(), readings: clean });
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    expect(res.body.error.message).toContain(`holds no in-date gas tester qualification for ${addDays(day, 1)}`);
  });
});
