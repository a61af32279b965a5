import type { StreamStatus } from '../hooks/use-board-stream';

const look: Record<StreamStatus, { text: string; dot: string }> = {
  connecting: { text: 'Connecting…', dot: 'bg-line' },
  live: { text: 'Live', dot: 'bg-safe' },
  reconnecting: { text: 'Reconnecting…', dot: 'bg-caution animate-pulse' },
  unavailable: { text: 'Not live: reload to refresh', dot: 'bg-danger' },
};

/** Says whether the board follows changes as they happen; the words carry it, the dot repeats it. */
export function LiveIndicator({ status }: { status: StreamStatus }) {
  const l = look[status];
  return (
    <span role="status" aria-live="polite" data-testid="live-status" data-status={status} className="inline-flex min-h-11 items-center gap-2 rounded-full border border-line bg-surface px-3 text-sm font-semibold">
      <span className={`inline-block size-3 rounded-full ${l.dot}`} aria-hidden />
      {l.text}
    </span>
  );
}
