import { describe, expect, it } from 'vitest';
import { describeGasDue, describeValidity, formatSpan } from '@client/features/permits/lib/time-left';

const at = (iso: string) => new Date(iso);

describe('validity countdown (common practice, no published source)', () => {
  it('when the permit runs 5 h 12 min more, then it says so', () => {
    expect(describeValidity(at('2026-12-02T10:00:00Z'), '2026-12-02T08:00:00Z', '2026-12-02T15:12:00Z')).toEqual({ phase: 'valid', text: 'valid for 5 h 12 min more' });
  });

  it('when the window ended 20 minutes ago, then it says expired 20 min ago', () => {
    expect(describeValidity(at('2026-12-02T15:32:00Z'), '2026-12-02T08:00:00Z', '2026-12-02T15:12:00Z')).toEqual({ phase: 'ended', text: 'expired 20 min ago' });
  });

  it('when the window has not opened, then it says how long until it does', () => {
    expect(describeValidity(at('2026-12-02T06:00:00Z'), '2026-12-02T08:00:00Z', '2026-12-02T15:00:00Z')).toEqual({ phase: 'not_yet', text: 'starts in 2 h' });
  });

  it('when spans are written, then days, hours and minutes are shortened and seconds dropped', () => {
    expect(formatSpan(30_000)).toBe('less than a minute');
    expect(formatSpan(40 * 60_000)).toBe('40 min');
    expect(formatSpan(2 * 3_600_000)).toBe('2 h');
    expect(formatSpan((2 * 24 + 3) * 3_600_000 + 59_000)).toBe('2 d 3 h');
  });
});

describe('next gas test (wording from date-fns formatDistance)', () => {
  it('when the repeat test is 12 minutes away, then it is due in 12 minutes', () => {
    expect(describeGasDue(at('2026-12-02T10:00:00Z'), '2026-12-02T10:12:00Z')).toEqual({ overdue: false, text: 'due in 12 minutes' });
  });

  it('when the repeat test was due 5 minutes ago, then it is overdue', () => {
    expect(describeGasDue(at('2026-12-02T10:05:00Z'), '2026-12-02T10:00:00Z')).toEqual({ overdue: true, text: 'overdue by 5 minutes' });
  });
});
