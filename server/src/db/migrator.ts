import { Umzug, SequelizeStorage } from 'umzug';
import type { QueryInterface, Sequelize } from 'sequelize';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { dirname, join } from 'node:path';

const here = dirname(fileURLToPath(import.meta.url));
// Compiled (dist/server, see scripts/build-server.mjs) the migrations are JavaScript beside the bundle,
// recorded under their TypeScript names so a database migrated either way stays migrated.
const compiled = !fileURLToPath(import.meta.url).endsWith('.ts');

export type MigrationContext = { queryInterface: QueryInterface; sequelize: Sequelize };
export type Migration = (params: { context: MigrationContext }) => Promise<void>;

export function createMigrator(sequelize: Sequelize) {
  return new Umzug<MigrationContext>({
    migrations: compiled
      ? {
          glob: ['migrations/*.js', { cwd: here }],
          resolve: ({ name, path }) => {
            const load = () => import(pathToFileURL(path!).href) as Promise<{ up: Migration; down: Migration }>;
            return { name: name.replace(/\.js$/, '.ts'), up: async (params) => (await load()).up(params), down: async (params) => (await load()).down(params) };
          },
        }
      : { glob: ['migrations/*.ts', { cwd: here }] },
    context: { queryInterface: sequelize.getQueryInterface(), sequelize },
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
    logger: undefined,
  });
}

/** The advisory lock every migrator takes first (any fixed number; this one is "HOLDPOINT" on a keypad). */
export const MIGRATION_LOCK_KEY = 465_376_468;

interface RawConnection {
  query(sql: string, values?: unknown[]): Promise<unknown>;
}
interface ConnectionManager {
  getConnection(options?: object): Promise<RawConnection>;
  releaseConnection(connection: RawConnection): Promise<void>;
}

/**
 * Migrates under a PostgreSQL advisory lock held on one connection of its own for the whole run:
 * processes or machines that start together queue on it, and each one after the first finds nothing
 * left to do. The lock is a session lock, so it goes with the connection if the process dies.
 */
export async function migrateUp(sequelize: Sequelize) {
  const manager = (sequelize as unknown as { connectionManager: ConnectionManager }).connectionManager;
  const connection = await manager.getConnection({ type: 'write' });
  try {
    await connection.query('SELECT pg_advisory_lock($1)', [MIGRATION_LOCK_KEY]);
    try {
      return await migrateLocked(sequelize);
    } finally {
      await connection.query('SELECT pg_advisory_unlock($1)', [MIGRATION_LOCK_KEY]).catch(() => undefined);
    }
  } finally {
    await manager.releaseConnection(connection);
  }
}

async function migrateLocked(sequelize: Sequelize) {
  const done = await createMigrator(sequelize).up();
  // A table with tenant data added by a migration that ran after the row-level-security one still
  // gets its policy: every tenant_id table without row security is switched on here (since 0100 the
  // mail outbox and tokens too: no table with tenant_id is exempt).
  await sequelize.query(`
    DO $$ DECLARE r record; BEGIN
      IF to_regproc('hp_enable_tenant_rls') IS NULL THEN RETURN; END IF;
      FOR r IN SELECT c.oid::regclass AS tbl FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace
               JOIN pg_attribute a ON a.attrelid = c.oid AND a.attname = 'tenant_id' AND NOT a.attisdropped
               WHERE n.nspname = 'public' AND c.relkind = 'r' AND NOT c.relrowsecurity
      LOOP PERFORM hp_enable_tenant_rls(r.tbl); END LOOP;
    END $$;`);
  // The server's login role belongs to hp_app: plain data rights, no ownership, and the audit trail
  // is append-only for it (the trigger refuses changes too).
  await sequelize.query(`
    DO $$ BEGIN
      IF EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'hp_app') THEN
        GRANT USAGE ON SCHEMA public TO hp_app;
        GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA public TO hp_app;
        GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA public TO hp_app;
        REVOKE UPDATE, DELETE, TRUNCATE ON audit_events FROM hp_app;
        REVOKE ALL ON schema_migrations FROM hp_app;
      END IF;
    END $$;`);
  return done;
}

export const migrationsDir = join(here, 'migrations');
