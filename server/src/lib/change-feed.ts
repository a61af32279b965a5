import pg from 'pg';
import type { AppDeps } from '../deps';

export interface Change {
  tenantId: string;
  kind: string;
  [key: string]: unknown;
}

type Listener = (change: Change) => void;

/**
 * One LISTEN connection per server process on channel holdpoint_changes. Writers call pg_notify in
 * their transaction, so every process behind a load balancer hears a change once it commits.
 * Reconnects by itself after the database restarts.
 */
class ChangeFeed {
  private client: pg.Client | null = null;
  private listeners = new Set<Listener>();
  private stopped = false;
  private retry: NodeJS.Timeout | null = null;

  constructor(private readonly deps: AppDeps) {}

  subscribe(fn: Listener) {
    this.listeners.add(fn);
    if (!this.client && !this.retry) void this.connect();
    return () => this.listeners.delete(fn);
  }

  private async connect() {
    this.retry = null;
    if (this.stopped) return;
    const client = new pg.Client({ connectionString: this.deps.config.DATABASE_URL, connectionTimeoutMillis: 3_000 });
    const fail = (err?: Error) => {
      if (this.client !== client) return;
      this.client = null;
      client.end().catch(() => undefined);
      if (err) this.deps.logger.warn({ err: err.message }, 'change feed lost its connection; reconnecting');
      // Tell listeners to refetch: they may have missed changes while the link was down.
      this.emit({ tenantId: '*', kind: 'resync' });
      if (!this.stopped) this.retry = setTimeout(() => void this.connect(), 1_000);
    };
    client.on('error', fail);
    client.on('end', () => fail());
    client.on('notification', (msg) => {
      try {
        this.emit(JSON.parse(msg.payload ?? '{}') as Change);
      } catch {
        /* not ours */
      }
    });
    this.client = client;
    try {
      await client.connect();
      await client.query('LISTEN holdpoint_changes');
    } catch (err) {
      fail(err as Error);
    }
  }

  private emit(change: Change) {
    for (const fn of this.listeners) fn(change);
  }

  async close() {
    this.stopped = true;
    if (this.retry) clearTimeout(this.retry);
    const c = this.client;
    this.client = null;
    await c?.end().catch(() => undefined);
  }
}

const feeds = new WeakMap<AppDeps, ChangeFeed>();

export function changeFeed(deps: AppDeps): ChangeFeed {
  let feed = feeds.get(deps);
  if (!feed) {
    feed = new ChangeFeed(deps);
    feeds.set(deps, feed);
  }
  return feed;
}

export async function closeChangeFeed(deps: AppDeps) {
  await feeds.get(deps)?.close();
  feeds.delete(deps);
}
