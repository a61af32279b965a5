// `npm run dev`: the database from .data (started if needed), the API under `tsx watch` on PORT and
// the Vite dev server on 5173 with /api proxied to it. Ctrl-C stops all three.
import { spawn, spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureNodeModules } from './lib/deps.mjs';
import { ensureAppRole, ensureRoleAndDatabase, keptSecret, startCluster, withCredentials } from './lib/pg.mjs';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const dataDir = join(root, '.data');
const port = Number(process.env.PORT ?? 3000);
ensureNodeModules(root);
mkdirSync(dataDir, { recursive: true });
const cluster = startCluster({ root: join(dataDir, 'pg'), port: Number(process.env.PGPORT ?? 54329) });
const ownerUrl = ensureRoleAndDatabase(cluster, { role: 'holdpoint', password: keptSecret(join(dataDir, 'db-password')), database: 'holdpoint' });
const appUrl = withCredentials(ownerUrl, ensureAppRole(cluster, { role: 'holdpoint_app', password: keptSecret(join(dataDir, 'db-app-password')) }));
const env = { ...process.env, DATABASE_URL: appUrl, DATABASE_OWNER_URL: ownerUrl, DATA_DIR: dataDir, PORT: String(port), NODE_ENV: 'development', DEV_MAILBOX: process.env.SMTP_URL ? 'off' : 'on', PUBLIC_URL: 'http://127.0.0.1:5173' };
if (spawnSync(process.execPath, ['--import', 'tsx', 'server/src/demo/cli.ts', 'setup'], { cwd: root, env: { ...env, DATABASE_URL: ownerUrl }, stdio: 'inherit' }).status !== 0) process.exit(1);
const children = [
  spawn('npx', ['tsx', 'watch', 'server/src/index.ts'], { cwd: root, env, stdio: 'inherit' }),
  spawn('npx', ['vite'], { cwd: root, env, stdio: 'inherit' }),
];
console.log(`\n  Holdpoint dev: http://127.0.0.1:5173 (API on ${port}, mail at http://127.0.0.1:${port}/dev/mail)\n`);
const stop = () => {
  for (const c of children) c.kill('SIGTERM');
  cluster.stop();
  process.exit(0);
};
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
