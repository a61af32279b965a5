/**
 * Bentonite (mud) plug for an open pipe end before hot work: how much paste to mix, how it
 * splits into bentonite and water, how long the plug should be, and a check of the plug as built.
 *
 * Every rule here is common practice, no published source:
 * - paste is bentonite in potable water, 50/50 up to 60/40 water to bentonite by weight;
 * - paste needed ≈ D³ / 16 lb, D the nominal pipe size in inches, ± 10 % acceptable; the rule
 *   was tried on 6, 10 and 16 in pipe, so outside 6–16 in the screens show a caution;
 * - plug length = 1.5 × D;
 * - paste is rolled into balls about 3 in across before it is packed in; in a bore under about
 *   4 in such balls do not fit, and smaller balls or paste packed by hand are used instead;
 * - the bentonite is weighed, never measured by volume: the powder's bulk density varies by
 *   about 20 % with how it was packed and handled.
 * Water is taken at 8.33 lb per US gallon, the figure used in mud-weight formulas.
 * The tests cross-check D³/16 against the plug's volume times the density of the paste.
 */
import { MAX_PIPE_DIAMETER_IN, MIN_PIPE_DIAMETER_IN } from './pipe-dimensions';
import { CalcInputError, requireNumber, round } from './units';

/** Shown beside every plug figure: the plug lowers the vapour reaching the work, nothing more. */
export const MUD_PLUG_CAUTION =
  'A mud plug is a vapour barrier, not a positive isolation. Continuous gas testing remains the ' +
  "acceptance check before and during hot work. Follow the operator's procedure.";

export const WATER_FRACTION_MIN = 0.5;
export const WATER_FRACTION_MAX = 0.6;
export const DEFAULT_WATER_FRACTION = 0.5;
export const WATER_LB_PER_US_GAL = 8.33;
export const PLUG_LENGTH_PER_DIAMETER = 1.5;
export const MUD_MASS_TOLERANCE = 0.1;
export const MUD_BALL_DIAMETER_IN = 3;
/** Below about this bore a 3-in ball does not go in; no ball count is offered. */
export const MUD_BALL_MIN_BORE_IN = 4;
/** Nominal sizes the D³/16 rule was tried on (common practice, no published source). */
export const D3_16_TESTED_SIZES_IN = [6, 10, 16] as const;
export const D3_16_TESTED_MIN_IN = 6;
export const D3_16_TESTED_MAX_IN = 16;

/** Which diameter D³/16 takes, said wherever the figure is shown. */
export const D3_16_DIAMETER_NOTE =
  'D³/16 takes D as the nominal pipe size in inches (the size the pipe is called). The paste fills the ' +
  'bore, so the paste for the bore is shown beside it; on heavy-wall or small pipe the two differ.';

export const SMALL_BORE_PLUG_ADVICE =
  'The bore is under about 4 in, so 3-in balls will not go in. Roll smaller balls that go in easily, or ' +
  'pack the paste in by hand a little at a time, tamping it down (common practice).';

export const BENTONITE_WEIGH_NOTE =
  'Weigh the bentonite; do not measure it by the bucket. The powder settles and fluffs up, so the same ' +
  'bucket can hold about 20 % more or less from one bag to the next.';

/**
 * Largest weight of bentonite or of water an as-built record accepts, lb: twice the top of the
 * ± 10 % band for the largest pipe any calculation accepts, so an overfilled plug in the biggest
 * line can still be recorded (and warned about) while a slip of several digits is refused.
 */
export const AS_BUILT_MAX_LB = 2 * (MAX_PIPE_DIAMETER_IN ** 3 / 16) * (1 + MUD_MASS_TOLERANCE);
/** Longest plug an as-built record accepts, in: well past 1.5 × the largest diameter. */
export const AS_BUILT_MAX_LENGTH_IN = 1000;

export interface MudPlugInput {
  /** Pipe diameter, inches: nominal or measured bore; the screen says which was used. */
  diameterIn: number;
  /** Water share of the paste by weight, 0.50–0.60. */
  waterFraction?: number;
}

export interface MudPlug {
  mudLb: number;
  bentoniteLb: number;
  waterLb: number;
  waterGal: number;
  plugLengthIn: number;
  mudLbRange: [min: number, max: number];
  /** Balls about 3 in across; null when D is under MUD_BALL_MIN_BORE_IN (see SMALL_BORE_PLUG_ADVICE). */
  mudBalls: number | null;
}

export type PlugWarningCode =
  | 'mud_below_range'
  | 'mud_above_range'
  | 'water_ratio_low'
  | 'water_ratio_high'
  | 'plug_too_short';

export interface PlugWarning {
  code: PlugWarningCode;
  message: string;
}

export interface AsBuiltPlugInput {
  diameterIn: number;
  bentoniteLb: number;
  waterLb: number;
  lengthIn: number;
}

// Recorded weights that sit exactly on a bound (56.25 lb for a 10-in pipe) must not be flagged
// because 0.9 × 62.5 lands a hair above 56.25 in binary floating point.
const EPSILON = 1e-9;

function requireDiameter(diameterIn: number): number {
  return requireNumber('diameterIn', diameterIn, {
    label: 'pipe diameter',
    unit: 'in',
    min: MIN_PIPE_DIAMETER_IN,
    max: MAX_PIPE_DIAMETER_IN,
    reason: 'Check the figure is the pipe diameter in inches.',
  });
}

function requireWaterFraction(waterFraction: number): number {
  return requireNumber('waterFraction', waterFraction, {
    label: 'water fraction',
    min: WATER_FRACTION_MIN,
    max: WATER_FRACTION_MAX,
    reason: 'The paste is mixed 50/50 to 60/40 water to bentonite by weight, so the water share is 0.50 to 0.60.',
  });
}

/** Volume of a plug 1.5 × D long in a pipe of diameter D, in³. */
export function plugVolumeIn3(diameterIn: number): number {
  const d = requireDiameter(diameterIn);
  return (Math.PI / 4) * d * d * (PLUG_LENGTH_PER_DIAMETER * d);
}

export function mudPlug({ diameterIn, waterFraction = DEFAULT_WATER_FRACTION }: MudPlugInput): MudPlug {
  const d = requireDiameter(diameterIn);
  const water = requireWaterFraction(waterFraction);
  const mudLb = d ** 3 / 16;
  const waterLb = mudLb * water;
  const ballVolumeIn3 = (4 / 3) * Math.PI * (MUD_BALL_DIAMETER_IN / 2) ** 3;
  // The ratio reduces to D³/12, so an 18-in pipe needs exactly 486 balls; without the allowance
  // the float result 486.00000000000006 would round up to 487.
  const mudBalls = d < MUD_BALL_MIN_BORE_IN ? null : Math.ceil(plugVolumeIn3(d) / ballVolumeIn3 - EPSILON);
  return {
    mudLb,
    bentoniteLb: mudLb * (1 - water),
    waterLb,
    waterGal: waterLb / WATER_LB_PER_US_GAL,
    plugLengthIn: PLUG_LENGTH_PER_DIAMETER * d,
    mudLbRange: [mudLb * (1 - MUD_MASS_TOLERANCE), mudLb * (1 + MUD_MASS_TOLERANCE)],
    mudBalls,
  };
}

/** True when a nominal size lies outside the 6–16 in the D³/16 rule was tried on. */
export function outsideTestedSizes(nominalIn: number): boolean {
  return nominalIn < D3_16_TESTED_MIN_IN - EPSILON || nominalIn > D3_16_TESTED_MAX_IN + EPSILON;
}

/** The caution shown beside a D³/16 figure for a pipe outside the sizes the rule was tried on. */
export function testedSizesCaution(nominalIn: number): string | null {
  if (!outsideTestedSizes(nominalIn)) return null;
  return (
    `The D³/16 rule was tried on 6, 10 and 16 in pipe (common practice, no published source); ` +
    `${round(nominalIn, 3)} in is outside that. Treat the paste figure as a starting point, ` +
    `follow the operator's procedure and let the gas readings decide.`
  );
}

/**
 * Compares the plug as recorded on the permit with the rules above. Returns warnings rather than
 * throwing, because the plug is already in the pipe: the person needs to know what to correct.
 */
export function checkAsBuiltPlug({ diameterIn, bentoniteLb, waterLb, lengthIn }: AsBuiltPlugInput): PlugWarning[] {
  const d = requireDiameter(diameterIn);
  requireNumber('bentoniteLb', bentoniteLb, { label: 'bentonite weight', unit: 'lb', min: 0 });
  requireNumber('waterLb', waterLb, { label: 'water weight', unit: 'lb', min: 0 });
  requireNumber('lengthIn', lengthIn, { label: 'plug length', unit: 'in', min: 0, minExclusive: true });
  const totalLb = bentoniteLb + waterLb;
  if (totalLb <= 0) {
    throw new CalcInputError('bentoniteLb', 'Record the bentonite and water used; both are zero.');
  }

  const target = mudPlug({ diameterIn: d });
  const [minLb, maxLb] = target.mudLbRange;
  const warnings: PlugWarning[] = [];
  const band = `${round(minLb, 1)}–${round(maxLb, 1)} lb`;
  const mass = `${round(totalLb, 1)} lb of paste`;
  if (totalLb < minLb * (1 - EPSILON)) {
    warnings.push({
      code: 'mud_below_range',
      message: `${mass} is less than the ${band} a ${d}-in pipe needs (D³/16 = ${round(target.mudLb, 1)} lb ± 10 %).`,
    });
  } else if (totalLb > maxLb * (1 + EPSILON)) {
    warnings.push({
      code: 'mud_above_range',
      message: `${mass} is more than the ${band} a ${d}-in pipe needs (D³/16 = ${round(target.mudLb, 1)} lb ± 10 %).`,
    });
  }

  const waterShare = waterLb / totalLb;
  const waterPct = `${round(waterShare * 100, 1)} % water by weight`;
  if (waterShare < WATER_FRACTION_MIN - EPSILON) {
    warnings.push({
      code: 'water_ratio_low',
      message: `The paste is ${waterPct}; mix 50–60 % water (50/50 to 60/40 water to bentonite).`,
    });
  } else if (waterShare > WATER_FRACTION_MAX + EPSILON) {
    warnings.push({
      code: 'water_ratio_high',
      message: `The paste is ${waterPct}; mix 50–60 % water (50/50 to 60/40 water to bentonite).`,
    });
  }

  if (lengthIn < target.plugLengthIn * (1 - EPSILON)) {
    warnings.push({
      code: 'plug_too_short',
      message:
        `The plug is ${round(lengthIn, 1)} in long; it should be at least ` +
        `${round(target.plugLengthIn, 1)} in (1.5 × the ${d}-in diameter).`,
    });
  }
  return warnings;
}
