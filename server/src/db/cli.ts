// `node --import tsx server/src/db/cli.ts migrate|seed|setup` with DATABASE_URL set (setup = migrate, then seed).
import { createSequelize } from './sequelize';
import { migrateUp } from './migrator';
import { seedDemo } from './seed';

const command = process.argv[2];
const url = process.env.DATABASE_URL;
if (!url) {
  console.error('DATABASE_URL is not set.');
  process.exit(2);
}
const sequelize = createSequelize(url);
try {
  if (command === 'migrate' || command === 'setup') {
    const done = await migrateUp(sequelize);
    if (done.length) console.log(`[db] applied ${done.length} migration(s)`);
  }
  if (command === 'seed' || command === 'setup') {
    await seedDemo(sequelize, { permits: process.env.SEED_DEMO_PERMITS !== 'off' });
    console.log('[db] demo data is in place');
  }
  if (!['migrate', 'seed', 'setup'].includes(command ?? '')) {
    console.error('usage: cli.ts migrate|seed|setup');
    process.exitCode = 2;
  }
} finally {
  await sequelize.close();
}
