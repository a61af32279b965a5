import { createHash } from 'node:crypto';
import type { IncrementResponse, Options, Store } from 'express-rate-limit';
import { RateLimiterPostgres } from 'rate-limiter-flexible';
import type { AppDeps } from '../../deps';

/**
 * express-rate-limit's counter kept in PostgreSQL, shared by every server process: rate-limiter-flexible's
 * PostgreSQL store on table `rate_limits`. Migration 0170 makes that table (the server's role owns
 * nothing and may not create one), so the store is told it exists. Keys are hashed.
 */
export class PostgresRateLimitStore implements Store {
  private limiter: RateLimiterPostgres | null = null;

  constructor(
    private readonly deps: Pick<AppDeps, 'pgPool'>,
    readonly prefix: string,
  ) {}

  init(options: Options) {
    // The store names its prepared statements; a transaction pooler (PgBouncer) may run the next use of a
    // name on another server connection, so they go as unnamed statements.
    const pool = this.deps.pgPool;
    const unnamed = { query: (q: { text: string; values?: unknown[] }) => pool.query({ text: q.text, values: q.values }) };
    this.limiter = new RateLimiterPostgres({
      storeClient: unnamed,
      storeType: 'pool',
      tableName: 'rate_limits',
      tableCreated: true,
      keyPrefix: this.prefix,
      points: options.limit as number,
      duration: Math.max(1, Math.ceil(options.windowMs / 1000)),
    });
  }

  private key(key: string) {
    return createHash('sha256').update(key).digest('base64url');
  }

  private get store() {
    if (!this.limiter) throw new Error('the rate-limit store was used before express-rate-limit set it up');
    return this.limiter;
  }

  async increment(key: string): Promise<IncrementResponse> {
    // penalty() adds a point without refusing: express-rate-limit decides on the count.
    const res = await this.store.penalty(this.key(key), 1);
    return { totalHits: res.consumedPoints, resetTime: new Date(Date.now() + Math.max(0, res.msBeforeNext)) };
  }

  async decrement(key: string) {
    await this.store.reward(this.key(key), 1);
  }

  async resetKey(key: string) {
    await this.store.delete(this.key(key));
  }
}
