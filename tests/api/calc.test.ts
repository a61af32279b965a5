import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { AS_BUILT_MAX_LB, MAX_PIPE_DIAMETER_IN, MUD_PLUG_CAUTION, mudPlug, plugUnits } from '@shared/calc';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, steps, tempPlan, toAccepted, type Crew } from '../fixtures/permit-journey';

let srv: TestServer;
let tech: ApiClient;

beforeAll(async () => {
  srv = await startTestServer();
  tech = await srv.signIn('tech@oxbow-repair.example');
});
afterAll(async () => {
  await srv?.close();
});

const relative = (actual: number, expected: number) => Math.abs(actual / expected - 1);

function expectRefused(res: { status: number; body: { error?: { code: string; message: string; details: { path: string; message: string }[] } } }, path: string) {
  expect(res.status).toBe(400);
  expect(res.body.error?.code).toBe('validation_failed');
  expect(res.body.error?.message).toEqual(expect.stringMatching(/\S/));
  expect(res.body.error?.details.map((d) => d.path)).toContain(path);
  for (const d of res.body.error?.details ?? []) expect(d.message).toEqual(expect.stringMatching(/\S/));
}

describe('GET /api/calc/mud-plug', () => {
  // D³/16 lb of paste, ±10 %, plug 1.5 × D, balls 3 in across (ceil(D³/12)), 50/50 to 60/40 water to
  // bentonite by weight: common practice, no published source. Water 8.33 lb/US gal: the figure used in
  // mud-weight formulas (trade reference).
  it('when a technician asks for a 10-in pipe at the default mix, then 62.5 lb of paste, half of it water, a 15-in plug and 84 balls', async () => {
    const res = await tech.get('/api/calc/mud-plug?diameterIn=10');
    expect(res.status).toBe(200);
    expect(res.body.mudLb).toBeCloseTo(62.5, 10);
    expect(res.body.bentoniteLb).toBeCloseTo(31.25, 10);
    expect(res.body.waterLb).toBeCloseTo(31.25, 10);
    expect(res.body.waterGal).toBeCloseTo(31.25 / 8.33, 10);
    expect(res.body.plugLengthIn).toBeCloseTo(15, 10);
    expect(res.body.mudLbRange[0]).toBeCloseTo(56.25, 10);
    expect(res.body.mudLbRange[1]).toBeCloseTo(68.75, 10);
    expect(res.body.mudBalls).toBe(84);
    expect(res.body.caution).toBe(MUD_PLUG_CAUTION);
    expect(res.body.basis).toEqual({ diameterIn: 10, waterFraction: 0.5, source: 'common practice, no published source' });
  });

  it('when the mix is 60/40, then a 10-in plug takes 37.5 lb of water and 25 lb of bentonite (common practice, no published source)', async () => {
    const res = await tech.get('/api/calc/mud-plug?diameterIn=10&waterFraction=0.6');
    expect(res.status).toBe(200);
    expect(res.body.waterLb).toBeCloseTo(37.5, 10);
    expect(res.body.bentoniteLb).toBeCloseTo(25, 10);
    expect(res.body.mudLb).toBeCloseTo(62.5, 10);
  });

  it.each([
    ['negative', 'diameterIn=-10'],
    ['zero', 'diameterIn=0'],
    ['absurd', 'diameterIn=1000'],
    ['below the smallest pipe', 'diameterIn=0.05'],
    ['not a number', 'diameterIn=ten'],
    ['hexadecimal', 'diameterIn=0x10'],
    ['empty', 'diameterIn='],
    ['missing', ''],
    ['given twice', 'diameterIn=10&diameterIn=12'],
  ])('when the diameter is %s, then 400 naming diameterIn', async (_label, query) => {
    expectRefused(await tech.get(`/api/calc/mud-plug?${query}`), 'diameterIn');
  });

  it('when the diameter is zero, then the message says it must be a number greater than 0', async () => {
    const res = await tech.get('/api/calc/mud-plug?diameterIn=0');
    expect(res.body.error.message).toBe('diameterIn must be a number greater than 0.');
  });

  it('when the water share is 0.7, then 400 with a message saying the mix is 50/50 to 60/40 by weight', async () => {
    const res = await tech.get('/api/calc/mud-plug?diameterIn=10&waterFraction=0.7');
    expectRefused(res, 'waterFraction');
    expect(res.body.error.message).toMatch(/0\.50 to 0\.60/);
    expect(res.body.error.message).toMatch(/50\/50 to 60\/40 water to bentonite by weight/);
  });
});

describe('GET /api/calc/pipe', () => {
  // ASME B36.10M-2004, Table 1: NPS 10 Sch 40 (= STD) OD 10.750 in, wall 0.365 in, so ID 10.020 in.
  it.each(['40', 'STD', 'sch 40'])('when NPS 10 schedule %s is asked, then OD 10.750, wall 0.365 and ID 10.020 in (ASME B36.10M)', async (schedule) => {
    const res = await tech.get(`/api/calc/pipe?nps=10&schedule=${encodeURIComponent(schedule)}`);
    expect(res.status).toBe(200);
    expect(Object.keys(res.body).sort()).toEqual(['idIn', 'odIn', 'wallIn']);
    expect(res.body.odIn).toBeCloseTo(10.75, 6);
    expect(res.body.wallIn).toBeCloseTo(0.365, 6);
    expect(res.body.idIn).toBeCloseTo(10.02, 6);
  });

  it('when NPS 22 Sch 40 is asked, then 400 on the schedule: ASME B36.10M lists no Sch 40 wall for NPS 22', async () => {
    const res = await tech.get('/api/calc/pipe?nps=22&schedule=40');
    expectRefused(res, 'schedule');
    expect(res.body.error.message).toMatch(/NPS 22/);
  });

  it.each([
    ['an NPS that is not a standard size', 'nps=11&schedule=40', 'nps'],
    ['an unknown schedule', 'nps=10&schedule=5', 'schedule'],
    ['no schedule', 'nps=10', 'schedule'],
    ['a negative NPS', 'nps=-4&schedule=40', 'nps'],
    ['no NPS', 'schedule=40', 'nps'],
  ])('when %s is asked, then 400 naming %s', async (_label, query, path) => {
    expectRefused(await tech.get(`/api/calc/pipe?${query}`), path);
  });
});

describe('GET /api/calc/pipe-sizes', () => {
  it('when the sizes are listed, then Sch 40 leaves out NPS 22, 26, 28 and 30 as ASME B36.10M does, and STD goes to NPS 36', async () => {
    const res = await tech.get('/api/calc/pipe-sizes');
    expect(res.status).toBe(200);
    expect(res.body.source).toMatch(/ASME B36\.10M/);
    const sizes = (schedule: string) => res.body.schedules.find((s: { schedule: string }) => s.schedule === schedule).sizes.map((o: { nps: number }) => o.nps);
    for (const nps of [22, 26, 28, 30]) expect(sizes('40')).not.toContain(nps);
    expect(sizes('40')).toContain(24);
    expect(sizes('STD')).toContain(36);
    expect(sizes('80')).not.toContain(26);
  });

  it('finding 17: when the sizes are listed, then every B36.10M schedule is offered, NPS 1/8 to 48 (STD and XS), XXS to NPS 12', async () => {
    const res = await tech.get('/api/calc/pipe-sizes');
    expect(res.status).toBe(200);
    expect(res.body.schedules.map((s: { label: string }) => s.label)).toEqual([
      'Sch 10', 'Sch 20', 'Sch 30', 'STD', 'Sch 40', 'Sch 60', 'XS', 'Sch 80', 'Sch 100', 'Sch 120', 'Sch 140', 'Sch 160', 'XXS',
    ]);
    const sizes = (schedule: string) => res.body.schedules.find((s: { schedule: string }) => s.schedule === schedule).sizes.map((o: { nps: number }) => o.nps);
    expect(sizes('STD').at(0)).toBe(0.125);
    expect(sizes('STD').at(-1)).toBe(48);
    expect(sizes('XXS').at(-1)).toBe(12);
  });

  it('finding 17: when NPS 10 XXS is asked, then OD 10.750, wall 1.000 and bore 8.750 in (ASME B36.10M)', async () => {
    const res = await tech.get('/api/calc/pipe?nps=10&schedule=xxs');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ odIn: 10.75, wallIn: 1, idIn: expect.closeTo(8.75, 9) });
  });
});

describe('GET /api/calc/line-fill', () => {
  // Field rule bbl/ft = ID²/1029.4 and US gal/ft = 0.0408 × ID² (trade reference, oilfield tables).
  it('when the bore is 4.000 in, then 0.01554 bbl per foot (ID²/1029.4)', async () => {
    const res = await tech.get('/api/calc/line-fill?idIn=4&lengthFt=1000');
    expect(res.status).toBe(200);
    expect(res.body.bblPerFt).toBeCloseTo(0.01554, 5);
    expect(relative(res.body.galPerFt, 0.0408 * 16)).toBeLessThan(0.001);
    expect(relative(res.body.barrels, (16 / 1029.4) * 1000)).toBeLessThan(1e-4);
    // 1 bbl = 42 US gal (exact) and 1 US gal = 3.785411784 L (exact).
    expect(res.body.gallons).toBeCloseTo(res.body.barrels * 42, 8);
    expect(res.body.cubicMetres).toBeCloseTo((res.body.gallons * 3.785411784) / 1000, 10);
  });

  it('when the bore is the NPS 10 Sch 40 inside diameter of 10.020 in, then 1,000 ft holds 10.02²/1029.4 × 1,000 bbl', async () => {
    const res = await tech.get('/api/calc/line-fill?idIn=10.02&lengthFt=1000');
    expect(relative(res.body.barrels, ((10.02 * 10.02) / 1029.4) * 1000)).toBeLessThan(1e-4);
  });

  it.each([
    ['a negative bore', 'idIn=-4&lengthFt=10', 'idIn'],
    ['a zero bore', 'idIn=0&lengthFt=10', 'idIn'],
    ['an absurd bore', 'idIn=1000&lengthFt=10', 'idIn'],
    ['a bore that is not a number', 'idIn=four&lengthFt=10', 'idIn'],
    ['no bore', 'lengthFt=10', 'idIn'],
    ['a zero length', 'idIn=4&lengthFt=0', 'lengthFt'],
    ['a length past 1,000 miles', 'idIn=4&lengthFt=6000000', 'lengthFt'],
    ['no length', 'idIn=4', 'lengthFt'],
  ])('when given %s, then 400 naming %s', async (_label, query, path) => {
    expectRefused(await tech.get(`/api/calc/line-fill?${query}`), path);
  });
});

describe('POST /api/calc/atmosphere', () => {
  // OSHA 29 CFR 1910.146(b): hazardous at flammable gas in excess of 10 % LFL, oxygen below 19.5 % or above 23.5 %.
  it('when flammable gas reads 12 %LEL, then it fails against the 10 %LEL limit and names OSHA 1910.146', async () => {
    const res = await tech.post('/api/calc/atmosphere', { readings: { o2Pct: 20.9, lelPct: 12 } });
    expect(res.status).toBe(200);
    expect(res.body.verdict).toBe('fail');
    expect(res.body.gases.lel.verdict).toBe('fail');
    expect(res.body.gases.lel.limit).toEqual({ max: 10, unit: '%LEL' });
    expect(res.body.gases.lel.source).toMatch(/1910\.146/);
    expect(res.body.gases.o2.verdict).toBe('pass');
  });

  it('when oxygen reads exactly 19.5 % and flammable gas exactly 10 %LEL, then it passes (OSHA 1910.146: "below" and "in excess of")', async () => {
    const res = await tech.post('/api/calc/atmosphere', { readings: { o2Pct: 19.5, lelPct: 10 } });
    expect(res.body.verdict).toBe('pass');
  });

  it('when flammable gas reads 5 %LEL, then it passes for general work but fails for hot work (operator practice 0 %LEL, no published number)', async () => {
    const general = await tech.post('/api/calc/atmosphere', { readings: { o2Pct: 20.9, lelPct: 5 } });
    const hot = await tech.post('/api/calc/atmosphere', { readings: { o2Pct: 20.9, lelPct: 5 }, hotWork: true });
    expect(general.body.verdict).toBe('pass');
    expect(hot.body.verdict).toBe('fail');
    expect(hot.body.hotWork).toBe(true);
    expect(hot.body.gases.lel.limit.max).toBe(0);
  });

  it('when only flammable gas is typed, then oxygen is "not measured" and the test fails, as a form sending text would', async () => {
    const res = await tech.post('/api/calc/atmosphere', { readings: { o2Pct: '', lelPct: '3' } });
    expect(res.status).toBe(200);
    expect(res.body.gases.o2.verdict).toBe('not measured');
    expect(res.body.gases.lel.value).toBe(3);
    expect(res.body.verdict).toBe('fail');
  });

  it.each([
    ['a negative reading', { readings: { lelPct: -1 } }, 'readings.lelPct'],
    ['%LEL above 100', { readings: { lelPct: 150 } }, 'readings.lelPct'],
    ['oxygen that is not a number', { readings: { o2Pct: 'lots' } }, 'readings.o2Pct'],
    ['a reading sent as true', { readings: { coPpm: true } }, 'readings.coPpm'],
    ['no readings at all', {}, 'readings'],
    ['hot work as text', { readings: {}, hotWork: 'yes' }, 'hotWork'],
  ])('when given %s, then 400 naming %s', async (_label, body, path) => {
    expectRefused(await tech.post('/api/calc/atmosphere', body), path);
  });

  describe("with the tenant's own limits in tenants.settings", () => {
    const setSettings = (slug: string, settings: object) =>
      srv.deps.sequelize.query(`UPDATE tenants SET settings = CAST(:settings AS jsonb) WHERE slug = :slug`, { replacements: { slug, settings: JSON.stringify(settings) } });
    afterAll(async () => {
      await setSettings('bramblecote', {});
    });

    it('when the tenant allows 5 %LEL for hot work and holds H₂S to 5 ppm, then 4 %LEL passes and 6 ppm H₂S fails, each citing the tenant', async () => {
      // Issue 17: the hot-work limit is raised above 0 %LEL only with a stated reason, which the source then carries.
      await setSettings('bramblecote', { hotWorkLelPct: 5, hotWorkLelReason: 'Operator standard for cold-cut pipe.', atmosphereLimits: { h2s: { max: 5 } } });
      const res = await tech.post('/api/calc/atmosphere', { readings: { o2Pct: 20.9, lelPct: 4, h2sPpm: 6 }, hotWork: true });
      expect(res.body.gases.lel.source).toContain('reason given: Operator standard for cold-cut pipe.');
      expect(res.body.gases.lel.verdict).toBe('pass');
      expect(res.body.gases.lel.limit.max).toBe(5);
      expect(res.body.gases.lel.source).toMatch(/^Tenant policy/);
      expect(res.body.gases.h2s.verdict).toBe('fail');
      expect(res.body.gases.h2s.limit.max).toBe(5);
      expect(res.body.verdict).toBe('fail');
    });

    it("when another tenant has set its own limits, then this tenant's readings are judged without them", async () => {
      await setSettings('bramblecote', { hotWorkLelPct: 5 });
      const other = await srv.signIn('authoriser@harlowridge.example');
      const res = await other.post('/api/calc/atmosphere', { readings: { o2Pct: 20.9, lelPct: 4 }, hotWork: true });
      expect(res.body.gases.lel.limit.max).toBe(0);
      expect(res.body.verdict).toBe('fail');
    });

    it('when the stored CO limit is looser than the published 35 ppm, then it is left out and 50 ppm still fails against the NIOSH REL', async () => {
      await setSettings('bramblecote', { atmosphereLimits: { co: { max: 100 }, lel: { max: 'ten' } } });
      const res = await tech.post('/api/calc/atmosphere', { readings: { o2Pct: 20.9, lelPct: 0, coPpm: 50 } });
      expect(res.status).toBe(200);
      expect(res.body.gases.co.limit.max).toBe(35);
      expect(res.body.gases.co.source).toMatch(/NIOSH REL 35 ppm/);
      expect(res.body.gases.co.verdict).toBe('fail');
      expect(res.body.gases.lel.limit.max).toBe(10);
    });
  });
});

describe('who may use the calculator', () => {
  const routes = ['/api/calc/mud-plug?diameterIn=10', '/api/calc/pipe?nps=10&schedule=40', '/api/calc/pipe-sizes', '/api/calc/line-fill?idIn=4&lengthFt=1'];

  it.each(routes)('when nobody is signed in, then GET %s answers 401', async (path) => {
    const anon = await srv.anonymous();
    const res = await anon.get(path);
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('unauthenticated');
  });

  it('when nobody is signed in, then POST /api/calc/atmosphere answers 401', async () => {
    const anon = await srv.anonymous();
    const res = await anon.post('/api/calc/atmosphere', { readings: { lelPct: 12 } });
    expect(res.status).toBe(401);
  });

  it.each([
    'admin@bramblecote.example',
    'authoriser@bramblecote.example',
    'control@bramblecote.example',
    'lead@oxbow-repair.example',
    'tech2@oxbow-repair.example',
    'auditor@bramblecote.example',
    'authoriser@harlowridge.example',
  ])('when %s (a tenant member) asks, then every calculator route answers 200', async (email) => {
    const client = await srv.signIn(email);
    for (const path of routes) expect((await client.get(path)).status).toBe(200);
    expect((await client.post('/api/calc/atmosphere', { readings: { o2Pct: 20.9, lelPct: 0 } })).status).toBe(200);
  });
});

// Finding 17: the as-built record takes any plug the calculator sizes (up to the 60-in limit of
// every calculation) and keeps weights in lb, which a metric tenant types and reads in kg.
// D³/16 lb of paste ± 10 %, 1.5 × D long: common practice, no published source; 1 lb = 0.45359237 kg (exact).
describe('finding 17: plug as built, the cap and the units', () => {
  let crew: Crew;
  let permitId = '';
  let plugId = '';
  const apply = (asBuilt: Record<string, unknown>) => crew.tech.post(`/api/permits/${permitId}/isolations/${plugId}/apply`, { asBuilt });

  beforeAll(async () => {
    crew = await signInCrew(srv);
    const ids = await demoIds(srv);
    const [valve, vent, plug] = tempPlan;
    // The plug first in the plan, so applying it is in the plan's order.
    permitId = await draftWithPlan(srv, crew, ids, {}, crew.lead, [{ ...plug, plugDiameterIn: MAX_PIPE_DIAMETER_IN }, vent, valve]);
    await toAccepted(crew, permitId);
    plugId = (await steps(crew.tech, permitId)).find((s) => s.kind === 'plug')!.id;
  });

  it('when a weight is over the cap, then 400 in plain words naming the field, and the step stays planned with nothing recorded', async () => {
    const res = await apply({ bentoniteLb: AS_BUILT_MAX_LB + 1, waterLb: 8100, lengthIn: 90 });
    expectRefused(res, 'asBuilt.bentoniteLb');
    expect(res.body.error.details.find((d: { path: string }) => d.path === 'asBuilt.bentoniteLb').message).toMatch(/at most 29,700 lb \(13,472 kg\), more than any plug needs; check the figure and the unit/);
    const [row] = await srv.deps.sequelize.query<{ status: string; plug_as_built: unknown }>(`SELECT status, plug_as_built FROM isolation_steps WHERE id = :id`, {
      replacements: { id: plugId },
      type: QueryTypes.SELECT,
    });
    expect(row).toEqual({ status: 'planned', plug_as_built: null });
  });

  it('when the heaviest paste the calculator allows for a 60-in pipe is recorded, weighed in kg by a metric tenant, then it is accepted, kept in lb and reads back in kg', async () => {
    // 60³/16 = 13,500 lb; the band tops out at 14,850 lb; at 60/40 that is 8,910 lb of water and 5,940 lb of bentonite.
    const target = mudPlug({ diameterIn: MAX_PIPE_DIAMETER_IN, waterFraction: 0.6 });
    const metric = plugUnits(true);
    const typedKg = { bentonite: 2694.34, water: 4041.4 };
    const asBuilt = { bentoniteLb: metric.toLb(typedKg.bentonite)!, waterLb: metric.toLb(typedKg.water)!, lengthIn: target.plugLengthIn };
    expect(asBuilt.bentoniteLb + asBuilt.waterLb).toBeLessThanOrEqual(target.mudLbRange[1]);
    expect(asBuilt.bentoniteLb).toBeGreaterThan(5000); // refused by the old 5,000 lb cap
    const step = await expectOk(await apply(asBuilt));
    expect(step).toMatchObject({ status: 'applied', plugWarnings: [] });
    const stored = (step as unknown as { plugAsBuilt: { bentoniteLb: number; waterLb: number } }).plugAsBuilt;
    expect(stored.bentoniteLb).toBeCloseTo(asBuilt.bentoniteLb, 6);
    expect(metric.mass(stored.bentoniteLb)).toBe('2694.34 kg');
    // Water also as a volume: 8,909.76 lb ÷ 8.33 lb/US gal × 3.785411784 L/US gal = 4,048.9 L.
    expect(metric.water(stored.waterLb)).toBe('4041.4 kg (4048.9 L)');
  });
});
