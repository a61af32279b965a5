import { describe, expect, it } from 'vitest';
import { CalcInputError, PIPE_SIZES_BY_SCHEDULE, pipeDimensions, pipeSizeOptions } from '@shared/calc';

function calcError(run: () => unknown): CalcInputError {
  try {
    run();
  } catch (error) {
    if (error instanceof CalcInputError) return error;
    throw error;
  }
  throw new Error('expected a CalcInputError, but nothing was thrown');
}

describe('pipeDimensions (ASME B36.10M-2004)', () => {
  it('when NPS 10 Sch 40 is asked for, then OD 10.750, wall 0.365, ID 10.020 in', () => {
    const pipe = pipeDimensions(10, '40');
    expect(pipe.odIn).toBe(10.75);
    expect(pipe.wallIn).toBe(0.365);
    expect(pipe.idIn).toBeCloseTo(10.02, 12);
  });

  it('when NPS 12 STD is asked for, then OD 12.750, wall 0.375, ID 12.000 in', () => {
    const pipe = pipeDimensions(12, 'STD');
    expect(pipe.odIn).toBe(12.75);
    expect(pipe.wallIn).toBe(0.375);
    expect(pipe.idIn).toBeCloseTo(12, 12);
  });

  it('when NPS 12 is Sch 40 rather than STD, then the heavier 0.406 in wall gives ID 11.938 in', () => {
    expect(pipeDimensions(12, '40').idIn).toBeCloseTo(11.938, 12);
  });

  it('when a fractional size is given as a number, then it is found (NPS 1 1/4 XS: OD 1.660, wall 0.191)', () => {
    const pipe = pipeDimensions(1.25, 'XS');
    expect(pipe).toEqual({ odIn: 1.66, wallIn: 0.191, idIn: expect.closeTo(1.278, 12) });
  });

  it('when the schedule is given as the number 40 or 80, then it means Sch 40 or Sch 80', () => {
    expect(pipeDimensions(10, 40)).toEqual(pipeDimensions(10, '40'));
    expect(pipeDimensions(10, 80).wallIn).toBe(0.594);
  });

  it('when the size is not a standard one, then it is refused and the listed sizes are named', () => {
    const error = calcError(() => pipeDimensions(11, 'STD'));
    expect(error.field).toBe('nps');
    expect(error.message).toMatch(/NPS 11 is not a standard pipe size/);
    expect(error.message).toContain('1 1/4');
  });

  it('when the schedule is unknown, then it is refused with the choices', () => {
    const error = calcError(() => pipeDimensions(10, '5' as never));
    expect(error.field).toBe('schedule');
    expect(error.message).toMatch(/not one ASME B36\.10M lists; choose Sch 10, Sch 20, Sch 30, STD, Sch 40, .* Sch 160, XXS/);
  });

  it('finding 17: when NPS 10 Sch 160 or XXS is asked for, then B36.10M walls 1.125 and 1.000 in give bores 8.500 and 8.750 in', () => {
    expect(pipeDimensions(10, '160')).toEqual({ odIn: 10.75, wallIn: 1.125, idIn: expect.closeTo(8.5, 12) });
    expect(pipeDimensions(10, 'XXS')).toEqual({ odIn: 10.75, wallIn: 1, idIn: expect.closeTo(8.75, 12) });
    expect(pipeDimensions(10, 160)).toEqual(pipeDimensions(10, '160'));
  });

  it('finding 17: when the smallest and largest sizes are asked for, then NPS 1/8 Sch 10 (OD 0.405, wall 0.049) and NPS 48 XS (wall 0.500) are found', () => {
    expect(pipeDimensions(0.125, '10')).toEqual({ odIn: 0.405, wallIn: 0.049, idIn: expect.closeTo(0.307, 12) });
    expect(pipeDimensions(48, 'XS')).toEqual({ odIn: 48, wallIn: 0.5, idIn: expect.closeTo(47, 12) });
  });

  it('when B36.10M lists no wall for that size and schedule, then it says so and offers the ones it has', () => {
    const error = calcError(() => pipeDimensions(22, '40'));
    expect(error.field).toBe('schedule');
    expect(error.message).toBe(
      'Sch 40 is not listed for NPS 22 in ASME B36.10M; for this size choose Sch 10, Sch 20, Sch 30, STD, Sch 60, XS, Sch 80, Sch 100, Sch 120, Sch 140, Sch 160, or enter the measured inside diameter.',
    );
    expect(calcError(() => pipeDimensions(36, '80')).message).toMatch(/Sch 80 is not listed for NPS 36/);
  });

  it.each([0, -10, Number.NaN, Number.POSITIVE_INFINITY])('when the size is %d, then it is refused', (nps) => {
    expect(calcError(() => pipeDimensions(nps, 'STD')).field).toBe('nps');
  });
});

describe('sizes for pickers', () => {
  it('when STD or XS is chosen, then all 36 sizes from NPS 1/8 to 48 are offered', () => {
    expect(PIPE_SIZES_BY_SCHEDULE.STD).toHaveLength(36);
    expect(PIPE_SIZES_BY_SCHEDULE.XS).toEqual(PIPE_SIZES_BY_SCHEDULE.STD);
  });

  it('when Sch 40 is chosen, then NPS 22, 26, 28 and 30 are not offered (none listed in B36.10M)', () => {
    const sizes = PIPE_SIZES_BY_SCHEDULE['40'];
    for (const missing of [22, 26, 28, 30]) expect(sizes).not.toContain(missing);
    expect(sizes).toHaveLength(26);
    expect(sizes.at(-1)).toBe(36);
  });

  it('when Sch 80 is chosen, then sizes stop at NPS 24 (B36.10M lists none larger)', () => {
    expect(PIPE_SIZES_BY_SCHEDULE['80']).toHaveLength(24);
    expect(PIPE_SIZES_BY_SCHEDULE['80'].at(-1)).toBe(24);
  });

  it('when options are listed, then each carries its label and the same dimensions as pipeDimensions', () => {
    const options = pipeSizeOptions('XS');
    expect(options[6]).toMatchObject({ nps: 1.25, label: '1 1/4', schedule: 'XS' });
    for (const option of options) {
      expect(pipeDimensions(option.nps, 'XS')).toEqual({ odIn: option.odIn, wallIn: option.wallIn, idIn: option.idIn });
    }
  });
});
