// Finding H1: the primary that runs one server process per core starts a process that ended again,
// ever more slowly while it keeps failing, and says each time how long it waits.
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
// @ts-expect-error plain ESM helper shared with the npm scripts
import { freePort, withCredentials } from '../../scripts/lib/pg.mjs';
import { buildServerOnce } from '../fixtures/server-process';
import { createTestDatabase } from '../fixtures/test-server';

const root = fileURLToPath(new URL('../..', import.meta.url));
/** Restarts watched per server process: the waits before them are 0.5 s, 1 s and 2 s. */
const RESTARTS = 3;

interface Restart {
  index: number;
  delayMs: number | undefined;
  at: number;
}

let build: Awaited<ReturnType<typeof buildServerOnce>>;
let db: Awaited<ReturnType<typeof createTestDatabase>>;
let port: number;

beforeAll(async () => {
  [build, db, port] = await Promise.all([buildServerOnce(), createTestDatabase(), freePort()]);
}, 120_000);

afterAll(async () => {
  build?.remove();
  await db?.drop();
});

/** Runs the primary with two server processes until each has been restarted `count` times; answers the restarts it logged. */
async function restartsOfPrimary(count: number): Promise<Restart[]> {
  const dataDir = mkdtempSync(join(tmpdir(), 'holdpoint-restarts-'));
  const { SMTP_URL: _smtp, DEV_MAILBOX: _mailbox, NODE_ENV: _mode, ...inherited } = process.env;
  // The primary is the real one; each server process it forks ends at once (the flag is inherited).
  const child = spawn(process.execPath, ['--import', join(root, 'tests/fixtures/worker-exits-at-once.mjs'), join(build.dir, 'index.js')], {
    cwd: root,
    env: {
      ...inherited, NODE_ENV: 'test', PORT: String(port), HOST: '127.0.0.1', SERVER_PROCESSES: '2', LOG_LEVEL: 'warn', WORKERS: 'off',
      DATABASE_URL: withCredentials(db.url, inject('dbAppRole')), DATABASE_OWNER_URL: db.url,
      DATA_DIR: dataDir, SESSION_SECRET: 'test-session-secret-0123456789', PUBLIC_URL: `http://127.0.0.1:${port}`, CLIENT_DIST: join(dataDir, 'no-client'),
    },
    stdio: ['ignore', 'pipe', 'ignore'],
  });
  const restarts: Restart[] = [];
  let rest = '';
  child.stdout!.setEncoding('utf8').on('data', (chunk: string) => {
    const lines = (rest + chunk).split('\n');
    rest = lines.pop() ?? '';
    for (const line of lines) {
      let entry: { msg?: string; index?: number; delayMs?: number; time?: number };
      try {
        entry = JSON.parse(line);
      } catch {
        continue;
      }
      if (entry.msg?.startsWith('a server process ended')) restarts.push({ index: entry.index!, delayMs: entry.delayMs, at: entry.time! });
    }
  });
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  try {
    const enough = () => [0, 1].every((index) => restarts.filter((r) => r.index === index).length >= count);
    for (const deadline = Date.now() + 60_000; !enough(); await new Promise((r) => setTimeout(r, 50))) {
      if (Date.now() > deadline || child.exitCode !== null) throw new Error(`the primary did not restart its server processes ${count} times`);
    }
  } finally {
    child.kill('SIGTERM');
    const killed = setTimeout(() => child.kill('SIGKILL'), 5_000);
    await exited;
    clearTimeout(killed);
    rmSync(dataDir, { recursive: true, force: true });
  }
  return restarts;
}

describe('finding H1: restarts back off', () => {
  it('finding H1: when every server process fails as it starts, then the primary restarts each ever more slowly (0.5 s, 1 s, 2 s …) and logs each restart once with its delay', async () => {
    const restarts = await restartsOfPrimary(RESTARTS);
    const report: Record<number, { delays: (number | undefined)[]; gapsMs: number[] }> = {};
    for (const index of [0, 1]) {
      const mine = restarts.filter((r) => r.index === index).slice(0, RESTARTS);
      report[index] = { delays: mine.map((r) => r.delayMs), gapsMs: mine.slice(1).map((r, i) => r.at - mine[i].at) };
    }
    console.log(`restarts per server process: ${JSON.stringify(report)}`);
    for (const index of [0, 1]) {
      const { delays, gapsMs } = report[index];
      // Before, a process was started again 0.5 s after every ending, for ever, and the log did not say when.
      expect(delays).toEqual([500, 1_000, 2_000]);
      // Between two endings lies at least the wait logged at the first of them: the restarts come further apart.
      gapsMs.forEach((gap, i) => expect(gap).toBeGreaterThanOrEqual(delays[i]!));
    }
  }, 90_000);
});
