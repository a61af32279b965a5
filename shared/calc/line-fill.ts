/**
 * Volume of liquid held by a length of round pipe, from its inside diameter.
 *
 * Worked from the geometry (π/4 · ID² in² × 12 in/ft) and the exact unit definitions rather than
 * from the field rules bbl/ft = ID²/1029.4 and US gal/ft = 0.0408 · ID², which are that same
 * geometry rounded; the tests hold the result to those rules.
 */
import { MAX_PIPE_DIAMETER_IN, MIN_PIPE_DIAMETER_IN } from './pipe-dimensions';
import { IN3_PER_BBL, IN3_PER_US_GAL, IN_PER_FT, L_PER_M3, L_PER_US_GAL, requireNumber } from './units';

export interface LineFillInput {
  /** Inside diameter, inches: from pipeDimensions(...).idIn or measured. */
  idIn: number;
  lengthFt: number;
}

export interface LineFill {
  bblPerFt: number;
  galPerFt: number;
  barrels: number;
  gallons: number;
  cubicMetres: number;
}

/** About 1,000 miles: no isolated section is that long, so a larger figure is a slip such as an extra digit. */
export const MAX_LINE_LENGTH_FT = 5_280_000;

export function lineFill({ idIn, lengthFt }: LineFillInput): LineFill {
  requireNumber('idIn', idIn, {
    label: 'inside diameter',
    unit: 'in',
    min: MIN_PIPE_DIAMETER_IN,
    max: MAX_PIPE_DIAMETER_IN,
    reason: 'Check the figure is the bore in inches.',
  });
  requireNumber('lengthFt', lengthFt, {
    label: 'line length',
    unit: 'ft',
    min: 0,
    minExclusive: true,
    max: MAX_LINE_LENGTH_FT,
  });
  const in3PerFt = (Math.PI / 4) * idIn * idIn * IN_PER_FT;
  const galPerFt = in3PerFt / IN3_PER_US_GAL;
  const gallons = galPerFt * lengthFt;
  return {
    bblPerFt: in3PerFt / IN3_PER_BBL,
    galPerFt,
    barrels: (in3PerFt * lengthFt) / IN3_PER_BBL,
    gallons,
    cubicMetres: (gallons * L_PER_US_GAL) / L_PER_M3,
  };
}
