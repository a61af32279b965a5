import { describe, expect, it } from 'vitest';
import { formatInZone, isoToWallTime, nextWholeHourWall, wallTimeToIso, zoneOffsetMinutes } from '@shared/time/zone';

// Offsets from the IANA time zone database as shipped with Node's ICU (America/Chicago: CST -06:00, CDT -05:00;
// US summer time 2026 runs from 8 March to 1 November).
describe('wall time in the tenant time zone', () => {
  it('when 07:00 on 2 Dec 2026 is entered for a Chicago tenant, then it is sent as 07:00 at -06:00', () => {
    expect(wallTimeToIso('2026-12-02T07:00', 'America/Chicago')).toBe('2026-12-02T07:00:00-06:00');
  });

  it('when 07:00 on 2 Jul 2026 is entered for a Chicago tenant, then summer time gives -05:00', () => {
    expect(wallTimeToIso('2026-07-02T07:00', 'America/Chicago')).toBe('2026-07-02T07:00:00-05:00');
  });

  it('when the ISO time is read back, then the datetime-local field shows the same wall time whatever zone the browser is in', () => {
    expect(isoToWallTime('2026-12-02T13:00:00.000Z', 'America/Chicago')).toBe('2026-12-02T07:00');
    expect(isoToWallTime(wallTimeToIso('2026-03-20T23:30', 'America/Denver'), 'America/Denver')).toBe('2026-03-20T23:30');
  });

  it('when the tenant is on UTC, then the offset is written Z', () => {
    expect(wallTimeToIso('2026-12-02T07:00', 'UTC')).toBe('2026-12-02T07:00:00Z');
  });

  it('when 02:30 is entered on the night Chicago clocks jump from 02:00 to 03:00 (8 Mar 2026), then it moves forward to 03:30 CDT', () => {
    expect(wallTimeToIso('2026-03-08T02:30', 'America/Chicago')).toBe('2026-03-08T03:30:00-05:00');
  });

  it('when 01:30 is entered on the night Chicago clocks go back (1 Nov 2026), then the first 01:30 (CDT) is meant', () => {
    expect(wallTimeToIso('2026-11-01T01:30', 'America/Chicago')).toBe('2026-11-01T01:30:00-05:00');
  });

  it('when the field is empty or half typed, then nothing is sent so the schema names the field', () => {
    expect(wallTimeToIso('', 'America/Chicago')).toBe('');
    expect(wallTimeToIso('2026-12-02T', 'America/Chicago')).toBe('');
    expect(isoToWallTime('', 'America/Chicago')).toBe('');
  });

  it('when the zone offset is asked for, then Chicago in winter is 360 minutes behind UTC', () => {
    expect(zoneOffsetMinutes(Date.UTC(2026, 11, 2, 12), 'America/Chicago')).toBe(-360);
  });

  it('when a time is displayed, then it is shown where the line is with the zone written out', () => {
    expect(formatInZone('2026-12-02T13:00:00Z', 'America/Chicago')).toBe('2 Dec 2026, 07:00 CST');
    expect(formatInZone(null, 'America/Chicago')).toBe('—');
  });

  it('when a new request opens at 06:20 Chicago time, then it proposes 08:00 as the start (the whole hour after next)', () => {
    expect(nextWholeHourWall(new Date('2026-12-02T12:20:00Z'), 'America/Chicago', 1)).toBe('2026-12-02T07:00');
    expect(nextWholeHourWall(new Date('2026-12-02T12:20:00Z'), 'America/Chicago', 2)).toBe('2026-12-02T08:00');
  });
});
