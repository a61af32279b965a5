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
  private listening = false;
  private lostLink = false;
  private waiters: (() => void)[] = [];

  constructor(private readonly deps: AppDeps) {}

  subscribe(fn: Listener) {
    this.listeners.add(fn);
    if (!this.client && !this.retry) void this.connect();
    return () => this.listeners.delete(fn);
  }

  /**
   * Resolves once LISTEN is in place (or after `timeoutMs`), so a stream can say "ready" only when
   * a change committed from then on is sure to reach it.
   */
  whenListening(timeoutMs = 3_000): Promise<void> {
    if (this.listening || this.stopped) return Promise.resolve();
    return new Promise((resolve) => {
      const timer = setTimeout(done, timeoutMs);
      function done() {
        clearTimeout(timer);
        resolve();
      }
      this.waiters.push(done);
    });
  }

  private async connect() {
    this.retry = null;
    if (this.stopped) return;
    // LISTEN needs a session of its own: past a transaction pooler, straight to the primary (DATABASE_DIRECT_URL).
    const client = new pg.Client({ connectionString: this.deps.config.DATABASE_DIRECT_URL ?? this.deps.config.DATABASE_URL, connectionTimeoutMillis: 3_000 });
    const fail = (err?: Error) => {
      if (this.client !== client) return;
      this.client = null;
      this.listening = false;
      this.lostLink = true;
      client.end().catch(() => undefined);
      if (err) this.deps.logger.warn({ err: err.message }, 'change feed lost its connection; reconnecting');
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
      return;
    }
    if (this.client !== client) return;
    this.listening = true;
    for (const done of this.waiters.splice(0)) done();
    // Changes committed while the link was down were never heard: tell listeners to refetch, now
    // that anything later will reach them.
    if (this.lostLink) {
      this.lostLink = false;
      this.emit({ tenantId: '*', kind: 'resync' });
    }
  }

  private emit(change: Change) {
    for (const fn of this.listeners) fn(change);
  }

  async close() {
    this.stopped = true;
    for (const done of this.waiters.splice(0)) done();
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
