// `npm start`: installs what is missing, starts PostgreSQL under .data/pg, compiles the server, migrates
// and seeds the demo, builds the client and serves everything (one server process per core).
// Ctrl-C stops the server and the database this command started.
import { spawn, spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureNodeModules } from './lib/deps.mjs';
import { ensureAppRole, ensureRoleAndDatabase, keptSecret, portInUse, startCluster, withCredentials } from './lib/pg.mjs';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const dataDir = join(root, '.data');
const pgPort = Number(process.env.PGPORT ?? 54329);
const port = Number(process.env.PORT ?? 3000);

ensureNodeModules(root);
mkdirSync(dataDir, { recursive: true });

const cluster = startCluster({ root: join(dataDir, 'pg'), port: pgPort });
const password = keptSecret(join(dataDir, 'db-password'));
const ownerUrl = ensureRoleAndDatabase(cluster, { role: 'holdpoint', password, database: 'holdpoint' });
// The server logs in as a role that owns nothing, so row-level security binds it; migrations run as the owner.
const appUrl = withCredentials(ownerUrl, ensureAppRole(cluster, { role: 'holdpoint_app', password: keptSecret(join(dataDir, 'db-app-password')) }));
let stopped = false;
// Ctrl-C stops the database only when this command started it.
const stopDb = () => {
  s3?.close().catch(() => undefined);
  if (stopped || !cluster.startedHere) return;
  stopped = true;
  cluster.stop();
  console.log('[start] PostgreSQL stopped');
};

// Without SMTP_URL the demo keeps its mail in the development mailbox (/dev/mail, signed-in people see their own).
const devMailbox = process.env.DEV_MAILBOX ?? (process.env.SMTP_URL ? 'off' : 'on');
// Without S3_URL, uploads go to a local S3 fake (s3rver, files under .data/s3) that this command runs and stops.
let s3 = null;
let s3Env = {};
if (!process.env.S3_URL) {
  const { default: S3rver } = await import('s3rver');
  s3 = new S3rver({ address: '127.0.0.1', port: 0, silent: true, directory: join(dataDir, 's3'), configureBuckets: [{ name: 'holdpoint', configs: [] }] });
  const { port: s3Port } = await s3.run();
  s3Env = { S3_URL: `http://127.0.0.1:${s3Port}`, S3_BUCKET: 'holdpoint', S3_ACCESS_KEY_ID: 'S3RVER', S3_SECRET_ACCESS_KEY: 'S3RVER' };
}
const env = { ...process.env, ...s3Env, DATABASE_URL: appUrl, DATABASE_OWNER_URL: ownerUrl, DATA_DIR: dataDir, PORT: String(port), NODE_ENV: process.env.NODE_ENV ?? 'development', DEV_MAILBOX: devMailbox };
const run = (args) => spawnSync(process.execPath, args, { cwd: root, env: { ...env, DATABASE_URL: ownerUrl }, stdio: 'inherit' });

try {
  // The server runs compiled (dist/server, git-ignored), with plain node: see scripts/build-server.mjs.
  const { buildServer } = await import('./build-server.mjs');
  await buildServer(root);
  if (run(['dist/server/demo-cli.js', 'setup']).status !== 0) throw new Error('database set-up failed');
  // The client is always built for production: with NODE_ENV=development Vite would ship React's development runtime.
  if (spawnSync('npx', ['vite', 'build', '--logLevel', 'warn'], { cwd: root, env: { ...env, NODE_ENV: 'production' }, stdio: 'inherit' }).status !== 0) throw new Error('client build failed');
  if (await portInUse(port)) throw new Error(`Port ${port} is in use; set PORT to another port.`);
} catch (err) {
  console.error(`[start] ${err.message}`);
  stopDb();
  process.exit(1);
}

// One server process per core (node:cluster) unless SERVER_PROCESSES says otherwise; with the development
// mailbox on, the server keeps to one process (the mailbox lives in its memory).
const server = spawn(process.execPath, ['dist/server/index.js'], {
  cwd: root,
  env: { ...env, SERVER_PROCESSES: process.env.SERVER_PROCESSES ?? 'auto' },
  stdio: ['ignore', 'inherit', 'inherit'],
});
console.log(`
  Holdpoint is starting on http://127.0.0.1:${port}
  Demo sign-ins (password "holdpoint-demo"):
    admin@bramblecote.example        tenant admin
    authoriser@bramblecote.example   authoriser
    control@bramblecote.example      control room
    lead@oxbow-repair.example        contractor lead (Oxbow Line Repair)
    tech@oxbow-repair.example        isolation technician and gas tester
    auditor@bramblecote.example      auditor
    authoriser@harlowridge.example   authoriser, second tenant
${
  devMailbox === 'on' && env.NODE_ENV !== 'production'
    ? `  Development mailbox is ON (DEV_MAILBOX=on): mail is not sent but kept in memory. Sign in, then open
    http://127.0.0.1:${port}/dev/mail to read the mail sent to you (a tenant admin also sees their tenant's).
    DEV_MAILBOX=off turns it off; SMTP_URL then sends real mail.`
    : `  Development mailbox is off: ${process.env.SMTP_URL ? 'mail goes out through SMTP_URL' : 'no SMTP_URL either, so mail waits in the outbox'}.`
}
  Uploads: ${s3 ? `a local S3 store for the demo, files under .data/s3 (set S3_URL and S3_BUCKET for a real bucket)` : `the bucket ${env.S3_BUCKET ?? 'holdpoint'} at S3_URL`}.
  Ctrl-C stops the server and its database; 'npm run stop' stops a database left running.
`);
const finish = (code) => {
  stopDb();
  process.exit(code ?? 0);
};
for (const sig of ['SIGINT', 'SIGTERM']) process.on(sig, () => server.kill('SIGTERM'));
server.on('exit', (code) => finish(code));
