import { formatDistance } from 'date-fns';
import { wallTimeToInstant } from '@shared/gas-tests/zoned-day';
import { useMe } from '@client/features/auth/api/get-me';

/** The tenant's time zone: times on these screens are site times, whatever zone the browser is in. */
export function useSiteTimeZone(): string {
  const { data: me } = useMe();
  return me?.activeTenant?.timeZone ?? 'UTC';
}

const formatters = new Map<string, Intl.DateTimeFormat>();
function formatter(timeZone: string, withDate: boolean) {
  const key = `${timeZone}|${withDate}`;
  let f = formatters.get(key);
  if (!f) {
    f = new Intl.DateTimeFormat('en-GB', {
      timeZone,
      hourCycle: 'h23',
      hour: '2-digit',
      minute: '2-digit',
      ...(withDate ? { day: 'numeric', month: 'short', timeZoneName: 'short' } : {}),
    });
    formatters.set(key, f);
  }
  return f;
}

/** "2 Dec, 07:15 CST" (or "07:15" for a short form) at the site. */
export function siteTime(value: string | Date | null | undefined, timeZone: string, short = false): string {
  if (!value) return '—';
  const d = value instanceof Date ? value : new Date(value);
  return Number.isNaN(d.getTime()) ? '—' : formatter(timeZone, !short).format(d);
}

const wallFormatter = new Map<string, Intl.DateTimeFormat>();
/** An instant → "yyyy-MM-ddTHH:mm" for a datetime-local input showing site time. */
export function toWall(d: Date, timeZone: string): string {
  let f = wallFormatter.get(timeZone);
  if (!f) {
    f = new Intl.DateTimeFormat('en-CA', { timeZone, hourCycle: 'h23', year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit' });
    wallFormatter.set(timeZone, f);
  }
  const p = Object.fromEntries(f.formatToParts(d).map((x) => [x.type, x.value]));
  return `${p.year}-${p.month}-${p.day}T${p.hour}:${p.minute}`;
}

/** "yyyy-MM-ddTHH:mm" typed as site time → ISO instant, or '' when it is not a time. */
export function fromWall(wall: string, timeZone: string): string {
  const m = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})$/.exec(wall.trim());
  if (!m) return '';
  const [year, month, day, hour, minute] = m.slice(1).map(Number);
  return wallTimeToInstant({ year, month, day, hour, minute, second: 0 }, timeZone)?.toISOString() ?? '';
}

/** "due in 12 minutes" / "overdue by 5 minutes". */
export function dueText(dueAt: string, now: Date): { overdue: boolean; text: string } {
  const d = new Date(dueAt);
  const overdue = d.getTime() < now.getTime();
  const span = formatDistance(d, now);
  return { overdue, text: overdue ? `overdue by ${span}` : `due in ${span}` };
}
