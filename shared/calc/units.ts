/**
 * US customary ↔ metric conversions, the input error every calculation throws, and the
 * number checks they share.
 *
 * Every factor below is an exact definition, so conversions carry no rounding of their own:
 * 1 in = 25.4 mm and 1 lb = 0.45359237 kg (international yard and pound agreement, 1959);
 * 1 US gal = 231 in³ = 3.785411784 L; 1 oil barrel = 42 US gal (petroleum industry barrel).
 */

export const MM_PER_IN = 25.4;
export const IN_PER_FT = 12;
export const M_PER_FT = 0.3048;
export const KG_PER_LB = 0.45359237;
export const IN3_PER_US_GAL = 231;
export const L_PER_US_GAL = 3.785411784;
export const US_GAL_PER_BBL = 42;
export const IN3_PER_BBL = IN3_PER_US_GAL * US_GAL_PER_BBL;
export const L_PER_M3 = 1000;

/**
 * Thrown when a calculation is given input it cannot honestly answer. `field` names the input
 * so a form can put the message beside it; the message is written for the person filling it in.
 */
export class CalcInputError extends Error {
  readonly field: string;

  constructor(field: string, message: string) {
    super(message);
    this.name = 'CalcInputError';
    this.field = field;
  }
}

export interface NumberRule {
  /** What the person calls this input, used in messages ("pipe diameter"). */
  label: string;
  unit?: string;
  min?: number;
  /** When true, `min` itself is refused (a diameter of exactly 0 is as useless as a negative one). */
  minExclusive?: boolean;
  max?: number;
  /** Said after the range in the message, so the person learns why the bound exists. */
  reason?: string;
}

function withUnit(value: number, unit?: string): string {
  return unit ? `${value} ${unit}` : String(value);
}

/** Returns `value` when it is a finite number inside the rule's range; otherwise throws CalcInputError. */
export function requireNumber(field: string, value: unknown, rule: NumberRule): number {
  if (typeof value !== 'number' || !Number.isFinite(value)) {
    throw new CalcInputError(field, `The ${rule.label} must be a number (got ${String(value)}).`);
  }
  const because = rule.reason ? ` ${rule.reason}` : '';
  if (rule.min !== undefined) {
    const tooLow = rule.minExclusive ? value <= rule.min : value < rule.min;
    if (tooLow) {
      const bound = rule.minExclusive ? 'greater than' : 'at least';
      throw new CalcInputError(
        field,
        `The ${rule.label} must be ${bound} ${withUnit(rule.min, rule.unit)} (got ${withUnit(value, rule.unit)}).${because}`,
      );
    }
  }
  if (rule.max !== undefined && value > rule.max) {
    throw new CalcInputError(
      field,
      `The ${rule.label} must be at most ${withUnit(rule.max, rule.unit)} (got ${withUnit(value, rule.unit)}).${because}`,
    );
  }
  return value;
}

// Conversions refuse negatives because every quantity Holdpoint converts (lengths, masses,
// volumes) is a size, and a negative size is always a typing slip.
function quantity(field: string, value: number, unit: string): number {
  return requireNumber(field, value, { label: `value in ${unit}`, unit, min: 0 });
}

export const inToMm = (inches: number): number => quantity('inches', inches, 'in') * MM_PER_IN;
export const mmToIn = (mm: number): number => quantity('mm', mm, 'mm') / MM_PER_IN;
export const ftToM = (feet: number): number => quantity('feet', feet, 'ft') * M_PER_FT;
export const mToFt = (metres: number): number => quantity('metres', metres, 'm') / M_PER_FT;
export const lbToKg = (pounds: number): number => quantity('pounds', pounds, 'lb') * KG_PER_LB;
export const kgToLb = (kg: number): number => quantity('kg', kg, 'kg') / KG_PER_LB;
export const galToL = (gallons: number): number => quantity('gallons', gallons, 'US gal') * L_PER_US_GAL;
export const lToGal = (litres: number): number => quantity('litres', litres, 'L') / L_PER_US_GAL;
export const bblToGal = (barrels: number): number => quantity('barrels', barrels, 'bbl') * US_GAL_PER_BBL;
export const galToBbl = (gallons: number): number => quantity('gallons', gallons, 'US gal') / US_GAL_PER_BBL;
export const bblToM3 = (barrels: number): number =>
  (quantity('barrels', barrels, 'bbl') * US_GAL_PER_BBL * L_PER_US_GAL) / L_PER_M3;
export const m3ToBbl = (cubicMetres: number): number =>
  (quantity('cubicMetres', cubicMetres, 'm³') * L_PER_M3) / (US_GAL_PER_BBL * L_PER_US_GAL);
export const in3ToGal = (cubicInches: number): number =>
  quantity('cubicInches', cubicInches, 'in³') / IN3_PER_US_GAL;

/**
 * Rounds half away from zero to `dp` decimal places, for display only: the calculations return
 * full precision so that rounding happens once, at the screen or the printed permit.
 * Shifting by exponent strings rather than multiplying keeps 1.005 → 1.01 (1.005 × 100 is 100.49999…).
 */
export function round(x: number, dp = 0): number {
  requireNumber('x', x, { label: 'number to round' });
  if (!Number.isInteger(dp) || dp < 0 || dp > 15) {
    throw new CalcInputError('dp', `Decimal places must be a whole number from 0 to 15 (got ${dp}).`);
  }
  const result = shiftDecimal(Math.round(shiftDecimal(Math.abs(x), dp)), -dp);
  return x < 0 ? -result : result;
}

function shiftDecimal(value: number, places: number): number {
  const [mantissa, exponent] = value.toExponential().split('e');
  return Number(`${mantissa}e${Number(exponent) + places}`);
}
