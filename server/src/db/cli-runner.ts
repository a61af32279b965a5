import type { Sequelize } from 'sequelize';
import { createSequelize } from './sequelize';
import { migrateUp } from './migrator';

/**
 * The shared frame of the database command lines: checks the command word and DATABASE_URL, opens
 * one connection, runs `fn` and always closes the connection.
 */
export async function runDatabaseCommand(commands: readonly string[], usage: string, fn: (command: string, sequelize: Sequelize) => Promise<void>) {
  const command = process.argv[2] ?? '';
  if (!commands.includes(command)) {
    console.error(`usage: ${usage}`);
    process.exit(2);
  }
  const url = process.env.DATABASE_URL;
  if (!url) {
    console.error('DATABASE_URL is not set.');
    process.exit(2);
  }
  const sequelize = createSequelize(url);
  try {
    await fn(command, sequelize);
  } finally {
    await sequelize.close();
  }
}

export async function migrateAndReport(sequelize: Sequelize) {
  const done = await migrateUp(sequelize);
  if (done.length) console.log(`[db] applied ${done.length} migration(s)`);
}
