import { describe, expect, it } from 'vitest';
import {
  CalcInputError,
  DEFAULT_ATMOSPHERE_LIMITS,
  PUBLISHED_LIMITS,
  assessAtmosphere,
  tightenLimits,
  type AtmosphereReadings,
} from '@shared/calc';

function calcError(run: () => unknown): CalcInputError {
  try {
    run();
  } catch (error) {
    if (error instanceof CalcInputError) return error;
    throw error;
  }
  throw new Error('expected a CalcInputError, but nothing was thrown');
}

const CLEAN: AtmosphereReadings = { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 0 };

describe('assessAtmosphere: default limits', () => {
  it('when fresh air is measured for all four gases, then it passes', () => {
    const result = assessAtmosphere(CLEAN);
    expect(result.verdict).toBe('pass');
    expect(Object.values(result.gases).every((g) => g.verdict === 'pass')).toBe(true);
  });

  // OSHA 29 CFR 1910.146(b): hazardous below 19.5 % or above 23.5 % oxygen.
  it.each([
    [19.5, 'pass'],
    [19.4, 'fail'],
    [23.5, 'pass'],
    [23.6, 'fail'],
  ])('when oxygen reads %d %%vol, then it is a %s (OSHA 1910.146)', (o2Pct, verdict) => {
    const result = assessAtmosphere({ ...CLEAN, o2Pct });
    expect(result.gases.o2.verdict).toBe(verdict);
    expect(result.verdict).toBe(verdict);
    expect(result.gases.o2.source).toMatch(/OSHA 29 CFR 1910\.146/);
    expect(result.gases.o2.limit).toEqual({ min: 19.5, max: 23.5, unit: '%vol' });
  });

  // OSHA 29 CFR 1910.146(b): flammable gas in excess of 10 % of its LFL.
  it.each([
    [10, 'pass'],
    [10.1, 'fail'],
  ])('when flammable gas reads %d %%LEL outside hot work, then it is a %s (OSHA 1910.146)', (lelPct, verdict) => {
    const result = assessAtmosphere({ ...CLEAN, lelPct });
    expect(result.gases.lel.verdict).toBe(verdict);
    expect(result.verdict).toBe(verdict);
    expect(result.gases.lel.limit).toEqual({ max: 10, unit: '%LEL' });
  });

  // Hot work: 0 %LEL, common practice at the point of hot work; no published figure (issue 17: never "published" at 10 %LEL).
  it.each([
    [0, 'pass'],
    [0.1, 'fail'],
    [1, 'fail'],
  ])('when flammable gas reads %d %%LEL during hot work, then it is a %s (common practice, 0 %%LEL)', (lelPct, verdict) => {
    const result = assessAtmosphere({ ...CLEAN, lelPct }, undefined, { hotWork: true });
    expect(result.hotWork).toBe(true);
    expect(result.gases.lel.verdict).toBe(verdict);
    expect(result.verdict).toBe(verdict);
    expect(result.gases.lel.source).toMatch(/common practice at the point of hot work.*no published figure/i);
  });

  // NIOSH REL ceiling 10 ppm (stricter than the OSHA PEL ceiling of 20 ppm).
  it.each([
    [10, 'pass'],
    [10.5, 'fail'],
    [11, 'fail'],
    [20, 'fail'],
  ])('when H₂S reads %d ppm, then it is a %s (NIOSH REL ceiling 10 ppm)', (h2sPpm, verdict) => {
    const result = assessAtmosphere({ ...CLEAN, h2sPpm });
    expect(result.gases.h2s.verdict).toBe(verdict);
    expect(result.verdict).toBe(verdict);
    expect(result.gases.h2s.source).toMatch(/NIOSH REL ceiling 10 ppm/);
  });

  // NIOSH REL 35 ppm TWA held as an instantaneous limit (stricter than OSHA PEL 50 ppm TWA).
  it.each([
    [35, 'pass'],
    [36, 'fail'],
    [50, 'fail'],
    [199, 'fail'],
  ])('when CO reads %d ppm, then it is a %s (NIOSH REL 35 ppm)', (coPpm, verdict) => {
    const result = assessAtmosphere({ ...CLEAN, coPpm });
    expect(result.gases.co.verdict).toBe(verdict);
    expect(result.verdict).toBe(verdict);
  });

  it('when a gas fails, then its message gives the reading and the limit it broke', () => {
    expect(assessAtmosphere({ ...CLEAN, o2Pct: 19.4 }).gases.o2.message).toBe(
      'Oxygen 19.4 %vol is below the 19.5 %vol minimum.',
    );
    expect(assessAtmosphere({ ...CLEAN, h2sPpm: 11 }).gases.h2s.message).toBe('H₂S 11 ppm is above the 10 ppm maximum.');
  });
});

describe('assessAtmosphere: missing readings', () => {
  it('when oxygen is not measured, then the test fails: a missing required reading is not a pass', () => {
    const result = assessAtmosphere({ lelPct: 0, h2sPpm: 0, coPpm: 0 });
    expect(result.gases.o2).toMatchObject({ value: null, verdict: 'not measured', required: true });
    expect(result.verdict).toBe('fail');
  });

  it('when flammable gas is not measured, then the test fails', () => {
    expect(assessAtmosphere({ o2Pct: 20.9 }).verdict).toBe('fail');
  });

  it('when only H₂S and CO are missing, then they show as not measured and the test still passes', () => {
    const result = assessAtmosphere({ o2Pct: 20.9, lelPct: 0, h2sPpm: null });
    expect(result.gases.h2s).toMatchObject({ value: null, verdict: 'not measured', required: false });
    expect(result.gases.co.verdict).toBe('not measured');
    expect(result.verdict).toBe('pass');
  });

  it('when H₂S is made required for a sour line and is missing, then the test fails', () => {
    const result = assessAtmosphere({ o2Pct: 20.9, lelPct: 0 }, undefined, { required: ['o2', 'lel', 'h2s'] });
    expect(result.gases.h2s.required).toBe(true);
    expect(result.verdict).toBe('fail');
  });

  it('when hot work is judged, then flammable gas is required even if the caller left it out', () => {
    const result = assessAtmosphere({ o2Pct: 20.9 }, undefined, { hotWork: true, required: ['o2'] });
    expect(result.gases.lel.required).toBe(true);
    expect(result.verdict).toBe('fail');
  });

  it('when an unknown gas is required, then it is refused', () => {
    expect(calcError(() => assessAtmosphere(CLEAN, undefined, { required: ['nh3' as never] })).field).toBe('required');
  });
});

describe('assessAtmosphere: nonsense readings', () => {
  it.each([
    ['o2Pct', { o2Pct: -1 }],
    ['o2Pct', { o2Pct: 101 }],
    ['lelPct', { lelPct: Number.NaN }],
    ['lelPct', { lelPct: 150 }],
    ['h2sPpm', { h2sPpm: -0.5 }],
    ['coPpm', { coPpm: Number.POSITIVE_INFINITY }],
  ])('when %s is %o, then it is refused on that field', (field, reading) => {
    expect(calcError(() => assessAtmosphere({ ...CLEAN, ...reading })).field).toBe(field);
  });
});

describe('tightenLimits', () => {
  it('when a tenant raises the oxygen minimum to 20.0 %, then 19.9 % fails where the default would pass', () => {
    const limits = tightenLimits(DEFAULT_ATMOSPHERE_LIMITS, { o2: { min: 20 }, source: 'Tenant policy' });
    expect(limits.o2.min).toBe(20);
    expect(limits.o2.max).toBe(23.5);
    expect(limits.o2.source).toMatch(/^Tenant policy; within OSHA 29 CFR 1910\.146/);
    expect(assessAtmosphere({ ...CLEAN, o2Pct: 19.9 }, limits).verdict).toBe('fail');
    expect(assessAtmosphere({ ...CLEAN, o2Pct: 19.9 }).verdict).toBe('pass');
  });

  it('when a permit tightens H₂S to the ACGIH STEL of 5 ppm and CO to 25 ppm, then they are accepted', () => {
    const limits = tightenLimits(DEFAULT_ATMOSPHERE_LIMITS, { h2s: { max: 5 }, co: { max: 25 } });
    expect(assessAtmosphere({ ...CLEAN, h2sPpm: 6 }, limits).gases.h2s.verdict).toBe('fail');
    expect(assessAtmosphere({ ...CLEAN, coPpm: 26 }, limits).gases.co.verdict).toBe('fail');
  });

  it('when the hot-work flammable limit is set anywhere from 0 to 10 %LEL, then it is accepted', () => {
    for (const max of [0, 5, 10]) {
      const limits = tightenLimits(DEFAULT_ATMOSPHERE_LIMITS, { hotWorkLel: { max } });
      expect(limits.hotWorkLel.max).toBe(max);
    }
    const limits = tightenLimits(DEFAULT_ATMOSPHERE_LIMITS, { hotWorkLel: { max: 5 } });
    expect(assessAtmosphere({ ...CLEAN, lelPct: 5 }, limits, { hotWork: true }).verdict).toBe('pass');
  });

  it.each([
    ['o2.min', { o2: { min: 19.4 } }, /below the 19\.5 %vol/],
    ['o2.max', { o2: { max: 23.6 } }, /above the 23\.5 %vol/],
    ['lel.max', { lel: { max: 10.1 } }, /above the 10 %LEL/],
    ['hotWorkLel.max', { hotWorkLel: { max: 11 } }, /above the 10 %LEL/],
    ['h2s.max', { h2s: { max: 20 } }, /above the 10 ppm/],
    ['co.max', { co: { max: 50 } }, /above the 35 ppm/],
    ['co.max', { co: { max: 200 } }, /above the 35 ppm/],
  ])('when %s is loosened past the published limit (%o), then it is refused with the reason', (field, request, reason) => {
    const error = calcError(() => tightenLimits(DEFAULT_ATMOSPHERE_LIMITS, request));
    expect(error.field).toBe(field);
    expect(error.message).toMatch(reason);
    expect(error.message).toMatch(/may only be made stricter/);
  });

  it('when the oxygen minimum is set above its maximum, then it is refused', () => {
    expect(calcError(() => tightenLimits(DEFAULT_ATMOSPHERE_LIMITS, { o2: { min: 22, max: 21 } })).field).toBe('o2.min');
  });

  it('when a limit is negative or not a number, then it is refused', () => {
    expect(calcError(() => tightenLimits(DEFAULT_ATMOSPHERE_LIMITS, { h2s: { max: -1 } })).field).toBe('h2s.max');
    expect(calcError(() => tightenLimits(DEFAULT_ATMOSPHERE_LIMITS, { lel: { max: Number.NaN } })).field).toBe('lel.max');
  });

  it('when a minimum is given for a gas that has only a maximum, then it is refused', () => {
    const request = { h2s: { min: 1 } } as never;
    expect(calcError(() => tightenLimits(DEFAULT_ATMOSPHERE_LIMITS, request)).field).toBe('h2s.min');
  });

  it("when a permit asks for looser than the tenant's own limit, then the tenant's limit holds as the floor", () => {
    const tenant = tightenLimits(DEFAULT_ATMOSPHERE_LIMITS, { h2s: { max: 5 }, source: 'Tenant policy' });
    const error = calcError(() => tightenLimits(tenant, { h2s: { max: 8 } }, { floor: tenant }));
    expect(error.field).toBe('h2s.max');
    expect(error.message).toMatch(/above the 5 ppm/);
    expect(tightenLimits(tenant, { h2s: { max: 3 } }, { floor: tenant }).h2s.max).toBe(3);
  });

  it('when limits are tightened, then the base limits are left untouched', () => {
    const before = structuredClone(DEFAULT_ATMOSPHERE_LIMITS);
    tightenLimits(DEFAULT_ATMOSPHERE_LIMITS, { o2: { min: 20.5 }, lel: { max: 5 } });
    expect(DEFAULT_ATMOSPHERE_LIMITS).toEqual(before);
    expect(Object.isFrozen(DEFAULT_ATMOSPHERE_LIMITS.o2)).toBe(true);
  });

  it('when a hand-built limits object is looser than published, then assessAtmosphere refuses it', () => {
    const loose = { ...structuredClone(DEFAULT_ATMOSPHERE_LIMITS), lel: { max: 20, unit: '%LEL' as const, source: 'x' } };
    expect(calcError(() => assessAtmosphere(CLEAN, loose)).field).toBe('lel.max');
  });
});

describe('published and default limits (sources named)', () => {
  it('when the defaults are read, then they match the published limits except hot work at 0 %LEL', () => {
    expect(PUBLISHED_LIMITS.o2).toMatchObject({ min: 19.5, max: 23.5 }); // OSHA 1910.146
    expect(PUBLISHED_LIMITS.lel.max).toBe(10); // OSHA 1910.146
    expect(PUBLISHED_LIMITS.h2s.max).toBe(10); // NIOSH REL ceiling
    expect(PUBLISHED_LIMITS.co.max).toBe(35); // NIOSH REL TWA
    expect(DEFAULT_ATMOSPHERE_LIMITS.hotWorkLel.max).toBe(0); // operator practice
    expect(PUBLISHED_LIMITS.hotWorkLel.max).toBe(10);
    expect({ ...DEFAULT_ATMOSPHERE_LIMITS, hotWorkLel: PUBLISHED_LIMITS.hotWorkLel }).toEqual(PUBLISHED_LIMITS);
  });
});
