// The gas readings chart asks for "the latest readings": with more tests than one page holds it must
// get the newest ones, not whatever is left on the last page.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { QueryTypes } from 'sequelize';
import { fetchGasSeries, GAS_SERIES_LIMIT } from '@client/features/gas-tests/api/get-gas-tests';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, signInCrew } from '../fixtures/permit-journey';

describe('gas readings chart series', () => {
  let srv: TestServer;
  let permitId = '';
  const start = new Date('2026-06-01T12:00:00Z');

  beforeAll(async () => {
    srv = await startTestServer();
    const crew = await signInCrew(srv);
    const ids = await demoIds(srv);
    permitId = await draftWithPlan(srv, crew, ids);
    const [tester] = await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM users WHERE email = :email`, { replacements: { email: users.tech }, type: QueryTypes.SELECT });
    // 501 tests, one a minute; test n reads n/10 ppm CO so each row can be told apart.
    await srv.deps.sequelize.query(
      `INSERT INTO gas_tests (tenant_id, permit_id, tester_user_id, place, tested_at, readings, verdict)
       SELECT :tenantId, :permitId, :tester, 'work_area', CAST(:start AS timestamptz) + n * interval '1 minute',
              jsonb_build_object('o2Pct', 20.9, 'lelPct', 0, 'h2sPpm', 0, 'coPpm', n / 10.0), 'pass'
       FROM generate_series(0, 500) AS n`,
      { replacements: { tenantId: ids.tenantId, permitId, tester: tester.id, start } },
    );
    // The client's fetcher speaks to relative /api paths with the browser's cookie: route it to the test server as a signed-in authoriser.
    const agent = crew.authoriser.agent;
    vi.stubGlobal('fetch', async (path: string) => {
      const res = await agent.get(path).set('accept', 'application/json');
      return new Response(res.text, { status: res.status, headers: { 'content-type': 'application/json' } });
    });
  });
  afterAll(async () => {
    vi.unstubAllGlobals();
    await srv?.close();
  });

  it('when a permit has 501 gas tests, then the chart gets the newest 500, oldest first', async () => {
    const series = await fetchGasSeries(permitId);
    expect(series).toHaveLength(GAS_SERIES_LIMIT);
    const times = series.map((t) => new Date(t.testedAt).getTime());
    expect(times[0]).toBe(start.getTime() + 60_000); // the very first test (minute 0) is the one left out
    expect(times.at(-1)).toBe(start.getTime() + 500 * 60_000);
    expect([...times].sort((a, b) => a - b)).toEqual(times);
  });
});
