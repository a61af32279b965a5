import { formatInZone, siteDay, zoneAbbreviation } from '@shared/time/zone';

/** "14:02 CST" today at the site, else "2 Dec, 14:02 CST". */
export function shortSiteTime(at: number, timeZone: string, now = Date.now()): string {
  if (siteDay(at, timeZone) !== siteDay(now, timeZone)) return formatInZone(at, timeZone, 'dayTime');
  return `${formatInZone(at, timeZone, 'time')} ${zoneAbbreviation(at, timeZone)}`;
}
