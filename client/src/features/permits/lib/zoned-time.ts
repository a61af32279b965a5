/**
 * Wall-clock times in the tenant's time zone. A permit is written for a place, so "07:00" means
 * 07:00 where the line is, whatever zone the browser runs in.
 */

const partsFormatters = new Map<string, Intl.DateTimeFormat>();

function partsFormatter(timeZone: string) {
  let f = partsFormatters.get(timeZone);
  if (!f) {
    f = new Intl.DateTimeFormat('en-US', {
      timeZone,
      hourCycle: 'h23',
      year: 'numeric',
      month: '2-digit',
      day: '2-digit',
      hour: '2-digit',
      minute: '2-digit',
      second: '2-digit',
    });
    partsFormatters.set(timeZone, f);
  }
  return f;
}

function wallParts(ms: number, timeZone: string) {
  const out: Record<string, number> = {};
  for (const p of partsFormatter(timeZone).formatToParts(new Date(ms))) if (p.type !== 'literal') out[p.type] = Number(p.value);
  return out as { year: number; month: number; day: number; hour: number; minute: number; second: number };
}

function wallMs(ms: number, timeZone: string) {
  const p = wallParts(ms, timeZone);
  return Date.UTC(p.year, p.month - 1, p.day, p.hour, p.minute, p.second);
}

/** Minutes the zone is ahead of UTC at that instant (Chicago in winter: -360). */
export function zoneOffsetMinutes(ms: number, timeZone: string): number {
  return Math.round((wallMs(ms, timeZone) - Math.floor(ms / 1000) * 1000) / 60_000);
}

const pad = (n: number, w = 2) => String(Math.abs(n)).padStart(w, '0');

function offsetText(minutes: number) {
  if (minutes === 0) return 'Z';
  return `${minutes < 0 ? '-' : '+'}${pad(Math.floor(Math.abs(minutes) / 60))}:${pad(Math.abs(minutes) % 60)}`;
}

const wallPattern = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})(?::(\d{2}))?$/;

/**
 * "2026-12-02T07:00" read as wall time in `timeZone` → "2026-12-02T07:00:00-06:00".
 * Empty or malformed input gives '' so the schema reports the field. A time that the clocks skip
 * when summer time starts is moved forward by the gap, as clocks themselves do.
 */
export function wallTimeToIso(wall: string, timeZone: string): string {
  const m = wallPattern.exec(wall.trim());
  if (!m) return '';
  const [year, month, day, hour, minute, second] = [m[1], m[2], m[3], m[4], m[5], m[6] ?? '0'].map(Number);
  const asUtc = Date.UTC(year, month - 1, day, hour, minute, second);
  if (Number.isNaN(asUtc)) return '';
  // Two guesses from the zone's offset around that time; the one whose wall time matches wins (the
  // earlier when the clocks go back and the time happens twice). In the hour skipped when they go
  // forward neither matches, and the later guess is the time moved forward by the gap.
  const guessA = asUtc - zoneOffsetMinutes(asUtc, timeZone) * 60_000;
  const guessB = asUtc - zoneOffsetMinutes(guessA, timeZone) * 60_000;
  const matching = [guessA, guessB].filter((c) => wallMs(c, timeZone) === asUtc);
  const instant = matching.length ? Math.min(...matching) : Math.max(guessA, guessB);
  const p = wallParts(instant, timeZone);
  return `${pad(p.year, 4)}-${pad(p.month)}-${pad(p.day)}T${pad(p.hour)}:${pad(p.minute)}:${pad(p.second)}${offsetText(zoneOffsetMinutes(instant, timeZone))}`;
}

/** An instant → the "yyyy-MM-ddTHH:mm" a datetime-local input shows, in `timeZone`. */
export function isoToWallTime(iso: string | null | undefined, timeZone: string): string {
  if (!iso) return '';
  const ms = new Date(iso).getTime();
  if (Number.isNaN(ms)) return '';
  const p = wallParts(ms, timeZone);
  return `${pad(p.year, 4)}-${pad(p.month)}-${pad(p.day)}T${pad(p.hour)}:${pad(p.minute)}`;
}

const displayFormatters = new Map<string, Intl.DateTimeFormat>();

/** "2 Dec 2026, 07:00 GMT-6": the date and time where the line is, with the zone written out. */
export function formatInZone(iso: string | Date | null | undefined, timeZone: string): string {
  if (!iso) return '—';
  const d = iso instanceof Date ? iso : new Date(iso);
  if (Number.isNaN(d.getTime())) return '—';
  let f = displayFormatters.get(timeZone);
  if (!f) {
    f = new Intl.DateTimeFormat('en-GB', { timeZone, day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit', hourCycle: 'h23', timeZoneName: 'short' });
    displayFormatters.set(timeZone, f);
  }
  return f.format(d);
}

/** The whole hour after `now`, as wall time in the zone: a sensible first guess for a start. */
export function nextWholeHourWall(now: Date, timeZone: string, plusHours = 1): string {
  const hour = 3_600_000;
  const start = Math.floor(now.getTime() / hour) * hour + plusHours * hour;
  return isoToWallTime(new Date(start).toISOString(), timeZone);
}
