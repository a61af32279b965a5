// `node --import tsx server/src/db/cli.ts migrate` with DATABASE_URL set to the owner's URL. The demo data
// goes through the feature services, so it has its own entry beside them: server/src/demo/cli.ts.
import { migrateAndReport, runDatabaseCommand } from './cli-runner';

await runDatabaseCommand(['migrate'], 'cli.ts migrate (to seed the demo: server/src/demo/cli.ts seed|setup)', (_command, sequelize) => migrateAndReport(sequelize));
