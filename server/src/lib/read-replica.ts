import { createHmac, timingSafeEqual } from 'node:crypto';
import type { Request, RequestHandler } from 'express';
import { QueryTypes, type Sequelize } from 'sequelize';
import type { Logger } from 'pino';
import { AppError } from '../errors/app-error';
import type { AppDeps } from '../deps';
import { changeFeed } from './change-feed';

/** After a state-changing request, that browser reads from the primary for this long (read-your-writes). */
export const READ_OWN_WRITES_MS = 5_000;
/** How often each process measures the standby's lag. */
const MEASURE_MS = 500;
export const FRESH_COOKIE = 'hp.fresh';

export interface ReplicaStatus {
  /** up: reads may go there; behind: further behind than the bound (reads go to the primary); down: not reachable. */
  state: 'up' | 'behind' | 'down';
  /** Bytes of write-ahead log the standby has still to replay. */
  lagBytes: number | null;
  /** How old the newest change it replayed is while it has some left to replay (0 when caught up). */
  lagMs: number | null;
  maxLagMs: number;
  measuredAt: string | null;
}

const sign = (secret: string, until: string) => createHmac('sha256', secret).update(`fresh:${until}`).digest('base64url').slice(0, 22);

function cookieValue(header: string | undefined, name: string): string | undefined {
  for (const part of header?.split(';') ?? []) {
    const at = part.indexOf('=');
    if (at > 0 && part.slice(0, at).trim() === name) return decodeURIComponent(part.slice(at + 1).trim());
  }
  return undefined;
}

/** Whether this browser wrote something in the last READ_OWN_WRITES_MS (the signed cookie set below). */
export function wroteRecently(req: Request, secret: string, now = Date.now()): boolean {
  const value = cookieValue(req.headers.cookie, FRESH_COOKIE);
  const [until, mac] = value?.split('.') ?? [];
  if (!until || !mac || !/^\d{1,15}$/.test(until) || Number(until) < now) return false;
  const expected = Buffer.from(sign(secret, until));
  const given = Buffer.from(mac);
  return expected.length === given.length && timingSafeEqual(expected, given);
}

/**
 * Read-your-writes across processes: a state-changing request gets a short-lived signed cookie with the
 * time until which that browser's reads go to the primary. A cookie rather than a session field: it
 * costs no database write, and any process checks it with the shared SESSION_SECRET. Forging one only
 * sends one's own reads to the primary.
 */
export function readYourWrites(secret: string): RequestHandler {
  return (req, res, next) => {
    if (req.method !== 'GET' && req.method !== 'HEAD' && req.method !== 'OPTIONS') {
      const until = String(Date.now() + READ_OWN_WRITES_MS);
      res.cookie(FRESH_COOKIE, `${until}.${sign(secret, until)}`, { httpOnly: true, sameSite: 'lax', path: '/api', maxAge: READ_OWN_WRITES_MS, secure: req.secure });
    }
    next();
  };
}

const lsnBytes = (lsn: string) => {
  const [hi, lo] = lsn.split('/');
  return BigInt(`0x${hi}`) * 4294967296n + BigInt(`0x${lo}`);
};

/**
 * The hot standby's pool and what this process knows of its lag. Reads that tolerate a little lag (the
 * board, the lists, the audit log) go there through `readDeps`; everything else stays on the primary.
 * Every MEASURE_MS the primary's WAL position and the standby's replay position are compared; a change
 * heard on the change feed also sends that tenant's reads to the primary until the standby has replayed
 * past the primary's position measured after it (so a screen that refetches on a change sees it).
 */
export class ReadReplica {
  private status: ReplicaStatus;
  private timer: NodeJS.Timeout | null = null;
  private measuring = false;
  /** Tenants with a change the standby may not have yet: the change's time, then the primary's position after it. */
  private readonly pending = new Map<string, { heardAt: number; lsn: bigint | null }>();
  private replayed: bigint | null = null;
  private deps: AppDeps | null = null;

  constructor(
    readonly sequelize: Sequelize,
    private readonly primary: Sequelize,
    private readonly logger: Logger,
    private readonly maxLagMs: number,
  ) {
    this.status = { state: 'down', lagBytes: null, lagMs: null, maxLagMs, measuredAt: null };
  }

  /** Starts measuring and listening for changes; the deps a read on the standby runs with are made once (caches key on them). */
  start(deps: AppDeps) {
    this.deps = { ...deps, sequelize: this.sequelize };
    changeFeed(deps).subscribe((change) => {
      if (change.tenantId === '*') this.pending.set('*', { heardAt: Date.now(), lsn: null });
      else this.pending.set(change.tenantId, { heardAt: Date.now(), lsn: null });
    });
    void this.measure();
    this.timer = setInterval(() => void this.measure(), MEASURE_MS);
    this.timer.unref();
  }

  current(): ReplicaStatus {
    return { ...this.status };
  }

  private async measure() {
    if (this.measuring) return;
    this.measuring = true;
    const startedAt = Date.now();
    try {
      const [p] = await this.primary.query<{ lsn: string }>(`SELECT pg_current_wal_lsn()::text AS lsn`, { type: QueryTypes.SELECT });
      const [r] = await this.sequelize.query<{ lsn: string | null; at: Date | null; now: Date }>(
        `SELECT pg_last_wal_replay_lsn()::text AS lsn, pg_last_xact_replay_timestamp() AS at, now() AS now`,
        { type: QueryTypes.SELECT },
      );
      const primaryLsn = lsnBytes(p.lsn);
      if (!r.lsn) throw new Error('the replica is not a standby');
      const replayed = lsnBytes(r.lsn);
      const lagBytes = primaryLsn > replayed ? Number(primaryLsn - replayed) : 0;
      const lagMs = lagBytes === 0 || !r.at ? 0 : Math.max(0, r.now.getTime() - r.at.getTime());
      this.replayed = replayed;
      for (const [tenant, mark] of this.pending) {
        // The primary's position was read after the change was heard, so it is at or past that change's commit.
        if (mark.lsn === null && mark.heardAt <= startedAt) mark.lsn = primaryLsn;
        if (mark.lsn !== null && replayed >= mark.lsn) this.pending.delete(tenant);
      }
      this.status = { state: lagMs > this.maxLagMs ? 'behind' : 'up', lagBytes, lagMs, maxLagMs: this.maxLagMs, measuredAt: new Date().toISOString() };
    } catch (err) {
      if (this.status.state !== 'down') this.logger.warn({ err: (err as Error).message }, 'the read replica is not reachable; reads go to the primary');
      this.replayed = null;
      this.status = { state: 'down', lagBytes: null, lagMs: null, maxLagMs: this.maxLagMs, measuredAt: new Date().toISOString() };
    } finally {
      this.measuring = false;
    }
  }

  /** Whether a read for this tenant may go to the standby now. */
  usable(tenantId: string): boolean {
    if (this.status.state !== 'up' || this.replayed === null) return false;
    return !this.pending.has(tenantId) && !this.pending.has('*');
  }

  markDown(err: Error) {
    if (this.status.state !== 'down') this.logger.warn({ err: err.message }, 'a read on the replica failed; reads go to the primary until it answers again');
    this.status = { ...this.status, state: 'down' };
  }

  standbyDeps(): AppDeps | null {
    return this.deps;
  }

  async close() {
    if (this.timer) clearInterval(this.timer);
    await this.sequelize.close().catch(() => undefined);
  }
}

/**
 * Runs a read that tolerates a little lag: on the standby when there is one, it is caught up with this
 * tenant's last change and within the lag bound, and this browser wrote nothing in the last few seconds;
 * on the primary otherwise. A read that fails on the standby for any reason but a refusal (AppError)
 * runs again on the primary, so stopping the standby fails no request.
 */
export async function onReadPool<T>(deps: AppDeps, req: Request, tenantId: string, read: (d: AppDeps) => Promise<T>): Promise<T> {
  const replica = deps.replica;
  const standby = replica?.standbyDeps();
  if (!replica || !standby || !replica.usable(tenantId) || wroteRecently(req, deps.config.SESSION_SECRET)) return read(deps);
  try {
    return await read(standby);
  } catch (err) {
    if (err instanceof AppError) throw err;
    replica.markDown(err as Error);
    return read(deps);
  }
}
