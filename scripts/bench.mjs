// `npm run bench`: the performance run on the scale dataset (build it first with `npm run seed:scale`).
// Starts the database of `npm start` if it is not running (and stops it again at the end), builds the
// client when dist/ is missing, compiles the server, then runs scripts/bench/run.ts (or, with
// `-- profile [entry]`, scripts/bench/profile.ts; with `-- cluster`, scripts/bench/cluster.ts; with `-- browser`,
// only run.ts's browser figures). Not part of `npm test`.
import { mkdirSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureNodeModules } from './lib/deps.mjs';
import { ensureAppRole, ensureRoleAndDatabase, keptSecret, startCluster, withCredentials } from './lib/pg.mjs';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const dataDir = join(root, '.data');
const pgPort = Number(process.env.PGPORT ?? 54329);
// SCALE_DATABASE picks another database of the same cluster (e.g. a small trial dataset).
const database = process.env.SCALE_DATABASE ?? 'holdpoint_scale';
if (!/^[a-z_][a-z0-9_]*$/.test(database)) throw new Error(`SCALE_DATABASE must be a plain lower-case name, not ${database}`);

ensureNodeModules(root);
mkdirSync(dataDir, { recursive: true });
// `npm run bench -- cluster`: the signed-in reads against `npm run cluster`'s shape (on spare ports, demo data)
// and against one of its processes; prints the ratio (scripts/bench/cluster.ts).
if (process.argv[2] === 'cluster') process.exit(await benchCluster());
const cluster = startCluster({ root: join(dataDir, 'pg'), port: pgPort });
let status = 1;
try {
  const exists = cluster.psql(`SELECT 1 FROM pg_database WHERE datname = '${database}'`).trim() === '1';
  if (!exists) throw new Error(`There is no ${database} database yet: run \`npm run seed:scale\` first.`);
  const ownerUrl = ensureRoleAndDatabase(cluster, { role: 'holdpoint', password: keptSecret(join(dataDir, 'db-password')), database });
  // As `npm start`: the server logs in as the app role (row-level security binds it), migrations run as the owner.
  const appUrl = withCredentials(ownerUrl, ensureAppRole(cluster, { role: 'holdpoint_app', password: keptSecret(join(dataDir, 'db-app-password')) }));
  // Built every run, as the server is below: a client left from an older checkout would be measured against a newer server.
  console.log('[bench] building the client');
  if (spawnSync('npx', ['vite', 'build', '--logLevel', 'warn'], { cwd: root, stdio: 'inherit', env: { ...process.env, NODE_ENV: 'production' } }).status !== 0) throw new Error('the client build failed');
  // The server runs as in production: compiled, with plain node.
  const { buildServer } = await import('./build-server.mjs');
  await buildServer(root);
  // `npm run bench -- profile [entry]`: the CPU profile of the signed-in reads instead of the whole run.
  const [command, ...rest] = process.argv.slice(2);
  // `npm run bench -- browser`: only the browser's figures (scripts/bench/run.ts browser).
  const script = command === 'profile' ? ['scripts/bench/profile.ts', ...rest] : command === 'browser' ? ['scripts/bench/run.ts', 'browser'] : ['scripts/bench/run.ts'];
  status = spawnSync(process.execPath, ['--import', 'tsx', ...script], {
    cwd: root,
    stdio: 'inherit',
    env: { ...process.env, DATABASE_URL: appUrl, DATABASE_OWNER_URL: ownerUrl, DATA_DIR: dataDir },
  }).status ?? 1;
} catch (err) {
  console.error(`[bench] ${err.message}`);
} finally {
  if (cluster.startedHere) cluster.stop();
}
process.exit(status);

async function benchCluster() {
  const { freePort } = await import('./lib/pg.mjs');
  const { cleanupStale, startHoldpointCluster } = await import('./lib/cluster.mjs');
  const { buildServer } = await import('./build-server.mjs');
  const dir = join(dataDir, 'cluster-bench');
  const serverDir = join(root, '.tmp', 'cluster-bench-server');
  await buildServer(root, serverDir);
  const ports = { http: await freePort(), backends: [await freePort(), await freePort(), await freePort()], primary: await freePort(), standby: await freePort(), bouncer: await freePort(), s3: await freePort() };
  let running = null;
  try {
    running = await startHoldpointCluster({ root, dir, serverDir, clientDist: join(dir, 'no-client'), ports, extraEnv: { LOG_LEVEL: 'warn', WORKERS: 'off' } });
    // Not spawnSync: s3rver runs in this process and must keep answering (the processes' readiness checks the bucket).
    const { spawn } = await import('node:child_process');
    const child = spawn(process.execPath, ['--import', 'tsx', 'scripts/bench/cluster.ts'], { cwd: root, stdio: 'inherit', env: { ...process.env, HOLDPOINT_CLUSTER_STATE: join(dir, 'state.json') } });
    return await new Promise((done) => child.on('exit', (code) => done(code ?? 1)));
  } catch (err) {
    console.error(`[bench] ${err.message}`);
    await cleanupStale(dir);
    return 1;
  } finally {
    await running?.stop();
    const { rmSync } = await import('node:fs');
    rmSync(serverDir, { recursive: true, force: true });
  }
}
