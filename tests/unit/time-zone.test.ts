import { describe, expect, it } from 'vitest';
import {
  addDays,
  daysBetween,
  endOfSiteDay,
  formatInZone,
  isoToWallTime,
  nextWholeHourWall,
  siteDay,
  siteTimeOfDay,
  startOfSiteDay,
  wallTimeToInstant,
  wallTimeToIso,
  zoneAbbreviation,
  zoneOffsetMinutes,
} from '@shared/time/zone';
import { parseLogTime } from '@shared/gas-tests/csv-readings';

// Expected values come from the IANA tz database rules (as shipped in the runtime's ICU data):
// - America/Chicago: CST is UTC-06:00, CDT UTC-05:00. US summer time begins the second Sunday of March at
//   02:00 local and ends the first Sunday of November at 02:00 local (Energy Policy Act of 2005, 15 U.S.C. 260a):
//   in 2026 on 8 March (02:00 CST = 08:00Z) and 1 November (02:00 CDT = 07:00Z).
// - Europe/London: GMT UTC+00:00, BST UTC+01:00, changing at 01:00 UTC on the last Sunday of March and of October
//   (EU Directive 2000/84/EC; the UK Summer Time Order 2002): in 2026 on 29 March and 25 October.
// - Australia/Perth: AWST UTC+08:00 all year (no summer time since the 2006-2009 trial ended).
// - Asia/Kolkata: IST UTC+05:30 all year.
// - America/Santiago: Chile's summer time starts at 04:00 UTC on the first Sunday on or after 2 September, so local
//   midnight (-04:00) is skipped: 6 September 2026 begins at 01:00 -03:00.
// Gap and overlap choices are the module's stated rule (RFC 5545 section 3.3.5; Temporal's "compatible"):
// a skipped time moves forward by the gap, a time shown twice is the earlier.
const chicago = 'America/Chicago';
const london = 'Europe/London';
const perth = 'Australia/Perth';
const kolkata = 'Asia/Kolkata';
const wall = (year: number, month: number, day: number, hour: number, minute = 0, second = 0) => ({ year, month, day, hour, minute, second });
const iso = (d: Date | null) => d?.toISOString();

describe('finding 3: spring forward (the clocks skip an hour)', () => {
  it('when 02:30 is entered on 8 Mar 2026 in Chicago (02:00 CST jumps to 03:00 CDT), then it is 03:30 CDT, not 01:30 CST', () => {
    expect(iso(wallTimeToInstant(wall(2026, 3, 8, 2, 30), chicago))).toBe('2026-03-08T08:30:00.000Z');
    expect(wallTimeToIso('2026-03-08T02:30', chicago)).toBe('2026-03-08T03:30:00-05:00');
    expect(formatInZone('2026-03-08T08:30:00Z', chicago)).toBe('8 Mar 2026, 03:30 CDT');
  });

  it('when the minutes either side of the Chicago gap are entered, then 01:59 is CST and 03:00 is CDT', () => {
    expect(iso(wallTimeToInstant(wall(2026, 3, 8, 1, 59), chicago))).toBe('2026-03-08T07:59:00.000Z');
    expect(iso(wallTimeToInstant(wall(2026, 3, 8, 3, 0), chicago))).toBe('2026-03-08T08:00:00.000Z');
    expect(iso(wallTimeToInstant(wall(2026, 3, 8, 2, 0), chicago))).toBe('2026-03-08T08:00:00.000Z');
  });

  it('when the day the Chicago clocks go forward is measured, then it runs 23 hours from 00:00 CST to 00:00 CDT', () => {
    expect(iso(startOfSiteDay('2026-03-08', chicago))).toBe('2026-03-08T06:00:00.000Z');
    expect(iso(endOfSiteDay('2026-03-08', chicago))).toBe('2026-03-09T05:00:00.000Z');
  });

  it('when 01:30 is entered on 29 Mar 2026 in London (01:00 GMT jumps to 02:00 BST), then it is 02:30 BST', () => {
    expect(iso(wallTimeToInstant(wall(2026, 3, 29, 1, 30), london))).toBe('2026-03-29T01:30:00.000Z');
    expect(formatInZone('2026-03-29T01:30:00Z', london)).toBe('29 Mar 2026, 02:30 BST');
    expect(iso(startOfSiteDay('2026-03-29', london))).toBe('2026-03-29T00:00:00.000Z');
    expect(iso(endOfSiteDay('2026-03-29', london))).toBe('2026-03-29T23:00:00.000Z');
  });

  it('when a zone skips midnight itself (Santiago, 6 Sep 2026), then the site day starts at 01:00 -03:00', () => {
    expect(iso(startOfSiteDay('2026-09-06', 'America/Santiago'))).toBe('2026-09-06T04:00:00.000Z');
    expect(siteDay(new Date('2026-09-06T04:00:00Z'), 'America/Santiago')).toBe('2026-09-06');
    expect(siteDay(new Date('2026-09-06T03:59:59Z'), 'America/Santiago')).toBe('2026-09-05');
  });
});

describe('finding 3: fall back (the clocks show an hour twice)', () => {
  it('when 01:30 is entered on 1 Nov 2026 in Chicago, then the first 01:30 (CDT) is meant, and the second reads as CST', () => {
    expect(iso(wallTimeToInstant(wall(2026, 11, 1, 1, 30), chicago))).toBe('2026-11-01T06:30:00.000Z');
    expect(wallTimeToIso('2026-11-01T01:30', chicago)).toBe('2026-11-01T01:30:00-05:00');
    expect(formatInZone('2026-11-01T06:30:00Z', chicago)).toBe('1 Nov 2026, 01:30 CDT');
    expect(formatInZone('2026-11-01T07:30:00Z', chicago)).toBe('1 Nov 2026, 01:30 CST');
    expect(siteDay(new Date('2026-11-01T07:30:00Z'), chicago)).toBe('2026-11-01');
  });

  it('when the day the Chicago clocks go back is measured, then it runs 25 hours from 00:00 CDT to 00:00 CST', () => {
    expect(iso(startOfSiteDay('2026-11-01', chicago))).toBe('2026-11-01T05:00:00.000Z');
    expect(iso(endOfSiteDay('2026-11-01', chicago))).toBe('2026-11-02T06:00:00.000Z');
  });

  it('when 01:30 is entered on 25 Oct 2026 in London, then the first 01:30 (BST) is meant', () => {
    expect(iso(wallTimeToInstant(wall(2026, 10, 25, 1, 30), london))).toBe('2026-10-25T00:30:00.000Z');
    expect(formatInZone('2026-10-25T00:30:00Z', london)).toBe('25 Oct 2026, 01:30 BST');
    expect(formatInZone('2026-10-25T01:30:00Z', london)).toBe('25 Oct 2026, 01:30 GMT');
    expect(iso(endOfSiteDay('2026-10-25', london))).toBe('2026-10-26T00:00:00.000Z');
  });

  it('when a monitor log without a zone says 01:30 on the Chicago fall-back night, then it is read by the same rule', () => {
    expect(parseLogTime('2026-11-01 01:30:00', chicago)?.toISOString()).toBe('2026-11-01T06:30:00.000Z');
    expect(parseLogTime('2026-03-08 02:30:00', chicago)?.toISOString()).toBe('2026-03-08T08:30:00.000Z');
  });
});

describe('finding 3: the hours either side of local midnight', () => {
  it('when it is 18:00 or later in Chicago in winter (already the next day in UTC), then the site day is still today', () => {
    expect(siteDay(new Date('2026-12-03T00:00:00Z'), chicago)).toBe('2026-12-02');
    expect(siteDay(new Date('2026-12-03T05:59:59Z'), chicago)).toBe('2026-12-02');
    expect(siteDay(new Date('2026-12-03T06:00:00Z'), chicago)).toBe('2026-12-03');
    expect(siteTimeOfDay(new Date('2026-12-03T01:00:00Z'), chicago)).toBe('19:00');
  });

  it('when it is just after midnight in Perth (still the previous day in UTC), then the site day is the new day', () => {
    expect(siteDay(new Date('2026-06-30T15:59:00Z'), perth)).toBe('2026-06-30');
    expect(siteDay(new Date('2026-06-30T16:00:00Z'), perth)).toBe('2026-07-01');
    expect(iso(startOfSiteDay('2026-07-01', perth))).toBe('2026-06-30T16:00:00.000Z');
    expect(formatInZone('2026-06-30T16:30:00Z', perth)).toBe('1 Jul 2026, 00:30 AWST');
  });

  it('when a Kolkata site (UTC+05:30) reaches midnight, then the day turns at 18:30 UTC', () => {
    expect(siteDay(new Date('2026-01-01T18:29:00Z'), kolkata)).toBe('2026-01-01');
    expect(siteDay(new Date('2026-01-01T18:30:00Z'), kolkata)).toBe('2026-01-02');
    expect(iso(startOfSiteDay('2026-01-02', kolkata))).toBe('2026-01-01T18:30:00.000Z');
    expect(iso(endOfSiteDay('2026-01-02', kolkata))).toBe('2026-01-02T18:30:00.000Z');
    expect(wallTimeToIso('2026-01-02T07:00', kolkata)).toBe('2026-01-02T07:00:00+05:30');
    expect(zoneAbbreviation(new Date('2026-01-02T00:00:00Z'), kolkata)).toBe('IST');
    expect(nextWholeHourWall(new Date('2026-01-02T00:50:00Z'), kolkata, 1)).toBe('2026-01-02T07:00');
  });
});

describe('finding 3: the rest of the module', () => {
  it('when offsets are asked for, then Chicago is -360 in winter and -300 in summer', () => {
    expect(zoneOffsetMinutes(Date.UTC(2026, 11, 2, 12), chicago)).toBe(-360);
    expect(zoneOffsetMinutes(Date.UTC(2026, 6, 2, 12), chicago)).toBe(-300);
  });

  it('when a date that no calendar has is entered, then there is no instant', () => {
    expect(wallTimeToInstant(wall(2026, 2, 31, 7), chicago)).toBeNull();
    expect(wallTimeToInstant(wall(2026, 12, 2, 24), chicago)).toBeNull();
    expect(wallTimeToIso('2026-02-31T07:00', chicago)).toBe('');
  });

  it('when a time is written in the short styles, then the day or the zone is left out as asked', () => {
    expect(formatInZone('2026-12-02T13:15:00Z', chicago, 'dayTime')).toBe('2 Dec, 07:15 CST');
    expect(formatInZone('2026-12-02T13:15:00Z', chicago, 'time')).toBe('07:15');
    expect(formatInZone('not a time', chicago)).toBe('—');
    expect(isoToWallTime('2026-12-02T13:15:00Z', chicago)).toBe('2026-12-02T07:15');
  });

  it('when calendar days are counted, then month and year ends are crossed like a calendar', () => {
    expect(addDays('2026-12-31', 1)).toBe('2027-01-01');
    expect(addDays('2028-03-01', -1)).toBe('2028-02-29');
    expect(daysBetween('2026-03-07', '2026-03-09')).toBe(2);
  });
});
