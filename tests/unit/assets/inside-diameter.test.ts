import { describe, expect, it } from 'vitest';
import { CalcInputError } from '@shared/calc';
import { resolveInsideDiameter } from '@shared/assets/inside-diameter';

function fieldOf(run: () => unknown): string {
  try {
    run();
  } catch (err) {
    if (err instanceof CalcInputError) return err.field;
    throw err;
  }
  throw new Error('expected a CalcInputError');
}

describe('resolveInsideDiameter', () => {
  it('when only the schedule is given, then the bore comes from the table (ASME B36.10M-2004: NPS 10 Sch 40 → 10.750 − 2 × 0.365 = 10.020 in)', () => {
    const r = resolveInsideDiameter({ nps: 10, schedule: '40' });
    expect(r.source).toBe('schedule');
    expect(r.idIn).toBeCloseTo(10.02, 9);
    expect(r.odIn).toBe(10.75);
  });

  it('when a wall is given, then bore = OD − 2 × wall (ASME B36.10M-2004: NPS 16 OD 16.000 in, 0.500 in wall → 15.000 in)', () => {
    expect(resolveInsideDiameter({ nps: 16, wallThicknessIn: 0.5 })).toEqual({ idIn: 15, odIn: 16, source: 'wall' });
  });

  it('when a measured bore is given, then it wins over schedule and wall', () => {
    expect(resolveInsideDiameter({ nps: 10, schedule: '40', wallThicknessIn: 0.365, insideDiameterIn: 10.01 })).toMatchObject({ idIn: 10.01, source: 'explicit' });
  });

  it('when schedule and wall disagree (NPS 10 Sch 40 is 0.365 in per ASME B36.10M-2004, not 0.5), then the wall is refused', () => {
    expect(fieldOf(() => resolveInsideDiameter({ nps: 10, schedule: '40', wallThicknessIn: 0.5 }))).toBe('wallThicknessIn');
  });

  it('when nothing says what the bore is, or the measured bore is not smaller than the OD, then the field to fix is named', () => {
    expect(fieldOf(() => resolveInsideDiameter({ nps: 10 }))).toBe('schedule');
    expect(fieldOf(() => resolveInsideDiameter({ nps: 10, insideDiameterIn: 10.75 }))).toBe('insideDiameterIn');
    expect(fieldOf(() => resolveInsideDiameter({ nps: 9, wallThicknessIn: 0.3 }))).toBe('nps');
    expect(fieldOf(() => resolveInsideDiameter({ nps: 22, schedule: '40' }))).toBe('schedule');
  });

  it('when the size is not in the table but the bore was measured, then the measured bore is used with no OD', () => {
    expect(resolveInsideDiameter({ nps: 9, insideDiameterIn: 8.5 })).toEqual({ idIn: 8.5, odIn: null, source: 'explicit' });
  });
});
