import { Sequelize, type Transaction, type TransactionOptions } from 'sequelize';
import pg from 'pg';
import { AsyncLocalStorage } from 'node:async_hooks';
import type { Logger } from 'pino';

// Sequelize's "CLS" hook, backed by AsyncLocalStorage: every query inside a managed transaction
// joins it without passing `transaction` by hand, so a tenant set at the start cannot be skipped.
const store = new AsyncLocalStorage<Map<string, unknown>>();
Sequelize.useCLS({
  get: (key: string) => store.getStore()?.get(key),
  set: (key: string, value: unknown) => store.getStore()?.set(key, value),
  run: (fn: (ctx: unknown) => unknown) => store.run(new Map(), () => fn(store.getStore())),
  bind: <F>(fn: F) => fn,
});
/** The store's entry naming the transaction a whole request runs in (withRequestTransaction). */
const REQUEST_TRANSACTION = 'requestTransaction';

// DATE columns come back as JS Dates; BIGINT counts as numbers (our counts stay far below 2^53).
pg.types.setTypeParser(20, (v) => Number(v));

export function createSequelize(databaseUrl: string, logger?: Logger): Sequelize {
  const sequelize = new Sequelize(databaseUrl, {
    dialect: 'postgres',
    dialectModule: pg,
    logging: logger && logger.isLevelEnabled('trace') ? (sql) => logger.trace({ sql }, 'sql') : false,
    pool: { max: 10, min: 0, idle: 10_000, acquire: 5_000, evict: 5_000 },
    dialectOptions: { connectionTimeoutMillis: 3_000, statement_timeout: 15_000 },
    define: { underscored: true, timestamps: true },
    retry: { max: 0 },
  });
  beginWithTenant(sequelize);
  return sequelize;
}

/**
 * The hot standby's pool (DATABASE_REPLICA_URL): smaller, and quick to give up, because a read that
 * cannot reach the standby runs again on the primary (lib/read-replica.ts). Its transactions are
 * read-only by nature; the tenant setting and row-level security work there as on the primary.
 */
export function createReplicaSequelize(databaseUrl: string, logger?: Logger): Sequelize {
  const sequelize = new Sequelize(databaseUrl, {
    dialect: 'postgres',
    dialectModule: pg,
    logging: logger && logger.isLevelEnabled('trace') ? (sql) => logger.trace({ sql }, 'sql') : false,
    pool: { max: 5, min: 0, idle: 10_000, acquire: 2_000, evict: 5_000 },
    dialectOptions: { connectionTimeoutMillis: 1_000, statement_timeout: 15_000 },
    define: { underscored: true, timestamps: true },
    retry: { max: 0 },
  });
  beginWithTenant(sequelize);
  return sequelize;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * A tenant transaction starts with its tenant already set, in one round trip: "START TRANSACTION;
 * SELECT set_config(…)" goes as one simple query. The id is written into the text, so only a
 * well-formed uuid is accepted.
 */
function beginWithTenant(sequelize: Sequelize) {
  const generator = sequelize.getQueryInterface().queryGenerator as { startTransactionQuery: (t: Transaction) => string };
  const start = generator.startTransactionQuery.bind(generator);
  generator.startTransactionQuery = (t) => {
    const sql = start(t);
    const tenantId = (t as unknown as { options?: { tenantId?: unknown } }).options?.tenantId;
    if (tenantId === undefined || (t as unknown as { parent?: unknown }).parent) return sql;
    if (typeof tenantId !== 'string' || !UUID.test(tenantId)) throw new Error('withTenant needs a tenant id (a uuid)');
    return `${sql} SELECT set_config('app.tenant_id', '${tenantId.toLowerCase()}', true);`;
  };
}

/**
 * Runs `fn` in one transaction with `app.tenant_id` set (the key row-level security reads). Inside an
 * open transaction it joins it, so services can call each other; asked for another tenant there, it
 * switches `app.tenant_id` for the rest of that transaction.
 * Every query on tenant-owned tables goes through here.
 */
export async function withTenant<T>(sequelize: Sequelize, tenantId: string, fn: (t: Transaction) => Promise<T>): Promise<T> {
  const current = store.getStore();
  const open = current?.get('transaction') as Transaction | null | undefined;
  if (open && (open as unknown as { sequelize: Sequelize }).sequelize === sequelize && current?.get(REQUEST_TRANSACTION) === open) {
    // A call at the top of a request held in one transaction (withRequestTransaction) gets a savepoint:
    // when it fails, only its own work is undone, as its own transaction would have been.
    const outerTenant = current.get('tenantId');
    return sequelize.transaction({ transaction: open } as TransactionOptions, async (savepoint) => {
      const inner = store.getStore();
      inner?.set(REQUEST_TRANSACTION, open);
      inner?.set('tenantId', outerTenant);
      if (outerTenant !== tenantId) {
        await sequelize.query(`SELECT set_config('app.tenant_id', :tenantId, true)`, { replacements: { tenantId }, transaction: savepoint });
        inner?.set('tenantId', tenantId);
        // Kept or undone with the savepoint: the next call sets it again.
        current.delete('tenantId');
      }
      return fn(savepoint);
    });
  }
  if (open && (open as unknown as { sequelize: Sequelize }).sequelize === sequelize) {
    if (current?.get('tenantId') !== tenantId) {
      await sequelize.query(`SELECT set_config('app.tenant_id', :tenantId, true)`, { replacements: { tenantId }, transaction: open });
      current?.set('tenantId', tenantId);
    }
    return fn(open);
  }
  // app.tenant_id is set by the transaction's first statement (beginWithTenant above).
  return sequelize.transaction({ tenantId } as TransactionOptions, async (t) => {
    store.getStore()?.set('tenantId', tenantId);
    return fn(t);
  });
}

/**
 * One transaction around a whole request, with `app.tenant_id` set: a request with an Idempotency-Key
 * (middleware/idempotency.ts) stores its answer under the key in the same transaction as its write, so
 * both are kept or neither. The services' own withTenant calls inside it become savepoints.
 */
export async function withRequestTransaction<T>(sequelize: Sequelize, tenantId: string, fn: (t: Transaction) => Promise<T>): Promise<T> {
  return withTenant(sequelize, tenantId, (t) => {
    store.getStore()?.set(REQUEST_TRANSACTION, t);
    return fn(t);
  });
}

/**
 * Work that outlives the request (a dossier built in the background, a chain check) and reads what the
 * request wrote: inside a request transaction it starts once that transaction ends without a rollback,
 * outside the request's context (its own transactions); otherwise at once.
 */
/**
 * Runs `work` outside any transaction of the caller: for background work started while a request's
 * transaction is open, which must open its own (an inherited one would be committed under it).
 */
export function detached(work: () => void): void {
  store.exit(work);
}

export function whenCommitted(work: () => void): void {
  const request = store.getStore()?.get(REQUEST_TRANSACTION) as (Transaction & { finished?: string }) | undefined;
  if (request && !request.finished) request.afterCommit(() => store.exit(work));
  else work();
}

/**
 * A pg pool for libraries that need one (the session store); errors on idle clients are logged, not fatal.
 * Its commits do not wait for the disk: the session store writes on every request (the idle timer),
 * and losing the last moment's writes in a crash only signs someone out a little early.
 */
export function createPgPool(databaseUrl: string, logger: Logger, max = 4): pg.Pool {
  const pool = new pg.Pool({ connectionString: databaseUrl, max, connectionTimeoutMillis: 3_000, idleTimeoutMillis: 10_000, options: '-c synchronous_commit=off' });
  pool.on('error', (err) => logger.warn({ err: err.message }, 'idle database client failed'));
  return pool;
}
