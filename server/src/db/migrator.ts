import { Umzug, SequelizeStorage } from 'umzug';
import type { QueryInterface, Sequelize } from 'sequelize';
import { fileURLToPath } from 'node:url';
import { dirname, join } from 'node:path';

const here = dirname(fileURLToPath(import.meta.url));

export type MigrationContext = { queryInterface: QueryInterface; sequelize: Sequelize };
export type Migration = (params: { context: MigrationContext }) => Promise<void>;

export function createMigrator(sequelize: Sequelize) {
  return new Umzug<MigrationContext>({
    migrations: { glob: ['migrations/*.ts', { cwd: here }] },
    context: { queryInterface: sequelize.getQueryInterface(), sequelize },
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
    logger: undefined,
  });
}

export async function migrateUp(sequelize: Sequelize) {
  return createMigrator(sequelize).up();
}

export const migrationsDir = join(here, 'migrations');
