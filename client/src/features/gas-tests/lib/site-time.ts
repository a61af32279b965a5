import { formatDistance } from 'date-fns';
import { useMe } from '@client/features/auth';

/** The tenant's time zone: times on these screens are site times, whatever zone the browser is in. */
export function useSiteTimeZone(): string {
  const { data: me } = useMe();
  return me?.activeTenant?.timeZone ?? 'UTC';
}

/** "due in 12 minutes" / "overdue by 5 minutes". */
export function dueText(dueAt: string, now: Date): { overdue: boolean; text: string } {
  const d = new Date(dueAt);
  const overdue = d.getTime() < now.getTime();
  const span = formatDistance(d, now);
  return { overdue, text: overdue ? `overdue by ${span}` : `due in ${span}` };
}
