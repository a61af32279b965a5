import type { Request, Response } from 'express';
import type { LivePermitRef, LiveReady, LiveRefresh } from '@shared/types/live';
import type { AppDeps } from '../../deps';
import { changeFeed, type Change } from '../../lib/change-feed';
import { drainState } from '../../lib/draining';
import { eventsAfter, lastSeq } from './live.service';

/** The browser waits this long before it reconnects by itself. */
const RETRY_MS = 2_000;
/** A comment line this often keeps proxies and mobile networks from closing a quiet stream. */
const HEARTBEAT_MS = 25_000;
const PAGE = 200;

interface Watch {
  tenantId: string;
  userId: string;
  permits: LivePermitRef[];
  /** Last-Event-ID (or `after`): the sequence the browser saw last. */
  after?: number;
}

const frame = (event: string, data: unknown, id?: number) => `${id === undefined ? '' : `id: ${id}\n`}event: ${event}\ndata: ${JSON.stringify(data)}\n\n`;

/** The permit a change feed notification names, whichever field its writer used. */
const permitOf = (c: Change) => (typeof c.permitId === 'string' ? c.permitId : typeof c.id === 'string' && c.kind !== 'certificate' ? c.id : null);

/**
 * Sends the watched permits' audit events as they commit, each with its sequence number as `id:`.
 * Every send reads the audit trail after the last number sent, so a reconnecting browser (Last-Event-ID)
 * gets exactly what it missed, once and in order, and the live path and the replay are one path. A
 * notification only wakes the reader; reads never overlap, a wake during a read reads once more.
 */
export async function streamLiveEvents(deps: AppDeps, req: Request, res: Response, watch: Watch) {
  const watched = new Set(watch.permits.map((p) => p.id));
  const feed = changeFeed(deps);
  let cursor = -1;
  let reading = false;
  let again = false;
  let resync = false;
  let closed = false;
  const touched = new Set<string>();
  const write = (chunk: string) => {
    if (!closed && !res.writableEnded && !res.destroyed) res.write(chunk);
  };

  const read = async () => {
    if (cursor < 0 || closed) return;
    if (reading) {
      again = true;
      return;
    }
    reading = true;
    try {
      do {
        again = false;
        for (;;) {
          const events = await eventsAfter(deps, watch.tenantId, watch.permits, cursor, PAGE);
          for (const e of events) {
            write(frame('change', e, e.seq));
            cursor = e.seq;
            for (const p of e.permits) touched.delete(p.id);
          }
          if (events.length < PAGE || closed) break;
        }
        // A change without an audit event of its own still tells the screen to refetch.
        for (const permitId of touched) write(frame('refresh', { permitId } satisfies LiveRefresh));
        touched.clear();
        if (resync) {
          resync = false;
          write(frame('resync', {}));
        }
      } while (again && !closed);
    } catch (err) {
      deps.logger.warn({ err: (err as Error).message }, 'live stream could not read the audit trail; the browser reconnects');
      // Ending the response makes the browser reconnect with the last id it has: nothing is lost.
      res.end();
    } finally {
      reading = false;
    }
  };

  const unsubscribe = feed.subscribe((change) => {
    if (closed) return;
    // The person's access changed (role, removal, sign-out): the reconnect is checked afresh.
    if (change.kind === 'access' && change.userId === watch.userId) {
      res.end();
      return;
    }
    if (change.tenantId === '*') {
      // The feed lost its link: events are in the audit trail, the rest is refetched.
      resync = true;
      void read();
      return;
    }
    if (change.tenantId !== watch.tenantId) return;
    const permitId = permitOf(change);
    if (permitId && !watched.has(permitId)) return;
    if (permitId) touched.add(permitId);
    void read();
  });
  const heartbeat = setInterval(() => write(`: keep-alive\n\n`), HEARTBEAT_MS);
  // The stream does not outlive the session: when it would have timed out, the browser's reconnect
  // meets the ordinary session checks (and is refused once the person has been idle too long).
  const now = deps.clock.now().getTime();
  const { lastSeenAt = now, createdAt = now } = req.session;
  const endsAt = Math.min(lastSeenAt + deps.config.SESSION_IDLE_MINUTES * 60_000, createdAt + deps.config.SESSION_ABSOLUTE_HOURS * 3_600_000);
  const lifetime = setTimeout(() => res.end(), Math.min(Math.max(endsAt - now, 1_000), 2 ** 31 - 1));
  // A process shutting down ends its streams with a short retry hint: the browser reconnects (through the
  // balancer, to another process) with the last id it has, and nothing is lost.
  const undrain = drainState(deps.config).onDrain(() => {
    if (!res.writableEnded) res.end(`retry: 1000\n\n`);
  });
  // The response's close, not the request's: a request without a body can report "close" as soon as it is read.
  res.on('close', () => {
    closed = true;
    clearInterval(heartbeat);
    clearTimeout(lifetime);
    undrain();
    unsubscribe();
  });
  res.writeHead(200, { 'Content-Type': 'text/event-stream', 'Cache-Control': 'no-store', Connection: 'keep-alive', 'X-Accel-Buffering': 'no' });
  res.flushHeaders();
  // Start only once LISTEN is in place: anything committed after the head read below is then heard.
  await feed.whenListening();
  const head = await lastSeq(deps, watch.tenantId);
  // A number beyond the head is not this tenant's (another tenant's stream, a restored database): start at the head.
  cursor = watch.after === undefined ? head : Math.min(watch.after, head);
  write(`retry: ${RETRY_MS}\n\n`);
  write(frame('ready', { permitIds: watch.permits.map((p) => p.id), seq: cursor } satisfies LiveReady, cursor));
  await read();
}
