import type { LiveEvent, LiveReady, LiveRefresh } from '@shared/types/live';

export type LiveStatus = 'idle' | 'connecting' | 'live' | 'reconnecting' | 'offline';

export interface LiveHandlers {
  /** The stream is (again) in place: anything may have changed meanwhile. */
  onReady: (permitIds: string[]) => void;
  onEvent: (event: LiveEvent) => void;
  /** A watched permit changed without an audit event, or the server lost its own feed for a moment. */
  onRefresh: (permitIds: string[] | 'all') => void;
  onStatus: (status: LiveStatus) => void;
}

/** After the browser gives up (an error answer, not a dropped line), the next tries wait this long. */
const REOPEN_MS = [2_000, 5_000, 15_000, 30_000];

/**
 * One EventSource on GET /api/stream for the tab. The browser reconnects a dropped stream by itself
 * with Last-Event-ID; when the stream is opened anew (other permits watched, back online, the browser
 * gave up) it asks for `after=` the last sequence seen, so nothing is missed either way.
 */
export class LiveConnection {
  private source: EventSource | null = null;
  private ids: string[] = [];
  private lastSeq: number | null = null;
  private reopen: ReturnType<typeof setTimeout> | undefined;
  private failures = 0;
  private offline = false;

  constructor(private readonly handlers: LiveHandlers) {}

  /** Follows these permits (sorted, distinct); reopens only when the set changed. */
  watch(ids: string[]) {
    if (ids.join(',') === this.ids.join(',')) return;
    this.ids = ids;
    this.restart();
  }

  /** The device lost or regained its connection: close now, reopen at once when it is back. */
  setOffline(offline: boolean) {
    if (offline === this.offline) return;
    this.offline = offline;
    this.failures = 0;
    this.restart();
  }

  /** Another person or tenant: what was seen before means nothing now. */
  forget() {
    this.lastSeq = null;
  }

  close() {
    clearTimeout(this.reopen);
    this.source?.close();
    this.source = null;
  }

  private restart() {
    this.close();
    if (!this.ids.length) return this.handlers.onStatus('idle');
    if (this.offline) return this.handlers.onStatus('offline');
    if (typeof EventSource === 'undefined') return;
    this.open();
  }

  private open() {
    const params = new URLSearchParams();
    for (const id of this.ids) params.append('permitId', id);
    if (this.lastSeq !== null) params.set('after', String(this.lastSeq));
    const es = new EventSource(`/api/stream?${params}`);
    this.source = es;
    this.handlers.onStatus(this.failures ? 'reconnecting' : 'connecting');
    const seqOf = (e: MessageEvent) => (/^\d+$/.test(e.lastEventId) ? Number(e.lastEventId) : null);
    es.addEventListener('ready', (e) => {
      if (this.source !== es) return;
      this.failures = 0;
      const ready = JSON.parse((e as MessageEvent).data as string) as LiveReady;
      this.lastSeq = ready.seq;
      this.handlers.onStatus('live');
      this.handlers.onReady(ready.permitIds);
    });
    es.addEventListener('change', (e) => {
      if (this.source !== es) return;
      const event = JSON.parse((e as MessageEvent).data as string) as LiveEvent;
      this.lastSeq = seqOf(e as MessageEvent) ?? event.seq;
      this.handlers.onEvent(event);
    });
    es.addEventListener('refresh', (e) => {
      if (this.source !== es) return;
      this.handlers.onRefresh([(JSON.parse((e as MessageEvent).data as string) as LiveRefresh).permitId]);
    });
    es.addEventListener('resync', () => {
      if (this.source === es) this.handlers.onRefresh('all');
    });
    es.onerror = () => {
      if (this.source !== es) return;
      this.handlers.onStatus('reconnecting');
      // CONNECTING: the browser retries by itself with Last-Event-ID. CLOSED: it gave up (an error answer).
      if (es.readyState === EventSource.CLOSED) {
        es.close();
        this.source = null;
        const wait = REOPEN_MS[Math.min(this.failures, REOPEN_MS.length - 1)];
        this.failures++;
        this.reopen = setTimeout(() => this.restart(), wait);
      }
    };
  }
}
