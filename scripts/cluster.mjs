// `npm run cluster`: Holdpoint as it runs on several machines, on this one, on loopback. Installs what is
// missing (Debian's haproxy, pgbouncer and postgresql), then starts a PostgreSQL primary and a hot standby,
// PgBouncer in transaction mode, s3rver, three Holdpoint processes (the compiled server) and HAProxy on
// http://127.0.0.1:${PORT:-3000}. Ctrl-C stops it all; a run that was not stopped is cleaned up on the next start.
// Everything it keeps is under .data/cluster (git-ignored), apart from `npm start`'s .data/pg: the primary
// runs with replication and its own roles' settings, and both may run side by side.
// Ports: PORT (3000) for HAProxy, CLUSTER_APP_PORT (3101, 3102, 3103) for the processes, CLUSTER_PGPORT
// (54331) for the primary, then the standby (+1), PgBouncer (+2) and s3rver (+3).
import { spawnSync } from 'node:child_process';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureNodeModules } from './lib/deps.mjs';
import { cleanupStale, startHoldpointCluster } from './lib/cluster.mjs';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const processes = 3;
const http = Number(process.env.PORT ?? 3000);
const appBase = Number(process.env.CLUSTER_APP_PORT ?? 3101);
const pgBase = Number(process.env.CLUSTER_PGPORT ?? 54331);
const ports = {
  http,
  backends: Array.from({ length: processes }, (_, i) => appBase + i),
  primary: pgBase,
  standby: pgBase + 1,
  bouncer: pgBase + 2,
  s3: pgBase + 3,
};

ensureNodeModules(root);
const { buildServer } = await import('./build-server.mjs');
await buildServer(root);
if (process.env.CLUSTER_BUILD_CLIENT !== 'off') {
  // As `npm start`: the client built for production.
  if (spawnSync('npx', ['vite', 'build', '--logLevel', 'warn'], { cwd: root, env: { ...process.env, NODE_ENV: 'production' }, stdio: 'inherit' }).status !== 0) {
    console.error('[cluster] the client build failed');
    process.exit(1);
  }
}

let cluster = null;
let stopping = false;
const stop = async (code) => {
  if (stopping) return;
  stopping = true;
  console.log('\n[cluster] stopping');
  await cluster?.stop().catch((err) => console.error(`[cluster] ${err.message}`));
  console.log('[cluster] stopped');
  process.exit(code);
};
process.on('SIGINT', () => void stop(0));
process.on('SIGTERM', () => void stop(0));

try {
  cluster = await startHoldpointCluster({ root, dir: join(root, '.data', 'cluster'), serverDir: join(root, 'dist', 'server'), clientDist: join(root, 'dist', 'client'), processes, ports });
} catch (err) {
  console.error(`[cluster] ${err.message}`);
  // What had started before the failure (its pids are in the state file).
  await cleanupStale(join(root, '.data', 'cluster'));
  await stop(1);
}
console.log(`
  Holdpoint runs as a cluster on ${cluster.url}
    HAProxy            127.0.0.1:${ports.http}  (checks /api/health/ready on each process every second)
    Holdpoint          ${ports.backends.map((p) => `127.0.0.1:${p}`).join(', ')}  (logs in .data/cluster/logs)
    PgBouncer          127.0.0.1:${ports.bouncer}  (transaction pooling, before the primary)
    PostgreSQL         primary 127.0.0.1:${ports.primary}, hot standby 127.0.0.1:${ports.standby} (reads that tolerate a little lag)
    s3rver             127.0.0.1:${ports.s3}  (uploads, files under .data/cluster/s3)
  Demo sign-ins as for npm start (password "holdpoint-demo"), e.g. admin@bramblecote.example.
  Mail waits in the outbox (no SMTP_URL). Ctrl-C stops it all.
`);
