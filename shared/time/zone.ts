/**
 * Times and calendar days where the line is: the tenant's IANA time zone, whatever zone the server
 * or the browser runs in. The one place that does zone arithmetic; everything else calls it.
 *
 * Rules for wall times the clocks do not show exactly once (the same as RFC 5545 section 3.3.5 and
 * the "compatible" choice of the TC39 Temporal proposal):
 * - a time skipped when the clocks go forward is moved forward by the length of the gap
 *   (02:30 on the night Chicago goes 02:00 → 03:00 is 03:30 CDT);
 * - a time shown twice when the clocks go back is the earlier of the two (01:30 CDT, not 01:30 CST).
 */
import { format } from 'date-fns';
import { tz, tzOffset } from '@date-fns/tz';

export interface WallTime {
  year: number;
  month: number;
  day: number;
  hour: number;
  minute: number;
  second: number;
}

const MINUTE = 60_000;
const DAY = 86_400_000;

const ms = (instant: Date | number | string) => (typeof instant === 'number' ? instant : new Date(instant).getTime());
const pad = (n: number, w = 2) => String(Math.abs(n)).padStart(w, '0');

/** True when the runtime knows the zone by that IANA name. */
export function isTimeZone(timeZone: string): boolean {
  return typeof timeZone === 'string' && timeZone.length > 0 && !Number.isNaN(tzOffset(timeZone, new Date(0)));
}

/** Minutes the zone is ahead of UTC at that instant (Chicago in winter: -360). */
export function zoneOffsetMinutes(instant: Date | number, timeZone: string): number {
  const offset = tzOffset(timeZone, new Date(ms(instant)));
  if (Number.isNaN(offset)) throw new RangeError(`Unknown time zone: ${timeZone}`);
  return offset;
}

/** The wall-clock reading of an instant in the zone. */
export function wallTimeOf(instant: Date | number, timeZone: string): WallTime {
  const t = ms(instant);
  const shifted = new Date(Math.floor(t / 1000) * 1000 + Math.round(zoneOffsetMinutes(t, timeZone) * 60) * 1000);
  return {
    year: shifted.getUTCFullYear(),
    month: shifted.getUTCMonth() + 1,
    day: shifted.getUTCDate(),
    hour: shifted.getUTCHours(),
    minute: shifted.getUTCMinutes(),
    second: shifted.getUTCSeconds(),
  };
}

/** The calendar day at the site of an instant, "YYYY-MM-DD". */
export function siteDay(instant: Date | number, timeZone: string): string {
  const w = wallTimeOf(instant, timeZone);
  return `${pad(w.year, 4)}-${pad(w.month)}-${pad(w.day)}`;
}

/** The time of day at the site of an instant, "HH:mm". */
export function siteTimeOfDay(instant: Date | number, timeZone: string): string {
  const w = wallTimeOf(instant, timeZone);
  return `${pad(w.hour)}:${pad(w.minute)}`;
}

const DAY_PATTERN = /^(\d{4})-(\d{2})-(\d{2})$/;

function parseDay(day: string) {
  const m = DAY_PATTERN.exec(day);
  if (!m) throw new RangeError(`Not a calendar day: ${day}`);
  return { year: Number(m[1]), month: Number(m[2]), day: Number(m[3]) };
}

/** A calendar day moved by whole days ("2026-03-08", 1 → "2026-03-09"); no zone is involved. */
export function addDays(day: string, days: number): string {
  const d = parseDay(day);
  const t = new Date(Date.UTC(d.year, d.month - 1, d.day) + days * DAY);
  return `${pad(t.getUTCFullYear(), 4)}-${pad(t.getUTCMonth() + 1)}-${pad(t.getUTCDate())}`;
}

/** Whole calendar days from `from` to `to` (negative when `to` is earlier). */
export function daysBetween(from: string, to: string): number {
  const a = parseDay(from);
  const b = parseDay(to);
  return Math.round((Date.UTC(b.year, b.month - 1, b.day) - Date.UTC(a.year, a.month - 1, a.day)) / DAY);
}

/**
 * A wall-clock time at the site → the instant, by the rules at the top of this file. Null for a
 * reading no calendar has (31 February, 24:00).
 */
export function wallTimeToInstant(wall: WallTime, timeZone: string): Date | null {
  const { year, month, day, hour, minute, second } = wall;
  if (![year, month, day, hour, minute, second].every(Number.isInteger)) return null;
  if (month < 1 || month > 12 || day < 1 || day > 31 || hour < 0 || hour > 23 || minute < 0 || minute > 59 || second < 0 || second > 59) return null;
  const asUtc = Date.UTC(year, month - 1, day, hour, minute, second);
  const check = new Date(asUtc);
  if (check.getUTCFullYear() !== year || check.getUTCMonth() !== month - 1 || check.getUTCDate() !== day) return null;
  // Offsets a day either side: no zone changes its clocks twice within two days, so these are every
  // offset this wall time can have been read with.
  const before = zoneOffsetMinutes(asUtc - DAY, timeZone);
  const after = zoneOffsetMinutes(asUtc + DAY, timeZone);
  const matches = [...new Set([before, after])]
    .map((offset) => asUtc - offset * MINUTE)
    .filter((t) => {
      const w = wallTimeOf(t, timeZone);
      return Date.UTC(w.year, w.month - 1, w.day, w.hour, w.minute, w.second) === asUtc;
    });
  // Shown twice: the earlier. Skipped: read with the offset before the gap, which is the time moved forward by the gap.
  return new Date(matches.length ? Math.min(...matches) : asUtc - before * MINUTE);
}

/** The first instant of a site day: its midnight, or the end of the gap where midnight is skipped. */
export function startOfSiteDay(day: string, timeZone: string): Date {
  const d = parseDay(day);
  return wallTimeToInstant({ ...d, hour: 0, minute: 0, second: 0 }, timeZone)!;
}

/** The end of a site day, exclusive: the first instant of the next day (23, 24 or 25 hours after the start). */
export function endOfSiteDay(day: string, timeZone: string): Date {
  return startOfSiteDay(addDays(day, 1), timeZone);
}

// CLDR gives letter abbreviations per locale ("CST" only in en-US, "BST" only in en-GB, "AWST" in
// en-AU, "IST" for India in en-IN); where no English locale has one, the offset is written ("GMT+8").
const ABBREVIATION_LOCALES = ['en-US', 'en-GB', 'en-AU', 'en-IN'];
const abbreviations = new Map<string, string>();

/** The zone's short name at that instant: "CST", "CDT", "BST", "GMT", "IST", else "GMT+8". */
export function zoneAbbreviation(instant: Date | number, timeZone: string): string {
  const t = ms(instant);
  const key = `${timeZone}|${zoneOffsetMinutes(t, timeZone)}`;
  let name = abbreviations.get(key);
  if (name === undefined) {
    const names = ABBREVIATION_LOCALES.map(
      (locale) => new Intl.DateTimeFormat(locale, { timeZone, timeZoneName: 'short', hour: 'numeric' }).formatToParts(new Date(t)).find((p) => p.type === 'timeZoneName')?.value ?? '',
    );
    name = names.find((n) => /^[A-Z]{2,5}$/.test(n)) ?? names[0];
    abbreviations.set(key, name);
  }
  return name;
}

export type SiteTimeStyle = 'dateTime' | 'dayTime' | 'time';
const patterns: Record<SiteTimeStyle, string> = { dateTime: 'd MMM yyyy, HH:mm', dayTime: 'd MMM, HH:mm', time: 'HH:mm' };

/**
 * A time as the site reads it, with the zone named: "2 Dec 2026, 07:00 CST" ('dateTime'),
 * "2 Dec, 07:00 CST" ('dayTime') or "07:00" ('time'). Empty or unreadable values give "—".
 */
export function formatInZone(value: string | Date | number | null | undefined, timeZone: string, style: SiteTimeStyle = 'dateTime'): string {
  if (value === null || value === undefined || value === '') return '—';
  const t = ms(value);
  if (Number.isNaN(t)) return '—';
  const text = format(t, patterns[style], { in: tz(timeZone) });
  return style === 'time' ? text : `${text} ${zoneAbbreviation(t, timeZone)}`;
}

function offsetText(minutes: number) {
  if (minutes === 0) return 'Z';
  const abs = Math.abs(Math.round(minutes));
  return `${minutes < 0 ? '-' : '+'}${pad(Math.floor(abs / 60))}:${pad(abs % 60)}`;
}

const WALL_PATTERN = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})(?::(\d{2}))?$/;

/**
 * "2026-12-02T07:00" (a datetime-local field) read as wall time at the site →
 * "2026-12-02T07:00:00-06:00". Empty or malformed input gives '' so the schema names the field.
 */
export function wallTimeToIso(wall: string, timeZone: string): string {
  const m = WALL_PATTERN.exec(wall.trim());
  if (!m) return '';
  const [year, month, day, hour, minute, second] = [m[1], m[2], m[3], m[4], m[5], m[6] ?? '0'].map(Number);
  const instant = wallTimeToInstant({ year, month, day, hour, minute, second }, timeZone);
  if (!instant) return '';
  const w = wallTimeOf(instant, timeZone);
  return `${pad(w.year, 4)}-${pad(w.month)}-${pad(w.day)}T${pad(w.hour)}:${pad(w.minute)}:${pad(w.second)}${offsetText(zoneOffsetMinutes(instant, timeZone))}`;
}

/** An instant → the "yyyy-MM-ddTHH:mm" a datetime-local field shows at the site. */
export function isoToWallTime(value: string | Date | null | undefined, timeZone: string): string {
  if (!value) return '';
  const t = ms(value);
  if (Number.isNaN(t)) return '';
  const w = wallTimeOf(t, timeZone);
  return `${pad(w.year, 4)}-${pad(w.month)}-${pad(w.day)}T${pad(w.hour)}:${pad(w.minute)}`;
}

/** The site's whole hour `plusHours` after `now`, as wall time: a first guess for a start. */
export function nextWholeHourWall(now: Date, timeZone: string, plusHours = 1): string {
  const w = wallTimeOf(now, timeZone);
  const hourStart = Math.floor(now.getTime() / 1000) * 1000 - (w.minute * 60 + w.second) * 1000;
  return isoToWallTime(new Date(hourStart + plusHours * 3_600_000), timeZone);
}
