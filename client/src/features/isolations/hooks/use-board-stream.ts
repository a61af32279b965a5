import { useEffect, useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { boardKey } from '../api/get-board';

export type StreamStatus = 'connecting' | 'live' | 'reconnecting' | 'unavailable';

const DEBOUNCE_MS = 200;
/** A steady stream of changes still refreshes at least this often. */
const MAX_WAIT_MS = 1_000;
/** When the browser gives up (the server answered with an error, not a stream), try again after this. */
const REOPEN_MS = 5_000;

/**
 * Keeps the board's query fresh from GET /api/board/stream: each "change" refetches (debounced), and
 * so does each "ready" (after a drop, or the first time). The browser reconnects by itself (the
 * server asks for 2 s between tries); when it gives up, the hook opens a new stream after 5 s.
 */
export function useBoardStream(): StreamStatus {
  const qc = useQueryClient();
  const [status, setStatus] = useState<StreamStatus>(() => (typeof EventSource === 'undefined' ? 'unavailable' : 'connecting'));

  useEffect(() => {
    if (typeof EventSource === 'undefined') return;
    let source: EventSource | null = null;
    let debounce: ReturnType<typeof setTimeout> | undefined;
    let reopen: ReturnType<typeof setTimeout> | undefined;
    let firstPending = 0;

    const refresh = () => {
      const now = Date.now();
      if (!firstPending) firstPending = now;
      clearTimeout(debounce);
      debounce = setTimeout(
        () => {
          firstPending = 0;
          void qc.invalidateQueries({ queryKey: boardKey });
        },
        now - firstPending >= MAX_WAIT_MS ? 0 : DEBOUNCE_MS,
      );
    };

    const open = () => {
      const es = new EventSource('/api/board/stream');
      source = es;
      es.addEventListener('ready', () => {
        setStatus('live');
        // After a drop, changes made meanwhile were never heard. The first "ready" refetches too: the
        // board may have been read just before the server started listening.
        refresh();
      });
      es.addEventListener('change', refresh);
      es.onerror = () => {
        setStatus('reconnecting');
        if (es.readyState === EventSource.CLOSED) {
          es.close();
          reopen = setTimeout(open, REOPEN_MS);
        }
      };
    };
    open();

    return () => {
      clearTimeout(debounce);
      clearTimeout(reopen);
      source?.close();
    };
  }, [qc]);

  return status;
}
