import { describe, expect, it } from 'vitest';
import {
  AS_BUILT_MAX_LB,
  AS_BUILT_MAX_LENGTH_IN,
  BENTONITE_WEIGH_NOTE,
  CalcInputError,
  D3_16_DIAMETER_NOTE,
  D3_16_TESTED_SIZES_IN,
  IN3_PER_US_GAL,
  MAX_PIPE_DIAMETER_IN,
  MIN_PIPE_DIAMETER_IN,
  MUD_PLUG_CAUTION,
  SMALL_BORE_PLUG_ADVICE,
  checkAsBuiltPlug,
  mudPlug,
  outsideTestedSizes,
  pipeDimensions,
  plugUnits,
  plugVolumeIn3,
  testedSizesCaution,
} from '@shared/calc';
import { asBuiltPlugSchema } from '@shared/schemas/isolation.schema';

function calcError(run: () => unknown): CalcInputError {
  try {
    run();
  } catch (error) {
    if (error instanceof CalcInputError) return error;
    throw error;
  }
  throw new Error('expected a CalcInputError, but nothing was thrown');
}

// All mud-plug rules are common practice, no published source:
// D³/16 lb of paste, plug 1.5 × D long, 50/50 to 60/40 water/bentonite by weight, ±10 %,
// balls about 3 in across. Water 8.33 lb/US gal as in mud-weight formulas.
describe('mudPlug (common practice, no published source)', () => {
  it.each([
    // D, mud lb = D³/16, plug length = 1.5 D, balls = ceil(D³/12)
    [6, 13.5, 9, 18],
    [10, 62.5, 15, 84],
    [16, 256, 24, 342],
  ])('when the pipe is %d in, then %d lb of paste, a %d-in plug and %d balls', (d, mudLb, lengthIn, balls) => {
    const plug = mudPlug({ diameterIn: d });
    expect(plug.mudLb).toBeCloseTo(mudLb, 12);
    expect(plug.plugLengthIn).toBeCloseTo(lengthIn, 12);
    expect(plug.mudBalls).toBe(balls);
  });

  it('when mixed 50/50, then a 10-in plug takes 31.25 lb each of bentonite and water, 3.75 US gal of water', () => {
    const plug = mudPlug({ diameterIn: 10 });
    expect(plug.bentoniteLb).toBeCloseTo(31.25, 12);
    expect(plug.waterLb).toBeCloseTo(31.25, 12);
    expect(plug.waterGal).toBeCloseTo(31.25 / 8.33, 12);
    expect(plug.waterGal).toBeCloseTo(3.7515, 4);
  });

  it('when mixed 60/40, then a 16-in plug takes 153.6 lb water (18.44 gal) and 102.4 lb bentonite', () => {
    const plug = mudPlug({ diameterIn: 16, waterFraction: 0.6 });
    expect(plug.waterLb).toBeCloseTo(153.6, 10);
    expect(plug.bentoniteLb).toBeCloseTo(102.4, 10);
    expect(plug.waterGal).toBeCloseTo(18.4394, 4);
    expect(plug.waterLb + plug.bentoniteLb).toBeCloseTo(plug.mudLb, 10);
  });

  it('when no fraction is given, then the paste is 50/50', () => {
    const plug = mudPlug({ diameterIn: 6 });
    expect(plug.waterLb).toBeCloseTo(6.75, 12);
    expect(plug.bentoniteLb).toBeCloseTo(6.75, 12);
  });

  it('when the plug is sized, then the acceptable range is ±10 % of D³/16', () => {
    const [min, max] = mudPlug({ diameterIn: 10 }).mudLbRange;
    expect(min).toBeCloseTo(56.25, 10);
    expect(max).toBeCloseTo(68.75, 10);
  });

  // D³/12 is whole for these sizes; floating point must not add a ball.
  it.each([
    [18, 486],
    [30, 2250],
    [36, 3888],
  ])('when the pipe is %d in, then exactly %d balls fill the plug (D³/12)', (d, balls) => {
    expect(mudPlug({ diameterIn: d }).mudBalls).toBe(balls);
  });

  it('when balls are counted, then their total volume just covers the plug volume', () => {
    const ballIn3 = (4 / 3) * Math.PI * 1.5 ** 3;
    for (const d of [4, 6, 8, 10, 12, 16, 20, 24, 30, 36]) {
      const mudBalls = mudPlug({ diameterIn: d }).mudBalls!;
      const volume = plugVolumeIn3(d);
      expect(mudBalls * ballIn3).toBeGreaterThanOrEqual(volume - 1e-9);
      expect((mudBalls - 1) * ballIn3).toBeLessThan(volume);
    }
  });

  it.each([0.49, 0.61, 0.3, 1])('when the water fraction is %d, then it is refused with the reason', (fraction) => {
    const error = calcError(() => mudPlug({ diameterIn: 10, waterFraction: fraction }));
    expect(error.field).toBe('waterFraction');
    expect(error.message).toMatch(/50\/50 to 60\/40 water to bentonite by weight/);
  });

  it.each([0.5, 0.55, 0.6])('when the water fraction is %d, then it is accepted', (fraction) => {
    expect(mudPlug({ diameterIn: 10, waterFraction: fraction }).waterLb).toBeCloseTo(62.5 * fraction, 12);
  });

  it.each([0, -6, Number.NaN, Number.POSITIVE_INFINITY, 61, 600])(
    'when the diameter is %d, then it is refused',
    (d) => {
      expect(calcError(() => mudPlug({ diameterIn: d })).field).toBe('diameterIn');
    },
  );

  it('when a diameter is passed as text, then it is refused rather than coerced', () => {
    expect(calcError(() => mudPlug({ diameterIn: '10' as unknown as number })).field).toBe('diameterIn');
  });
});

// Independent check of the D³/16 rule: fill the plug volume with a 50/50 paste whose density is
// worked out from bentonite grain SG 2.60 (low-gravity solids as conventionally taken in drilling-
// fluid practice, e.g. the Schlumberger Oilfield Glossary, "low-gravity solids") and water at
// 8.33 lb/US gal, with 1 US gal = 231 in³.
describe('D³/16 against plug volume × paste density', () => {
  const WATER_LB_PER_GAL = 8.33;
  const BENTONITE_SG = 2.6;

  function pasteLbPerIn3(waterFraction: number): number {
    const galPerLb = waterFraction / WATER_LB_PER_GAL + (1 - waterFraction) / (WATER_LB_PER_GAL * BENTONITE_SG);
    return 1 / galPerLb / IN3_PER_US_GAL;
  }

  it('when the paste is 50/50, then its density is about 12.03 lb/gal (0.0521 lb/in³)', () => {
    expect(pasteLbPerIn3(0.5) * IN3_PER_US_GAL).toBeCloseTo(12.03, 2);
    expect(pasteLbPerIn3(0.5)).toBeCloseTo(0.0521, 4);
  });

  it('when a 50/50 plug is weighed by volume, then it agrees with D³/16 within 5 % (about 2 %)', () => {
    for (const d of [2, 6, 10, 16, 24, 36]) {
      const byVolume = plugVolumeIn3(d) * pasteLbPerIn3(0.5);
      const byRule = mudPlug({ diameterIn: d }).mudLb;
      expect(Math.abs(byVolume / byRule - 1)).toBeLessThan(0.05);
    }
    expect(plugVolumeIn3(10) * pasteLbPerIn3(0.5)).toBeCloseTo(61.4, 1);
  });

  it('when the wettest permitted paste (60/40) fills the plug, then its weight still falls inside the ±10 % band', () => {
    for (const d of [2, 6, 10, 16, 24, 36]) {
      const byVolume = plugVolumeIn3(d) * pasteLbPerIn3(0.6);
      const [min, max] = mudPlug({ diameterIn: d, waterFraction: 0.6 }).mudLbRange;
      expect(byVolume).toBeGreaterThanOrEqual(min);
      expect(byVolume).toBeLessThanOrEqual(max);
    }
  });
});

describe('checkAsBuiltPlug (common practice, no published source)', () => {
  it('when a 10-in plug is built to the rules, then there are no warnings', () => {
    expect(checkAsBuiltPlug({ diameterIn: 10, bentoniteLb: 31.25, waterLb: 31.25, lengthIn: 15 })).toEqual([]);
  });

  it('when the paste sits exactly on the band edges, then there are no warnings', () => {
    expect(checkAsBuiltPlug({ diameterIn: 10, bentoniteLb: 28.125, waterLb: 28.125, lengthIn: 15 })).toEqual([]);
    expect(checkAsBuiltPlug({ diameterIn: 10, bentoniteLb: 27.5, waterLb: 41.25, lengthIn: 15 })).toEqual([]);
  });

  it('when the paste is under 90 % of D³/16, then it warns mud_below_range', () => {
    const warnings = checkAsBuiltPlug({ diameterIn: 10, bentoniteLb: 28, waterLb: 28, lengthIn: 15 });
    expect(warnings.map((w) => w.code)).toEqual(['mud_below_range']);
    expect(warnings[0].message).toContain('56.3–68.8 lb');
  });

  it('when the paste is over 110 % of D³/16, then it warns mud_above_range', () => {
    const warnings = checkAsBuiltPlug({ diameterIn: 10, bentoniteLb: 35, waterLb: 35, lengthIn: 15 });
    expect(warnings.map((w) => w.code)).toEqual(['mud_above_range']);
  });

  it('when the paste is under 50 % water, then it warns water_ratio_low', () => {
    const warnings = checkAsBuiltPlug({ diameterIn: 10, bentoniteLb: 33, waterLb: 29.5, lengthIn: 15 });
    expect(warnings.map((w) => w.code)).toEqual(['water_ratio_low']);
    expect(warnings[0].message).toContain('47.2 % water');
  });

  it('when the paste is over 60 % water, then it warns water_ratio_high', () => {
    const warnings = checkAsBuiltPlug({ diameterIn: 10, bentoniteLb: 24, waterLb: 38.5, lengthIn: 15 });
    expect(warnings.map((w) => w.code)).toEqual(['water_ratio_high']);
  });

  it('when the plug is shorter than 1.5 × D, then it warns plug_too_short', () => {
    const warnings = checkAsBuiltPlug({ diameterIn: 10, bentoniteLb: 31.25, waterLb: 31.25, lengthIn: 14.9 });
    expect(warnings.map((w) => w.code)).toEqual(['plug_too_short']);
    expect(warnings[0].message).toContain('at least 15 in');
  });

  it('when everything is off, then every warning is listed', () => {
    const codes = checkAsBuiltPlug({ diameterIn: 16, bentoniteLb: 100, waterLb: 50, lengthIn: 12 }).map((w) => w.code);
    expect(codes).toEqual(['mud_below_range', 'water_ratio_low', 'plug_too_short']);
  });

  it('when nothing was recorded, then it is refused', () => {
    expect(calcError(() => checkAsBuiltPlug({ diameterIn: 10, bentoniteLb: 0, waterLb: 0, lengthIn: 15 })).field).toBe(
      'bentoniteLb',
    );
  });

  it('when a weight or length is negative or missing, then it is refused', () => {
    expect(calcError(() => checkAsBuiltPlug({ diameterIn: 10, bentoniteLb: -1, waterLb: 30, lengthIn: 15 })).field).toBe(
      'bentoniteLb',
    );
    expect(
      calcError(() => checkAsBuiltPlug({ diameterIn: 10, bentoniteLb: 30, waterLb: Number.NaN, lengthIn: 15 })).field,
    ).toBe('waterLb');
    expect(calcError(() => checkAsBuiltPlug({ diameterIn: 10, bentoniteLb: 30, waterLb: 30, lengthIn: 0 })).field).toBe(
      'lengthIn',
    );
  });
});

describe('MUD_PLUG_CAUTION', () => {
  it('when shown, then it says the plug is no isolation and gas testing decides', () => {
    expect(MUD_PLUG_CAUTION).toMatch(/vapour barrier, not a positive isolation/);
    expect(MUD_PLUG_CAUTION).toMatch(/gas testing remains the acceptance check/);
    expect(MUD_PLUG_CAUTION).toMatch(/operator's procedure/);
  });
});

// Finding 17: which diameter the rule takes, where it was tried, small bores, why the bentonite is
// weighed and an as-built cap that covers every diameter. All common practice, no published source.
describe('finding 17: D³/16 basis, tried sizes and small bores (common practice, no published source)', () => {
  it('when the rule is explained, then it says D is the nominal size and the bore is shown beside it', () => {
    expect(D3_16_DIAMETER_NOTE).toMatch(/nominal pipe size in inches/);
    expect(D3_16_DIAMETER_NOTE).toMatch(/bore/);
  });

  it('when NPS 10 Sch 40 is sized by nominal size and by bore, then 62.5 lb against 62.88 lb (10.020-in bore, ASME B36.10M)', () => {
    const bore = pipeDimensions(10, '40').idIn;
    expect(mudPlug({ diameterIn: 10 }).mudLb).toBeCloseTo(62.5, 10);
    expect(mudPlug({ diameterIn: bore }).mudLb).toBeCloseTo(10.02 ** 3 / 16, 10);
    expect(mudPlug({ diameterIn: bore }).mudLb).toBeCloseTo(62.88, 2);
  });

  it('when the pipe is 6, 10 or 16 in, or between, then there is no caution; outside 6–16 in there is one naming the tried sizes', () => {
    expect(D3_16_TESTED_SIZES_IN).toEqual([6, 10, 16]);
    for (const d of [6, 8, 10, 12, 16]) {
      expect(outsideTestedSizes(d)).toBe(false);
      expect(testedSizesCaution(d)).toBeNull();
    }
    for (const d of [2, 4, 5.9, 16.1, 24, 48]) {
      expect(outsideTestedSizes(d)).toBe(true);
      expect(testedSizesCaution(d)).toMatch(/tried on 6, 10 and 16 in pipe \(common practice, no published source\)/);
    }
  });

  it('when the bore is under about 4 in, then no 3-in balls are offered and the advice says what to do instead', () => {
    for (const d of [0.5, 1, 2, 3, 3.068, 3.99]) expect(mudPlug({ diameterIn: d }).mudBalls).toBeNull();
    expect(mudPlug({ diameterIn: 4 }).mudBalls).toBe(6);
    expect(SMALL_BORE_PLUG_ADVICE).toMatch(/smaller balls/);
    expect(SMALL_BORE_PLUG_ADVICE).toMatch(/by hand/);
    expect(SMALL_BORE_PLUG_ADVICE).toMatch(/common practice/);
  });

  it('when the crew is told why the bentonite is weighed, then the note gives the about 20 % swing of the powder', () => {
    expect(BENTONITE_WEIGH_NOTE).toMatch(/Weigh the bentonite/);
    expect(BENTONITE_WEIGH_NOTE).toMatch(/about 20 %/);
  });

  it('when the largest diameter any calculation accepts is sized, then the as-built cap still takes its heaviest paste and its length', () => {
    const biggest = mudPlug({ diameterIn: MAX_PIPE_DIAMETER_IN, waterFraction: 0.6 });
    // 60³/16 = 13,500 lb of paste; the band tops out at 14,850 lb; the cap is twice that.
    expect(biggest.mudLbRange[1]).toBeCloseTo(14850, 6);
    expect(AS_BUILT_MAX_LB).toBeCloseTo(29700, 6);
    expect(AS_BUILT_MAX_LB).toBeGreaterThanOrEqual(biggest.mudLbRange[1]);
    expect(AS_BUILT_MAX_LENGTH_IN).toBeGreaterThanOrEqual(biggest.plugLengthIn);
    const heaviest = { bentoniteLb: biggest.mudLbRange[1] * 0.5, waterLb: biggest.mudLbRange[1] * 0.6, lengthIn: biggest.plugLengthIn };
    expect(asBuiltPlugSchema.safeParse(heaviest).success).toBe(true);
    expect(asBuiltPlugSchema.safeParse({ ...heaviest, bentoniteLb: AS_BUILT_MAX_LB + 1 }).success).toBe(false);
    // And the smallest: still a positive weight, never refused for being small.
    const smallest = mudPlug({ diameterIn: MIN_PIPE_DIAMETER_IN });
    expect(asBuiltPlugSchema.safeParse({ bentoniteLb: smallest.bentoniteLb, waterLb: smallest.waterLb, lengthIn: smallest.plugLengthIn }).success).toBe(true);
  });
});

// 1 lb = 0.45359237 kg and 1 US gal = 3.785411784 L (exact definitions); water 8.33 lb per US gallon.
describe('finding 17: plug figures in the tenant\'s units', () => {
  it('when the tenant works in kilometres, then a 10-in plug\'s 31.25 lb of water reads 14.17 kg (14.2 L) and typed kg are kept as lb', () => {
    const u = plugUnits(true);
    expect(u.massUnit).toBe('kg');
    expect(u.mass(31.25)).toBe('14.17 kg');
    expect(u.water(31.25)).toBe('14.17 kg (14.2 L)');
    expect(u.length(15)).toBe('381 mm (15 in)');
    expect(u.toLb(14.17475)).toBeCloseTo(31.25, 4);
  });

  it('when the tenant works in miles, then the same water reads 31.3 lb (3.75 US gal) and typed lb are kept as typed', () => {
    const u = plugUnits(false);
    expect(u.massUnit).toBe('lb');
    expect(u.water(31.25)).toBe('31.3 lb (3.75 US gal)');
    expect(u.toLb(31.25)).toBe(31.25);
  });
});
