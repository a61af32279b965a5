import { Sequelize, type Transaction } from 'sequelize';
import pg from 'pg';
import type { Logger } from 'pino';

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
  return sequelize;
}

/** Runs `fn` in one transaction with the tenant set for row-level security. */
export async function inTenantTransaction<T>(
  sequelize: Sequelize,
  tenantId: string | null,
  fn: (t: Transaction) => Promise<T>,
): Promise<T> {
  return sequelize.transaction(async (t) => {
    if (tenantId) {
      await sequelize.query(`SELECT set_config('app.tenant_id', :tenantId, true)`, { replacements: { tenantId }, transaction: t });
    }
    return fn(t);
  });
}

/** A pg pool for libraries that need one (the session store); errors on idle clients are logged, not fatal. */
export function createPgPool(databaseUrl: string, logger: Logger, max = 4): pg.Pool {
  const pool = new pg.Pool({ connectionString: databaseUrl, max, connectionTimeoutMillis: 3_000, idleTimeoutMillis: 10_000 });
  pool.on('error', (err) => logger.warn({ err: err.message }, 'idle database client failed'));
  return pool;
}
