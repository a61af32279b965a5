/**
 * Calendar days and wall-clock times where the line is (the tenant's time zone), with Intl only:
 * "bump-tested today" means today at the site, and a monitor's log without a zone is in site time.
 */

const formatters = new Map<string, Intl.DateTimeFormat>();

function formatter(timeZone: string) {
  let f = formatters.get(timeZone);
  if (!f) {
    f = new Intl.DateTimeFormat('en-US', { timeZone, hourCycle: 'h23', year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', second: '2-digit' });
    formatters.set(timeZone, f);
  }
  return f;
}

function wallParts(ms: number, timeZone: string) {
  const out: Record<string, number> = {};
  for (const p of formatter(timeZone).formatToParts(new Date(ms))) if (p.type !== 'literal') out[p.type] = Number(p.value);
  return out as { year: number; month: number; day: number; hour: number; minute: number; second: number };
}

const pad = (n: number, w = 2) => String(n).padStart(w, '0');

/** The calendar day of an instant in the zone, as "YYYY-MM-DD". */
export function localDate(instant: Date, timeZone: string): string {
  const p = wallParts(instant.getTime(), timeZone);
  return `${pad(p.year, 4)}-${pad(p.month)}-${pad(p.day)}`;
}

/** The local time of day "HH:mm" of an instant in the zone. */
export function localTime(instant: Date, timeZone: string): string {
  const p = wallParts(instant.getTime(), timeZone);
  return `${pad(p.hour)}:${pad(p.minute)}`;
}

function offsetMinutes(ms: number, timeZone: string): number {
  const p = wallParts(ms, timeZone);
  return Math.round((Date.UTC(p.year, p.month - 1, p.day, p.hour, p.minute, p.second) - Math.floor(ms / 1000) * 1000) / 60_000);
}

/**
 * A wall-clock time in the zone → the instant. Null for a date that does not exist (31 February).
 * A time the clocks skip in spring moves forward by the gap, as the clocks do.
 */
export function wallTimeToInstant(parts: { year: number; month: number; day: number; hour: number; minute: number; second: number }, timeZone: string): Date | null {
  const { year, month, day, hour, minute, second } = parts;
  if (month < 1 || month > 12 || day < 1 || day > 31 || hour > 23 || minute > 59 || second > 59) return null;
  const asUtc = Date.UTC(year, month - 1, day, hour, minute, second);
  const check = new Date(asUtc);
  if (check.getUTCDate() !== day || check.getUTCMonth() !== month - 1) return null;
  let offset = offsetMinutes(asUtc, timeZone);
  const again = offsetMinutes(asUtc - offset * 60_000, timeZone);
  if (again !== offset) offset = again;
  return new Date(asUtc - offset * 60_000);
}
