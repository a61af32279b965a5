// `npm run db:migrate` (`node --import tsx server/src/db/cli.ts migrate`) with DATABASE_OWNER_URL, or DATABASE_URL,
// set to the owner's URL: migrations as their own step, under an advisory lock (migrator.ts), so two
// started at once run them once. The demo data goes through the feature services, so it has its own
// entry beside them: server/src/demo/cli.ts.
import { migrateAndReport, runDatabaseCommand } from './cli-runner';

if (process.env.DATABASE_OWNER_URL) process.env.DATABASE_URL = process.env.DATABASE_OWNER_URL;

await runDatabaseCommand(['migrate'], 'cli.ts migrate (to seed the demo: server/src/demo/cli.ts seed|setup)', (_command, sequelize) => migrateAndReport(sequelize));
