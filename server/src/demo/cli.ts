// `node --import tsx server/src/demo/cli.ts seed|setup` with DATABASE_URL set to the owner's URL
// (setup = migrate, then seed). SEED_DEMO_PERMITS=off leaves out the demo permits.
import { migrateAndReport, runDatabaseCommand } from '../db/cli-runner';
import { seedDemo } from './index';

await runDatabaseCommand(['seed', 'setup'], 'cli.ts seed|setup', async (command, sequelize) => {
  if (command === 'setup') await migrateAndReport(sequelize);
  await seedDemo(sequelize, { permits: process.env.SEED_DEMO_PERMITS !== 'off' });
  console.log('[db] demo data is in place');
});
