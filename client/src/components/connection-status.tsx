import { useEffect, useState } from 'react';
import { Link } from 'react-router-dom';
import { useQueryClient } from '@tanstack/react-query';
import { useConnection } from '@client/lib/connection';
import { useOutboxRecords } from '@client/lib/outbox/outbox-store';
import { useSendProgress } from '@client/lib/outbox/outbox-sender';
import { waitingText } from '@client/lib/outbox/outbox-rules';
import { shortSiteTime } from '@client/lib/site-time-short';

const BACK_ONLINE_SHOWN_MS = 8_000;

/** The newest answer kept in the cache: how old what the screens show may be. */
function useNewestData(): number | null {
  const qc = useQueryClient();
  const times = qc
    .getQueryCache()
    .getAll()
    .map((q) => q.state.dataUpdatedAt)
    .filter((t) => t > 0);
  return times.length ? Math.max(...times) : null;
}

/** Under the header: offline since when and as of when, back online, and the outbox waiting to send. */
export function ConnectionStatus({ userId, timeZone }: { userId: string; timeZone: string }) {
  const { online, offlineSince, backOnlineAt } = useConnection();
  const records = useOutboxRecords(userId) ?? [];
  const progress = useSendProgress();
  const newest = useNewestData();
  // "Back online" stays a few seconds after each return, then goes.
  const [shownUntilGone, setGone] = useState<number | null>(null);
  const recentlyBack = online && backOnlineAt !== null && shownUntilGone !== backOnlineAt;
  useEffect(() => {
    if (backOnlineAt === null) return undefined;
    const t = setTimeout(() => setGone(backOnlineAt), BACK_ONLINE_SHOWN_MS);
    return () => clearTimeout(t);
  }, [backOnlineAt]);

  const waiting = records.filter((r) => r.state === 'waiting').length;
  const refused = records.filter((r) => r.state === 'refused').length;
  if (online && !recentlyBack && !waiting && !refused) return null;
  return (
    <div role="status" className={`border-b-4 px-4 py-2 ${online ? 'border-safe bg-safe-soft' : 'border-caution bg-caution-soft'}`} data-testid="connection-status">
      <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-4 gap-y-1 text-ink">
        {online ? (
          recentlyBack ? <span className="font-semibold">Back online</span> : null
        ) : (
          <span className="font-semibold">
            Offline{offlineSince ? ` since ${shortSiteTime(offlineSince, timeZone)}` : ''}
            {newest ? <span className="font-normal"> · showing what this device kept, as of {shortSiteTime(newest, timeZone)}</span> : null}
          </span>
        )}
        {progress.sending && progress.total > 0 ? (
          <span>
            Sending {Math.min(progress.sent + 1, progress.total)} of {progress.total}…
          </span>
        ) : null}
        {waiting || refused ? (
          <Link to="/outbox" className="flex min-h-11 items-center font-semibold text-ink underline" data-testid="outbox-badge">
            {waiting ? waitingText(waiting) : ''}
            {waiting && refused ? ' · ' : ''}
            {refused ? `${refused} not accepted: your decision needed` : ''}
          </Link>
        ) : null}
      </div>
    </div>
  );
}
