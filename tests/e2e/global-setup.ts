import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
// @ts-expect-error plain ESM helpers shared with the npm scripts
import { startTestDatabase } from '../../scripts/lib/test-db.mjs';
// @ts-expect-error plain ESM helpers shared with the npm scripts
import { freePort, withCredentials } from '../../scripts/lib/pg.mjs';

/**
 * Starts a throwaway database (migrated and seeded with the demo), builds the client when it is
 * missing, and runs the real server on a free loopback port with the in-process mail catcher.
 */
export default async function globalSetup() {
  const root = fileURLToPath(new URL('../..', import.meta.url));
  const db = await startTestDatabase(root);
  const admin = new pg.Client({ connectionString: db.adminUrl });
  await admin.connect();
  await admin.query('CREATE DATABASE holdpoint_e2e TEMPLATE holdpoint_template');
  await admin.end();
  if (!existsSync(join(root, 'dist/client/index.html'))) {
    const b = spawnSync('npx', ['vite', 'build', '--logLevel', 'warn'], { cwd: root, stdio: 'inherit' });
    if (b.status !== 0) throw new Error('client build failed');
  }
  const port = await freePort();
  const dataDir = mkdtempSync(join(tmpdir(), 'holdpoint-e2e-'));
  const databaseUrl = db.adminUrl.replace(/\/postgres$/, '/holdpoint_e2e');
  const server: ChildProcess = spawn(process.execPath, ['--import', 'tsx', 'server/src/index.ts'], {
    cwd: root,
    // The server logs in as the app role (bound by row-level security), as it does in npm start.
    env: { ...process.env, NODE_ENV: 'development', PORT: String(port), DATABASE_URL: withCredentials(databaseUrl, db.appRole), DATABASE_OWNER_URL: databaseUrl, DATA_DIR: dataDir, DEV_MAILBOX: 'on', LOG_LEVEL: 'warn',
      // Every browser test signs in from 127.0.0.1: the per-address limit is for a site, not a test run.
      SIGN_IN_LIMIT_PER_IP: '10000', PUBLIC_URL: `http://127.0.0.1:${port}` },
    stdio: ['ignore', 'inherit', 'inherit'],
  });
  const base = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 60_000;
  for (;;) {
    try {
      const r = await fetch(`${base}/api/health`);
      if (r.ok) break;
    } catch {
      /* not up yet */
    }
    if (Date.now() > deadline || server.exitCode !== null) throw new Error('the server did not start');
    await new Promise((r) => setTimeout(r, 200));
  }
  process.env.E2E_BASE_URL = base;
  process.env.E2E_DATABASE_URL = databaseUrl;
  return async () => {
    server.kill('SIGTERM');
    await new Promise((r) => setTimeout(r, 300));
    db.stop();
    rmSync(dataDir, { recursive: true, force: true });
  };
}
