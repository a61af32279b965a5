import { describe, expect, it } from 'vitest';
import { CalcInputError, lineFill, pipeDimensions } from '@shared/calc';

function calcError(run: () => unknown): CalcInputError {
  try {
    run();
  } catch (error) {
    if (error instanceof CalcInputError) return error;
    throw error;
  }
  throw new Error('expected a CalcInputError, but nothing was thrown');
}

const relative = (actual: number, expected: number) => Math.abs(actual / expected - 1);

describe('lineFill', () => {
  // Field rule bbl/ft = ID²/1029.4, ID in inches (oilfield tables; from the trade reference).
  it('when the bore is 4.000 in, then it holds 0.01554 bbl per foot (ID²/1029.4)', () => {
    const fill = lineFill({ idIn: 4, lengthFt: 1 });
    expect(fill.bblPerFt).toBeCloseTo(0.01554, 5);
    expect(relative(fill.bblPerFt, 16 / 1029.4)).toBeLessThan(1e-4);
  });

  // Field rule US gal/ft = 0.0408 × ID².
  it.each([0.5, 2, 4, 10.02, 23.25, 36])('when the bore is %d in, then gal/ft is 0.0408 × ID² within 0.1 %', (id) => {
    expect(relative(lineFill({ idIn: id, lengthFt: 1 }).galPerFt, 0.0408 * id * id)).toBeLessThan(0.001);
  });

  // Exact definitions: 1 US gal = 231 in³, 1 bbl = 42 US gal, 1 US gal = 3.785411784 L.
  it('when a length is filled, then gallons, barrels, cubic inches and cubic metres agree with each other', () => {
    const fill = lineFill({ idIn: 8, lengthFt: 250 });
    const in3 = (Math.PI / 4) * 8 * 8 * 12 * 250;
    expect(relative(fill.gallons, in3 / 231)).toBeLessThan(1e-12);
    expect(relative(fill.gallons, fill.barrels * 42)).toBeLessThan(1e-12);
    expect(relative(fill.barrels, fill.bblPerFt * 250)).toBeLessThan(1e-12);
    expect(relative(fill.gallons, fill.galPerFt * 250)).toBeLessThan(1e-12);
    expect(relative(fill.cubicMetres, (fill.gallons * 3.785411784) / 1000)).toBeLessThan(1e-12);
    expect(relative(fill.cubicMetres, in3 * 0.0254 ** 3)).toBeLessThan(1e-12);
  });

  it('when a mile of NPS 10 Sch 40 is filled, then it holds about 515 bbl (81.9 m³)', () => {
    const fill = lineFill({ idIn: pipeDimensions(10, '40').idIn, lengthFt: 5280 });
    expect(fill.barrels).toBeCloseTo((10.02 ** 2 / 1029.4) * 5280, 0);
    expect(fill.barrels).toBeCloseTo(515, 0);
    expect(fill.cubicMetres).toBeCloseTo(81.9, 1);
  });

  it.each([
    ['idIn', { idIn: 0, lengthFt: 100 }],
    ['idIn', { idIn: -4, lengthFt: 100 }],
    ['idIn', { idIn: Number.NaN, lengthFt: 100 }],
    ['idIn', { idIn: 61, lengthFt: 100 }],
    ['idIn', { idIn: 0.05, lengthFt: 100 }],
    ['lengthFt', { idIn: 4, lengthFt: 0 }],
    ['lengthFt', { idIn: 4, lengthFt: -100 }],
    ['lengthFt', { idIn: 4, lengthFt: Number.POSITIVE_INFINITY }],
    ['lengthFt', { idIn: 4, lengthFt: 6_000_000 }],
  ])('when %s is nonsense (%o), then it is refused on that field', (field, input) => {
    const error = calcError(() => lineFill(input));
    expect(error.field).toBe(field);
    expect(error.message.length).toBeGreaterThan(10);
  });
});
