// `npm run bench -- profile [entry]`: one server process under `node --cpu-prof`, driven for a while on
// each signed-in read the issue names (who am I, the permit list's first page, the permit page), then
// the top five functions by self time over the whole load. The entry defaults to the compiled server
// (dist/server/index.js); a .ts entry (another checkout's server/src/index.ts, for a before/after) runs
// under tsx. Writes nothing but its profiles (bench/results/profiles, git-ignored).
//   PROFILE_SECONDS (10) per route, BENCH_CONNECTIONS (50).
import { generateKeyPairSync } from 'node:crypto';
import { spawn } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { createServer } from 'node:net';
import { join, resolve } from 'node:path';
import pg from 'pg';
import autocannon from 'autocannon';
import { SCALE_TENANT_SLUG } from '../scale/dataset';
import { sessionHeaders, signIn } from './session';
import { topSelfTime } from './profile-top';

/** Production needs a key to sign audit checkpoints; the bench signs nothing it keeps, so a throwaway key does. */
const benchSigningKey = () => generateKeyPairSync('ed25519').privateKey.export({ type: 'pkcs8', format: 'pem' }).toString();

const root = resolve(import.meta.dirname, '../..');
const entry = process.argv[2] ?? 'dist/server/index.js';
const seconds = Number(process.env.PROFILE_SECONDS ?? 10);
const connections = Number(process.env.BENCH_CONNECTIONS ?? 50);

async function freePort(): Promise<number> {
  return new Promise((ok, fail) => {
    const s = createServer();
    s.on('error', fail);
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as { port: number }).port;
      s.close(() => ok(port));
    });
  });
}

async function main() {
  const db = new pg.Client({ connectionString: process.env.DATABASE_OWNER_URL });
  await db.connect();
  const { rows } = await db.query<{ id: string }>(
    `SELECT p.id FROM permits p JOIN tenants t ON t.id = p.tenant_id WHERE t.slug = $1 ORDER BY md5(p.id::text) LIMIT 200`,
    [SCALE_TENANT_SLUG],
  );
  await db.end();
  const dir = join(root, 'bench', 'results', 'profiles', `profile-${new Date().toISOString().replace(/[:.]/g, '-')}`);
  mkdirSync(dir, { recursive: true });
  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  const child = spawn(process.execPath, [...(entry.endsWith('.ts') ? ['--import', 'tsx'] : []), '--cpu-prof', `--cpu-prof-dir=${dir}`, entry], {
    cwd: root,
    // Production refuses to start without a session secret, mail and storage; the profile sends no mail (WORKERS=off) and uploads nothing.
    env: { ...process.env, NODE_ENV: 'production', LOG_LEVEL: 'warn', WORKERS: 'off', SERVER_PROCESSES: '1', HOST: '127.0.0.1', PORT: String(port), PUBLIC_URL: base, SESSION_SECRET: process.env.SESSION_SECRET ?? 'bench-only-session-secret-0123456789', SMTP_URL: process.env.SMTP_URL ?? 'smtp://127.0.0.1:9', S3_URL: process.env.S3_URL ?? 'http://127.0.0.1:9', AUDIT_SIGNING_KEY: process.env.AUDIT_SIGNING_KEY ?? benchSigningKey() },
    stdio: ['ignore', 'ignore', 'inherit'],
  });
  for (const deadline = Date.now() + 90_000; ; await new Promise((r) => setTimeout(r, 200))) {
    if (await fetch(`${base}/api/health`).then((r) => r.ok, () => false)) break;
    if (Date.now() > deadline || child.exitCode !== null) throw new Error('the server did not start');
  }
  const control = await signIn(base, 'control@bramblecote.example');
  const authoriser = await signIn(base, 'authoriser@bramblecote.example');
  let i = 0;
  const runs = [
    { name: 'GET /api/auth/me', url: `${base}/api/auth/me`, headers: sessionHeaders(control) },
    { name: 'permits list, page 1', url: `${base}/api/permits?state=live,suspended,isolated,accepted&sort=validFrom&dir=desc&pageSize=25&page=1`, headers: sessionHeaders(authoriser) },
    {
      name: 'permit page', url: `${base}/api/permits/${rows[0].id}`, headers: sessionHeaders(authoriser),
      requests: [{ setupRequest: (req: Record<string, unknown>) => ({ ...req, path: `/api/permits/${rows[i++ % rows.length].id}` }) }],
    },
  ];
  console.log(`[profile] ${entry}, ${connections} connections, ${seconds} s per route`);
  for (const r of runs) {
    const result = await autocannon({ url: r.url, connections, duration: seconds, headers: r.headers, requests: r.requests as never });
    console.log(`  ${r.name.padEnd(24)} ${result.requests.average.toFixed(0).padStart(6)} req/s  p50 ${result.latency.p50} ms  p99 ${result.latency.p99} ms  non-2xx ${result.non2xx}`);
  }
  await new Promise<void>((ok) => {
    child.once('exit', () => ok());
    child.kill('SIGTERM');
  });
  const { total, top } = topSelfTime(dir);
  console.log(`[profile] ${(total / 1000).toFixed(1)} s of CPU busy in the server; top five by self time:`);
  for (const [n, e] of top.entries()) console.log(`  ${n + 1}. ${(e.share * 100).toFixed(1).padStart(5)} %  ${e.name}  ${e.where}`);
  console.log(`[profile] profiles in ${dir.slice(root.length + 1)}`);
}

main().catch((err) => {
  console.error(`[profile] failed: ${(err as Error).stack ?? err}`);
  process.exit(1);
});
