/**
 * Judges a gas test against limits and keeps tenant or permit limits from being set looser than
 * the published ones. Every limit carries the source a reviewer can check it against.
 *
 * Bounds are inclusive: OSHA 29 CFR 1910.146 calls an atmosphere hazardous at oxygen "below
 * 19.5 %" or "above 23.5 %" and flammable gas "in excess of 10 %" of its LFL, so the limit value
 * itself passes. Choices behind the H₂S and CO defaults are set out in docs/calculations.md.
 */
import { CalcInputError, requireNumber } from './units';

export const GASES = ['o2', 'lel', 'h2s', 'co'] as const;
export type Gas = (typeof GASES)[number];
export type GasUnit = '%vol' | '%LEL' | 'ppm';

export interface AtmosphereReadings {
  o2Pct?: number | null;
  lelPct?: number | null;
  h2sPpm?: number | null;
  coPpm?: number | null;
}

/** A reading passes when min ≤ value ≤ max; a missing bound does not apply. */
export interface GasBound {
  min?: number;
  max?: number;
  unit: GasUnit;
}

export interface RangeLimit extends GasBound {
  min: number;
  max: number;
  source: string;
}

export interface UpperLimit extends GasBound {
  max: number;
  source: string;
}

export interface AtmosphereLimits {
  o2: RangeLimit;
  /** Flammable gas for general work and entry. */
  lel: UpperLimit;
  /** Flammable gas while invasive hot work is under way or about to start. */
  hotWorkLel: UpperLimit;
  h2s: UpperLimit;
  co: UpperLimit;
}

export type LimitKey = keyof AtmosphereLimits;

export type GasVerdict = 'pass' | 'fail' | 'not measured';

export interface GasResult {
  value: number | null;
  limit: GasBound;
  verdict: GasVerdict;
  source: string;
  required: boolean;
  message: string;
}

export interface AtmosphereAssessment {
  /** 'fail' when any reading is outside its limit or any required gas was not measured. */
  verdict: 'pass' | 'fail';
  hotWork: boolean;
  gases: Record<Gas, GasResult>;
}

export interface AssessOptions {
  /** Judge flammable gas against `hotWorkLel` instead of `lel`; flammable gas then becomes required. */
  hotWork?: boolean;
  /** Gases that must have a reading for a pass. Default: oxygen and flammable gas. */
  required?: readonly Gas[];
}

export interface LimitRequest {
  o2?: { min?: number; max?: number };
  lel?: { max?: number };
  hotWorkLel?: { max?: number };
  h2s?: { max?: number };
  co?: { max?: number };
  /** Who set the tighter limits, shown as their source ("Tenant policy", "Permit HP-0142"). */
  source?: string;
}

export interface TightenOptions {
  /** Limits the result may not be looser than, on top of the published ones (e.g. the tenant's, when a permit asks). */
  floor?: AtmosphereLimits;
}

const OSHA_CONFINED_SPACE = 'OSHA 29 CFR 1910.146(b), hazardous atmosphere';

// Limits are one level deep, so a spread per gas is a full copy, with no platform clone needed.
function cloneLimits(limits: Readonly<AtmosphereLimits>): AtmosphereLimits {
  return {
    o2: { ...limits.o2 },
    lel: { ...limits.lel },
    hotWorkLel: { ...limits.hotWorkLel },
    h2s: { ...limits.h2s },
    co: { ...limits.co },
  };
}

function deepFreeze<T extends object>(value: T): Readonly<T> {
  for (const inner of Object.values(value)) {
    if (inner && typeof inner === 'object') deepFreeze(inner);
  }
  return Object.freeze(value);
}

/**
 * The loosest limits Holdpoint accepts anywhere: nothing a tenant or permit sets may go past them.
 * H₂S and CO use the stricter of the OSHA PEL and the NIOSH REL, because a gas test authorises
 * people to work for hours in what was measured.
 */
export const PUBLISHED_LIMITS: Readonly<AtmosphereLimits> = deepFreeze({
  o2: { min: 19.5, max: 23.5, unit: '%vol', source: `${OSHA_CONFINED_SPACE}: oxygen below 19.5 % or above 23.5 %` },
  lel: { max: 10, unit: '%LEL', source: `${OSHA_CONFINED_SPACE}: flammable gas in excess of 10 % of its LFL` },
  hotWorkLel: {
    max: 10,
    unit: '%LEL',
    // Not a hot-work limit: 1910.146 defines a hazardous atmosphere for confined-space entry. It only caps how far a tenant may raise the hot-work limit.
    source: `Holdpoint's outer bound for a raised hot-work limit, taken from ${OSHA_CONFINED_SPACE} (10 % of the LFL is hazardous for confined-space entry); no published hot-work limit`,
  },
  h2s: {
    max: 10,
    unit: 'ppm',
    source: 'NIOSH REL ceiling 10 ppm (10 min); stricter than the OSHA PEL ceiling of 20 ppm',
  },
  co: {
    max: 35,
    unit: 'ppm',
    source:
      'NIOSH REL 35 ppm TWA, held as an instantaneous limit; stricter than the OSHA PEL of 50 ppm TWA. ' +
      'The NIOSH 200 ppm ceiling only caps peaks and would let a reading 4 × the OSHA PEL pass.',
  },
} satisfies AtmosphereLimits);

export const DEFAULT_ATMOSPHERE_LIMITS: Readonly<AtmosphereLimits> = deepFreeze({
  ...cloneLimits(PUBLISHED_LIMITS),
  hotWorkLel: {
    max: 0,
    unit: '%LEL',
    source:
      'Common practice at the point of hot work: 0 %LEL, stopping at any flammable reading; no published figure. ' +
      'A site may raise it only with a stated reason.',
  },
} satisfies AtmosphereLimits);

export const DEFAULT_REQUIRED_GASES: readonly Gas[] = Object.freeze(['o2', 'lel'] as const);

const READING_FIELD: Record<Gas, keyof AtmosphereReadings> = {
  o2: 'o2Pct',
  lel: 'lelPct',
  h2s: 'h2sPpm',
  co: 'coPpm',
};

const GAS_NAME: Record<Gas, string> = {
  o2: 'Oxygen',
  lel: 'Flammable gas',
  h2s: 'H₂S',
  co: 'CO',
};

const LIMIT_NAME: Record<LimitKey, string> = {
  o2: 'oxygen',
  lel: 'flammable gas',
  hotWorkLel: 'hot-work flammable gas',
  h2s: 'H₂S',
  co: 'CO',
};

// Above these a reading is a typing slip or an instrument fault, not an atmosphere: %vol and
// %LEL cannot pass 100, and a million ppm is the whole atmosphere.
const READING_MAX: Record<Gas, number> = { o2: 100, lel: 100, h2s: 1_000_000, co: 1_000_000 };

const LIMIT_KEYS: readonly LimitKey[] = ['o2', 'lel', 'hotWorkLel', 'h2s', 'co'];

function strictest(key: LimitKey, floor?: AtmosphereLimits): GasBound {
  const published: GasBound = PUBLISHED_LIMITS[key];
  const own: GasBound | undefined = floor?.[key];
  const pick = (a: number | undefined, b: number | undefined, choose: (x: number, y: number) => number) =>
    a === undefined ? b : b === undefined ? a : choose(a, b);
  return {
    unit: published.unit,
    min: pick(published.min, own?.min, Math.max),
    max: pick(published.max, own?.max, Math.min),
  };
}

function capitalise(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

function checkBound(key: LimitKey, bound: { min?: number; max?: number }, floor?: AtmosphereLimits): void {
  const allowed = strictest(key, floor);
  const name = LIMIT_NAME[key];
  const check = (side: 'min' | 'max', value: number | undefined) => {
    if (value === undefined) return;
    const field = `${key}.${side}`;
    requireNumber(field, value, { label: `${name} ${side === 'min' ? 'minimum' : 'maximum'}`, unit: allowed.unit, min: 0 });
    const limit = allowed[side];
    if (limit === undefined) return;
    const looser = side === 'min' ? value < limit : value > limit;
    if (looser) {
      const direction = side === 'min' ? 'below' : 'above';
      const stricterSet = floor ? ', or a stricter limit already set' : '';
      throw new CalcInputError(
        field,
        `${capitalise(name)} ${side === 'min' ? 'minimum' : 'maximum'} ${value} ${allowed.unit} is refused: it is ` +
          `${direction} the ${limit} ${allowed.unit} that applies (${PUBLISHED_LIMITS[key].source}${stricterSet}). ` +
          'Limits may only be made stricter than the published ones.',
      );
    }
  };
  check('min', bound.min);
  check('max', bound.max);
  if (bound.min !== undefined && bound.max !== undefined && bound.min > bound.max) {
    throw new CalcInputError(
      `${key}.min`,
      `The ${name} minimum (${bound.min} ${allowed.unit}) is above its maximum (${bound.max} ${allowed.unit}).`,
    );
  }
}

/**
 * Applies tenant or permit limits on top of `base`. Refuses, with the reason, any value looser
 * than the published limit, or than `options.floor` when given. The hot-work flammable limit may
 * be raised from its 0 %LEL default up to 10 %LEL: the default is operator practice, not a
 * published figure, and 10 %LEL is the published bound.
 */
export function tightenLimits(
  base: AtmosphereLimits,
  requested: LimitRequest,
  options: TightenOptions = {},
): AtmosphereLimits {
  const result = cloneLimits(base);
  const label = requested.source?.trim() || 'Tenant or permit limit';
  for (const key of LIMIT_KEYS) {
    const change: { min?: number; max?: number } | undefined = requested[key];
    if (!change) continue;
    if (key !== 'o2' && change.min !== undefined) {
      throw new CalcInputError(`${key}.min`, `The ${LIMIT_NAME[key]} limit has a maximum only; it takes no minimum.`);
    }
    const picked = { min: change.min, max: change.max };
    if (picked.min === undefined && picked.max === undefined) continue;
    const target: { min?: number; max?: number; source: string } = result[key];
    if (picked.min !== undefined) target.min = picked.min;
    if (picked.max !== undefined) target.max = picked.max;
    target.source = `${label}; within ${PUBLISHED_LIMITS[key].source}`;
  }
  for (const key of LIMIT_KEYS) checkBound(key, result[key], options.floor);
  return result;
}

function describeBound(bound: GasBound): string {
  if (bound.min !== undefined && bound.max !== undefined) return `${bound.min}–${bound.max} ${bound.unit}`;
  if (bound.max !== undefined) return `at most ${bound.max} ${bound.unit}`;
  return `at least ${bound.min} ${bound.unit}`;
}

function judge(gas: Gas, value: number | null, limit: GasBound & { source: string }, required: boolean): GasResult {
  const bound: GasBound = { unit: limit.unit };
  if (limit.min !== undefined) bound.min = limit.min;
  if (limit.max !== undefined) bound.max = limit.max;
  const base = { value, limit: bound, source: limit.source, required };
  const name = GAS_NAME[gas];
  if (value === null) {
    return {
      ...base,
      verdict: 'not measured',
      message: required ? `${name} was not measured; a reading is required.` : `${name} was not measured.`,
    };
  }
  const reading = `${name} ${value} ${limit.unit}`;
  if (bound.min !== undefined && value < bound.min) {
    return { ...base, verdict: 'fail', message: `${reading} is below the ${bound.min} ${limit.unit} minimum.` };
  }
  if (bound.max !== undefined && value > bound.max) {
    return { ...base, verdict: 'fail', message: `${reading} is above the ${bound.max} ${limit.unit} maximum.` };
  }
  return { ...base, verdict: 'pass', message: `${reading} is within ${describeBound(bound)}.` };
}

/**
 * Judges one set of readings. A gas with no reading is 'not measured', never a pass; the test as
 * a whole fails when a required gas is missing, because an unmeasured hazard is an unknown one.
 * The limits are checked against the published ones too, so a hand-built limits object cannot
 * loosen them.
 */
export function assessAtmosphere(
  readings: AtmosphereReadings,
  limits: AtmosphereLimits = DEFAULT_ATMOSPHERE_LIMITS,
  options: AssessOptions = {},
): AtmosphereAssessment {
  for (const key of LIMIT_KEYS) checkBound(key, limits[key]);
  const hotWork = options.hotWork ?? false;
  const required = new Set<Gas>(options.required ?? DEFAULT_REQUIRED_GASES);
  for (const gas of required) {
    if (!GASES.includes(gas)) {
      throw new CalcInputError('required', `"${String(gas)}" is not a gas Holdpoint tests for; use ${GASES.join(', ')}.`);
    }
  }
  if (hotWork) required.add('lel');

  const gases = {} as Record<Gas, GasResult>;
  for (const gas of GASES) {
    const field = READING_FIELD[gas];
    const raw = readings[field];
    const value =
      raw === undefined || raw === null
        ? null
        : requireNumber(field, raw, { label: `${GAS_NAME[gas]} reading`, min: 0, max: READING_MAX[gas] });
    const limit = gas === 'lel' && hotWork ? limits.hotWorkLel : limits[gas];
    gases[gas] = judge(gas, value, limit, required.has(gas));
  }
  const failed = GASES.some(
    (gas) => gases[gas].verdict === 'fail' || (gases[gas].verdict === 'not measured' && gases[gas].required),
  );
  return { verdict: failed ? 'fail' : 'pass', hotWork, gases };
}
