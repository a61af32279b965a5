// `npm run test:cluster`: starts the cluster (scripts/lib/cluster.mjs) on spare ports in a folder of its
// own, runs tests/cluster/*.test.ts against it (vitest project "cluster"), then stops it.
// The tests find the cluster through HOLDPOINT_CLUSTER_STATE (its state file).
import { spawn } from 'node:child_process';
import { rmSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureNodeModules } from './lib/deps.mjs';
import { freePort } from './lib/pg.mjs';
import { cleanupStale, startHoldpointCluster } from './lib/cluster.mjs';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const dir = join(root, '.data', 'cluster-test');
const serverDir = join(root, '.tmp', 'cluster-test-server');
const processes = 3;

ensureNodeModules(root);
const { buildServer } = await import('./build-server.mjs');
await buildServer(root, serverDir);
const ports = { http: await freePort(), backends: [], primary: await freePort(), standby: await freePort(), bouncer: await freePort(), s3: await freePort() };
for (let i = 0; i < processes; i++) ports.backends.push(await freePort());

// Each run starts from nothing: a fresh primary, standby and bucket.
rmSync(join(dir, 'primary'), { recursive: true, force: true });
rmSync(join(dir, 's3'), { recursive: true, force: true });
const started = Date.now();
let cluster = null;
let code = 1;
try {
  cluster = await startHoldpointCluster({
    root,
    dir,
    serverDir,
    clientDist: join(dir, 'no-client'),
    processes,
    ports,
    // Ten sign-in attempts per address, as the acceptance list counts them; the tests use addresses of their own.
    extraEnv: { NODE_ENV: 'test', SIGN_IN_LIMIT_PER_IP: '10', LOG_LEVEL: 'warn' },
    log: (line) => console.log(line),
  });
  console.log(`[test:cluster] cluster up in ${Math.round((Date.now() - started) / 1000)} s`);
  const args = ['vitest', 'run', '--project', 'cluster', ...process.argv.slice(2)];
  code = await new Promise((r) => spawn('npx', args, { cwd: root, env: { ...process.env, HOLDPOINT_CLUSTER_STATE: join(dir, 'state.json') }, stdio: 'inherit' }).on('exit', (c) => r(c ?? 1)));
} catch (err) {
  console.error(`[test:cluster] ${err.stack ?? err.message}`);
  await cleanupStale(dir);
} finally {
  await cluster?.stop().catch((err) => console.error(`[test:cluster] stop: ${err.message}`));
  rmSync(serverDir, { recursive: true, force: true });
}
console.log(`[test:cluster] ${code === 0 ? 'passed' : 'failed'} in ${Math.round((Date.now() - started) / 1000)} s`);
process.exit(code);
