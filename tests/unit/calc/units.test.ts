import { unit } from 'mathjs';
import { describe, expect, it } from 'vitest';
import {
  CalcInputError,
  bblToGal,
  bblToM3,
  ftToM,
  galToBbl,
  galToL,
  in3ToGal,
  inToMm,
  kgToLb,
  lToGal,
  lbToKg,
  m3ToBbl,
  mToFt,
  mmToIn,
  round,
} from '@shared/calc';

// mathjs is a general-purpose reference library; its units carry the same exact definitions
// (1 in = 25.4 mm, 1 lb = 0.45359237 kg, 1 US gal = 3.785411784 L, oil barrel = 42 US gal).
function close(actual: number, expected: number): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(expected)));
}

describe('unit conversions against mathjs', () => {
  it.each([0, 1, 10, 10.75, 36])('when %d in is converted, then it matches mathjs in → mm', (x) => {
    close(inToMm(x), unit(x, 'inch').toNumber('mm'));
    close(mmToIn(inToMm(x)), x);
  });

  it.each([1, 5280, 0.5])('when %d ft is converted, then it matches mathjs ft → m', (x) => {
    close(ftToM(x), unit(x, 'ft').toNumber('m'));
    close(mToFt(ftToM(x)), x);
  });

  it.each([1, 62.5, 256])('when %d lb is converted, then it matches mathjs lb → kg', (x) => {
    close(lbToKg(x), unit(x, 'lb').toNumber('kg'));
    close(kgToLb(lbToKg(x)), x);
  });

  it.each([1, 3.75, 42])('when %d US gal is converted, then it matches mathjs gal → L (gal is the US gallon)', (x) => {
    close(galToL(x), unit(x, 'gal').toNumber('L'));
    close(lToGal(galToL(x)), x);
  });

  it('when cubic inches are converted, then 231 in³ is one US gallon (mathjs agrees)', () => {
    close(in3ToGal(231), 1);
    close(unit(231, 'inch^3').toNumber('gal'), 1);
  });

  // In mathjs "bbl" is the 31-gallon beer barrel; the 42-gallon petroleum barrel is "oilbarrel".
  it('when barrels are converted, then they match mathjs oilbarrel, not its bbl (a 31-gal beer barrel)', () => {
    expect(unit(1, 'bbl').toNumber('gal')).toBeCloseTo(31, 12);
    close(bblToGal(1), unit(1, 'oilbarrel').toNumber('gal'));
    close(bblToM3(1), unit(1, 'oilbarrel').toNumber('m^3'));
    close(bblToM3(515), unit(515, 'oilbarrel').toNumber('m^3'));
    close(m3ToBbl(bblToM3(515)), 515);
    close(galToBbl(bblToGal(7)), 7);
    close(bblToM3(1), 0.158987294928);
  });

  it.each([
    ['inches', () => inToMm(-1)],
    ['mm', () => mmToIn(Number.NaN)],
    ['pounds', () => lbToKg(Number.POSITIVE_INFINITY)],
    ['litres', () => lToGal(-3)],
    ['barrels', () => bblToM3(-0.1)],
  ])('when a negative or non-number %s value is converted, then it is refused', (field, run) => {
    let caught: unknown;
    try {
      run();
    } catch (error) {
      caught = error;
    }
    expect(caught).toBeInstanceOf(CalcInputError);
    expect((caught as CalcInputError).field).toBe(field);
  });
});

describe('round (display only)', () => {
  it.each([
    [1.005, 2, 1.01],
    [62.5, 0, 63],
    [-62.5, 0, -63],
    [0.015543, 5, 0.01554],
    [3.7515006, 2, 3.75],
    [1e-7, 2, 0],
    [123456.789, 1, 123456.8],
  ])('when %d is rounded to %d places, then it is %d', (x, dp, expected) => {
    expect(round(x, dp)).toBe(expected);
  });

  it('when the places are not a whole number from 0 to 15, then it is refused', () => {
    expect(() => round(1, -1)).toThrow(CalcInputError);
    expect(() => round(1, 1.5)).toThrow(CalcInputError);
    expect(() => round(Number.NaN, 1)).toThrow(CalcInputError);
  });
});
