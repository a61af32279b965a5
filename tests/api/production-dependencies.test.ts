// Finding 8: the production server loads production's packages only. The real entry (server/src/index.ts)
// runs as its own process, as `npm start` runs it, with a probe that lists the packages it loaded.
import { generateKeyPairSync } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { inject } from 'vitest';
import { createTestDatabase, s3Env } from '../fixtures/test-server';
// @ts-expect-error plain ESM helper shared with the npm scripts
import { freePort, withCredentials } from '../../scripts/lib/pg.mjs';

const root = fileURLToPath(new URL('../..', import.meta.url));
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const packageOf = (file: string) => /\/node_modules\/((?:@[^/]+\/)?[^/]+)\//.exec(file)?.[1] ?? null;

let db: Awaited<ReturnType<typeof createTestDatabase>>;
let dir: string;

beforeAll(async () => {
  db = await createTestDatabase();
  dir = mkdtempSync(join(tmpdir(), 'holdpoint-packages-'));
});
afterAll(async () => {
  await db?.drop();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

/** Starts the server process, waits for its health answer, runs `check`, stops it and returns the packages it loaded. */
async function packagesLoadedBy(name: string, env: Record<string, string>, check: (baseUrl: string) => Promise<void>) {
  const port = await freePort();
  const out = join(dir, `${name}.json`);
  // Only what each case sets decides about mail and mode.
  const { SMTP_URL: _smtp, DEV_MAILBOX: _mailbox, NODE_ENV: _mode, ...inherited } = process.env;
  const child = spawn(process.execPath, ['--import', 'tsx', '--import', './tests/fixtures/loaded-packages-probe.mjs', 'server/src/index.ts'], {
    cwd: root,
    env: {
      ...inherited, PORT: String(port), DATABASE_URL: withCredentials(db.url, inject('dbAppRole')), DATABASE_OWNER_URL: db.url, DATA_DIR: join(dir, name),
      SESSION_SECRET: 'test-session-secret-0123456789', WORKERS: 'off', LOG_LEVEL: 'error', PUBLIC_URL: `http://127.0.0.1:${port}`,
      LOADED_FILES_OUT: out, ...env,
    },
    stdio: ['ignore', 'inherit', 'inherit'],
  });
  const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
  try {
    const baseUrl = `http://127.0.0.1:${port}`;
    for (const deadline = Date.now() + 30_000; ; await sleep(150)) {
      if (await fetch(`${baseUrl}/api/health`).then((r) => r.ok, () => false)) break;
      if (Date.now() > deadline || child.exitCode !== null) throw new Error('the server process did not start');
    }
    await check(baseUrl);
  } finally {
    child.kill('SIGTERM');
  }
  expect(await exited, 'the server stops cleanly on SIGTERM').toBe(0);
  const files = JSON.parse(readFileSync(out, 'utf8')) as string[];
  return new Set(files.map(packageOf).filter((p): p is string => p !== null));
}

/** What production refuses to start without (issue 20): a mail server (none listens here; the mail loop is off) and the bucket. */
// Production refuses to start without its signing key for the audit checkpoints: a throwaway one per case.
const productionNeeds = () => ({ SMTP_URL: 'smtp://127.0.0.1:9', ...s3Env(), AUDIT_SIGNING_KEY: generateKeyPairSync('ed25519').privateKey.export({ type: 'pkcs8', format: 'pem' }).toString() });

describe('finding 8: production dependencies are production’s', () => {
  it('when the production server starts and answers, then the development mail catcher (smtp-tester) is not loaded', async () => {
    const loaded = await packagesLoadedBy('production', { NODE_ENV: 'production', ...productionNeeds() }, async (baseUrl) => {
      expect(await (await fetch(`${baseUrl}/api/meta`)).json(), 'it runs as production').toMatchObject({ demo: false });
      expect((await fetch(`${baseUrl}/dev/mail`)).status, 'no development mailbox in production').not.toBe(401);
    });
    console.log(`[packages] the production server loaded ${loaded.size} packages through the CommonJS loader, none of them smtp-tester`);
    expect(loaded.has('express'), 'the probe sees the packages the server loads').toBe(true);
    expect(loaded.has('smtp-tester')).toBe(false);
    expect(loaded.has('smtp-server')).toBe(false);
  }, 60_000);

  it('when a production server is started with DEV_MAILBOX=on, then the setting is ignored and smtp-tester is still not loaded', async () => {
    const loaded = await packagesLoadedBy('production-mailbox-on', { NODE_ENV: 'production', DEV_MAILBOX: 'on', ...productionNeeds() }, async (baseUrl) => {
      expect((await fetch(`${baseUrl}/dev/mail`)).status, 'no development mailbox in production').not.toBe(401);
    });
    expect(loaded.has('smtp-tester')).toBe(false);
  }, 60_000);

  it('when a development server has DEV_MAILBOX=on, then it loads the mail catcher on demand and serves /dev/mail', async () => {
    const loaded = await packagesLoadedBy('development', { NODE_ENV: 'development', DEV_MAILBOX: 'on' }, async (baseUrl) => {
      expect((await fetch(`${baseUrl}/dev/mail`)).status, 'the mailbox asks to sign in').toBe(401);
    });
    expect(loaded.has('smtp-tester')).toBe(true);
  }, 60_000);
});
