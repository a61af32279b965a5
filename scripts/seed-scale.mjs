// `npm run seed:scale [-- --fresh] [-- --factor 0.1]`: builds the large-operator dataset in its own
// database (holdpoint_scale) in the cluster of `npm start` (.data/pg, PGPORT, default 54329): the demo
// people and tenants first (`demo/cli.ts setup`), then 200 pipelines, 20,000 isolation points, 60,000
// historic permits with their audit events, 2,000 live permits holding 8,000 isolations and 500,000
// gas readings in the Bramblecote tenant. `--fresh` drops and rebuilds the database, `--verify`
// recomputes the whole audit chain afterwards, `--factor 0.1` builds a tenth of everything. A database
// this command started is stopped again at the end; one that was already running is left running.
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureNodeModules } from './lib/deps.mjs';
import { ensureAppRole, ensureRoleAndDatabase, keptSecret, startCluster } from './lib/pg.mjs';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const dataDir = join(root, '.data');
const pgPort = Number(process.env.PGPORT ?? 54329);
// SCALE_DATABASE picks another database of the same cluster (e.g. a small trial dataset).
const database = process.env.SCALE_DATABASE ?? 'holdpoint_scale';
if (!/^[a-z_][a-z0-9_]*$/.test(database)) throw new Error(`SCALE_DATABASE must be a plain lower-case name, not ${database}`);
const args = process.argv.slice(2);
const started = Date.now();

ensureNodeModules(root);
mkdirSync(dataDir, { recursive: true });
const cluster = startCluster({ root: join(dataDir, 'pg'), port: pgPort });
const password = keptSecret(join(dataDir, 'db-password'));
/** CPU time of this command and the processes it waited for (the builders, psql); the database server's own work is not included. */
function cpuSeconds() {
  try {
    // /proc/self/stat: utime, stime, cutime, cstime (fields 14–17) in clock ticks of 1/100 s.
    const fields = readFileSync('/proc/self/stat', 'utf8').split(') ')[1].split(' ');
    const ticks = [11, 12, 13, 14].reduce((sum, i) => sum + Number(fields[i]), 0);
    return `${(ticks / 100).toFixed(1)} s of CPU outside PostgreSQL`;
  } catch {
    const { user, system } = process.cpuUsage();
    return `${((user + system) / 1e6).toFixed(1)} s of CPU in this process`;
  }
}
const finish = (code) => {
  if (cluster.startedHere) cluster.stop();
  process.exit(code);
};

try {
  if (args.includes('--fresh')) {
    console.log(`[seed:scale] dropping ${database}`);
    cluster.psql(`DROP DATABASE IF EXISTS ${database} WITH (FORCE);`);
  }
  const databaseUrl = ensureRoleAndDatabase(cluster, { role: 'holdpoint', password, database });
  // The server's login role (as `npm start` makes it), so the migrations grant it its rights here too.
  ensureAppRole(cluster, { role: 'holdpoint_app', password: keptSecret(join(dataDir, 'db-app-password')) });
  const env = { ...process.env, DATABASE_URL: databaseUrl, DATA_DIR: dataDir };
  const node = (script, extra = []) => spawnSync(process.execPath, ['--import', 'tsx', script, ...extra], { cwd: root, env, stdio: 'inherit' }).status;
  console.log(`[seed:scale] migrating ${database} and seeding the demo people`);
  if (node('server/src/demo/cli.ts', ['setup']) !== 0) throw new Error('migrating or seeding the demo failed');
  console.log(`[seed:scale] building the dataset`);
  const status = node('scripts/scale/seed-data.ts', args.filter((a) => a !== '--fresh'));
  if (status === 3) finish(0);
  if (status !== 0) throw new Error('building the dataset failed; run again with --fresh');
  console.log(`[seed:scale] done in ${((Date.now() - started) / 1000).toFixed(1)} s (${cpuSeconds()}). Sign in as the demo people (password "holdpoint-demo") against ${database}; run \`npm run bench\` next.`);
  finish(0);
} catch (err) {
  console.error(`[seed:scale] ${err.message}`);
  finish(1);
}
