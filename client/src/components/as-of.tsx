import { useConnection } from '@client/lib/connection';
import { shortSiteTime } from '@client/lib/site-time-short';

/** Offline, says how old the shown data is: "As of 14:02 CST". Online it shows nothing. */
export function AsOf({ updatedAt, timeZone, className = '' }: { updatedAt: number | null | undefined; timeZone: string; className?: string }) {
  const { online } = useConnection();
  if (online || !updatedAt) return null;
  return (
    <p className={`text-sm font-semibold text-ink ${className}`} data-testid="as-of">
      As of {shortSiteTime(updatedAt, timeZone)}
    </p>
  );
}
