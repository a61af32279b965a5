import { describe, expect, it } from 'vitest';
import { CalcInputError, fireWatchEnd } from '@shared/calc';

function calcError(run: () => unknown): CalcInputError {
  try {
    run();
  } catch (error) {
    if (error instanceof CalcInputError) return error;
    throw error;
  }
  throw new Error('expected a CalcInputError, but nothing was thrown');
}

const MINUTE_MS = 60_000;
const ENDED = new Date('2025-06-03T14:20:00Z');

describe('fireWatchEnd', () => {
  it('when no length is given, then the watch runs 60 minutes (NFPA 51B, 2019 edition)', () => {
    expect(fireWatchEnd(ENDED).toISOString()).toBe('2025-06-03T15:20:00.000Z');
  });

  it('when 30 minutes is asked for, then it is accepted (OSHA 29 CFR 1910.252(a)(2)(iii)(B) minimum)', () => {
    expect(fireWatchEnd(ENDED, 30).toISOString()).toBe('2025-06-03T14:50:00.000Z');
  });

  it('when 29 minutes is asked for, then it is refused, naming the OSHA minimum', () => {
    const error = calcError(() => fireWatchEnd(ENDED, 29));
    expect(error.field).toBe('minutes');
    expect(error.message).toMatch(/at least 30 min/);
    expect(error.message).toMatch(/OSHA 29 CFR 1910\.252\(a\)\(2\)\(iii\)\(B\)/);
  });

  it('when NFPA 51B monitoring is added (1 h + 3 h), then 240 minutes is accepted', () => {
    expect(fireWatchEnd(ENDED, 240).getTime() - ENDED.getTime()).toBe(240 * MINUTE_MS);
  });

  // US clocks went forward at 02:00 local on 9 March 2025; the watch is elapsed time, not clock time.
  it('when the clocks change during the watch, then it still lasts 60 real minutes', () => {
    const ended = new Date('2025-03-09T06:30:00Z');
    expect(fireWatchEnd(ended).getTime() - ended.getTime()).toBe(60 * MINUTE_MS);
  });

  it('when the start is given, then it is not changed', () => {
    const ended = new Date(ENDED);
    fireWatchEnd(ended, 45);
    expect(ended.getTime()).toBe(ENDED.getTime());
  });

  it.each([0, -60, Number.NaN, 30.5, 481])('when the length is %d minutes, then it is refused', (minutes) => {
    expect(calcError(() => fireWatchEnd(ENDED, minutes)).field).toBe('minutes');
  });

  it('when the end of hot work is not a valid date, then it is refused', () => {
    expect(calcError(() => fireWatchEnd(new Date('not a date'))).field).toBe('hotWorkEndedAt');
    expect(calcError(() => fireWatchEnd('2025-06-03T14:20:00Z' as unknown as Date)).field).toBe('hotWorkEndedAt');
  });
});
