// `npm run bench` (through scripts/bench.mjs): the production server on the scale database, driven
// on loopback by autocannon, next to the floor (bench/floor-server.mjs). Prints every figure with its
// target and PASS/FAIL and writes the run to bench/results/ (git-ignored).
//   BENCH_SECONDS (10), BENCH_CONNECTIONS (50), BENCH_SSE_CLIENTS (200) tune a run.
import { generateKeyPairSync } from 'node:crypto';
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { createServer } from 'node:net';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import autocannon, { type AutocannonRequest } from 'autocannon';
import { loadFixtures, type Fixtures } from './fixtures';
import { call, sessionHeaders, signIn } from './session';
import { sseFanOut } from './sse';
import { measureBoardPaint, measureSlowLinkVisits } from './browser';
import { judge, percentile, printFigure, printLoad, skipped, type Figure, type LoadResult } from './report';

/** Production needs a key to sign audit checkpoints; the bench signs nothing it keeps, so a throwaway key does. */
const benchSigningKey = () => generateKeyPairSync('ed25519').privateKey.export({ type: 'pkcs8', format: 'pem' }).toString();

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
// The server logs in as the app role; the bench's own set-up and the floor use the owner's login.
const databaseUrl = process.env.DATABASE_URL;
const ownerUrl = process.env.DATABASE_OWNER_URL ?? databaseUrl;
const seconds = Number(process.env.BENCH_SECONDS ?? 10);
// Runs that query the whole board on every request (the floor, the cache switched off) get longer,
// so that a loaded machine still completes enough of them to count.
const slowSeconds = Number(process.env.BENCH_SLOW_SECONDS ?? 30);
const connections = Number(process.env.BENCH_CONNECTIONS ?? 50);
const sseClients = Number(process.env.BENCH_SSE_CLIENTS ?? 200);
const counts = { submits: 2_000, approvals: 300, gasTests: 1_000 };

const users = {
  control: 'control@bramblecote.example',
  lead: 'lead@oxbow-repair.example',
  authoriser: 'authoriser@bramblecote.example',
  authoriserName: 'Priya Castellan',
  tech: 'tech@oxbow-repair.example',
};

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

async function waitFor(url: string, child: ChildProcess, what: string) {
  const deadline = Date.now() + 90_000;
  for (;;) {
    try {
      if ((await fetch(url)).ok) return;
    } catch {
      /* not up yet */
    }
    if (child.exitCode !== null) throw new Error(`${what} exited with ${child.exitCode}`);
    if (Date.now() > deadline) throw new Error(`${what} did not start`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

interface Running {
  base: string;
  child: ChildProcess;
  stop: () => Promise<void>;
}

function stopper(child: ChildProcess) {
  return () =>
    new Promise<void>((ok) => {
      if (child.exitCode !== null) return ok();
      const timer = setTimeout(() => child.kill('SIGKILL'), 5_000);
      child.once('exit', () => {
        clearTimeout(timer);
        ok();
      });
      child.kill('SIGTERM');
    });
}

// BENCH_PROCESSES: the server's processes (SERVER_PROCESSES: "auto" is one per core, as `npm start`).
const processes = process.env.BENCH_PROCESSES ?? 'auto';
// BENCH_CPU_PROF=on: every server process writes a V8 CPU profile (node --cpu-prof) into bench/results/profiles.
const cpuProfDir = process.env.BENCH_CPU_PROF === 'on' ? join(root, 'bench', 'results', 'profiles', new Date().toISOString().replace(/[:.]/g, '-')) : null;

/** The real server, as in production: compiled (dist/server, plain node), built client, NODE_ENV=production, warnings only, no background workers. */
async function startServer(extra: Record<string, string> = {}): Promise<Running> {
  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  const child = spawn(process.execPath, [...(cpuProfDir ? ['--cpu-prof', `--cpu-prof-dir=${cpuProfDir}`] : []), 'dist/server/index.js'], {
    cwd: root,
    env: {
      ...process.env, NODE_ENV: 'production', LOG_LEVEL: 'warn', WORKERS: 'off', SERVER_PROCESSES: processes, HOST: '127.0.0.1', PORT: String(port), PUBLIC_URL: base,
      DATABASE_URL: databaseUrl, DATABASE_OWNER_URL: ownerUrl,
      // Production refuses to start without a session secret, mail and storage; the bench sends no mail (WORKERS=off) and uploads nothing.
      SESSION_SECRET: process.env.SESSION_SECRET ?? 'bench-only-session-secret-0123456789', SMTP_URL: process.env.SMTP_URL ?? 'smtp://127.0.0.1:9', S3_URL: process.env.S3_URL ?? 'http://127.0.0.1:9', AUDIT_SIGNING_KEY: process.env.AUDIT_SIGNING_KEY ?? benchSigningKey(),
      ...extra,
    },
    stdio: ['ignore', 'ignore', 'inherit'],
  });
  await waitFor(`${base}/api/health`, child, 'the server');
  return { base, child, stop: stopper(child) };
}

async function startFloor(tenantId: string): Promise<Running> {
  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  const child = spawn(process.execPath, ['bench/floor-server.mjs'], {
    cwd: root,
    env: { ...process.env, DATABASE_URL: ownerUrl, TENANT_ID: tenantId, PORT: String(port) },
    stdio: ['ignore', 'ignore', 'inherit'],
  });
  await waitFor(`${base}/board?pipelineId=00000000-0000-4000-8000-000000000000`, child, 'the floor');
  return { base, child, stop: stopper(child) };
}

async function startFloors(): Promise<Running> {
  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  const child = spawn(process.execPath, ['bench/floors.mjs'], { cwd: root, env: { ...process.env, DATABASE_URL: ownerUrl, PORT: String(port) }, stdio: ['ignore', 'ignore', 'inherit'] });
  await waitFor(`${base}/select1`, child, 'the floors');
  return { base, child, stop: stopper(child) };
}

/** The process and its children (the cluster's server processes). */
function processTree(pid: number): number[] {
  try {
    const children = readFileSync(`/proc/${pid}/task/${pid}/children`, 'utf8').trim().split(/\s+/).filter(Boolean).map(Number);
    return [pid, ...children.flatMap(processTree)];
  } catch {
    return [pid];
  }
}

const rssOf = (pid: number) => {
  try {
    return Number(/VmRSS:\s+(\d+)/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'))?.[1] ?? 0) / 1024;
  } catch {
    return 0;
  }
};

/**
 * Peak and last resident memory of the server, read from /proc every 250 ms: of its largest process
 * (the target is per process), with the cluster's primary and each server process listed at the end.
 */
function rssWatch(pid: number) {
  let peak = 0;
  let window = 0;
  let last = 0;
  const read = () => {
    last = Math.max(0, ...processTree(pid).map(rssOf));
    peak = Math.max(peak, last);
    window = Math.max(window, last);
  };
  const timer = setInterval(read, 250);
  read();
  return {
    peak: () => peak,
    last: () => last,
    /** The peak since the last reset (one run). */
    windowPeak: () => (read(), window),
    reset: () => (window = last),
    /** Every process now: pid and MB. */
    each: () => processTree(pid).map((p) => ({ pid: p, mb: rssOf(p) })),
    stop: () => clearInterval(timer),
  };
}

interface LoadSpec {
  name: string;
  base: string;
  path: string;
  headers?: Record<string, string>;
  /** Varies each request (path, body); then `amount` requests are sent instead of running for `seconds`. */
  next?: () => { method: string; path: string; body?: string };
  amount?: number;
  seconds?: number;
  warm?: boolean;
}

/** The server's resident memory, for the peak of each run (set while the product runs). */
let memory: ReturnType<typeof rssWatch> | null = null;

async function load(spec: LoadSpec): Promise<LoadResult> {
  const requests: AutocannonRequest[] | undefined = spec.next
    ? [{ setupRequest: (req) => ({ ...req, ...spec.next!() }) }]
    : undefined;
  if (spec.warm !== false && !spec.amount) await autocannon({ url: spec.base + spec.path, connections: 10, duration: 2, headers: spec.headers, requests });
  const times: number[] = [];
  const codes: Record<string, number> = {};
  let bytes = 0;
  const started = Date.now();
  const run = autocannon({
    url: spec.base + spec.path,
    connections: spec.amount ? Math.min(connections, spec.amount) : connections,
    ...(spec.amount ? { amount: spec.amount } : { duration: spec.seconds ?? seconds }),
    timeout: 30,
    headers: spec.headers,
    requests,
  });
  const guard = setTimeout(() => run.stop(), 180_000);
  run.on('response', (_client: unknown, status: number, resBytes: number, ms: number) => {
    codes[status] = (codes[status] ?? 0) + 1;
    if (status < 300) {
      times.push(ms);
      bytes += resBytes;
    }
  });
  memory?.reset();
  const r = await run;
  clearTimeout(guard);
  const elapsed = (Date.now() - started) / 1000;
  return {
    name: spec.name, path: spec.path, connections: spec.amount ? Math.min(connections, spec.amount) : connections, requests: times.length, seconds: elapsed,
    rps: times.length / elapsed, p50: percentile(times, 50), p95: percentile(times, 95), p99: percentile(times, 99), max: times.reduce((m, t) => (t > m ? t : m), -Infinity),
    non2xx: r.non2xx, errors: r.errors + r.timeouts, bytesPerResponse: times.length ? bytes / times.length : 0, statusCodes: codes,
    rssPeakMb: memory ? memory.windowPeak() : null,
  };
}

function cycle<T>(items: T[]) {
  let i = 0;
  return () => items[i++ % items.length];
}

function take<T>(items: T[], what: string) {
  let i = 0;
  return () => {
    if (i >= items.length) throw new Error(`ran out of ${what}`);
    return items[i++];
  };
}

async function main() {
  if (!databaseUrl) throw new Error('DATABASE_URL is not set (run through `npm run bench`).');
  const startedAt = new Date();
  const loadAtStart = loadavg();
  console.log(`[bench] ${cpus().length} cores, load average ${loadAtStart.map((l) => l.toFixed(1)).join(' ')}; ${connections} connections, ${seconds} s per run`);

  const db = new pg.Client({ connectionString: ownerUrl });
  await db.connect();
  console.log('[bench] preparing permits for the transition loops');
  const fx: Fixtures = await loadFixtures(db, { drafts: counts.submits + 2 * connections, requested: counts.approvals + 2 * connections });
  const dataset = (await db.query(
    `SELECT (SELECT count(*) FROM permits WHERE tenant_id = $1)::int AS permits, (SELECT count(*) FROM gas_tests WHERE tenant_id = $1)::int AS gas_readings,
            (SELECT count(*) FROM audit_events WHERE tenant_id = $1)::int AS audit_events, pg_size_pretty(pg_database_size(current_database())) AS database_size`,
    [fx.tenantId],
  )).rows[0] as Record<string, unknown>;
  console.log(`[bench] dataset: ${fx.liveSteps} isolations in place (${fx.pipelineSteps} on the busiest pipeline), ${JSON.stringify(dataset)}`);

  const loads: LoadResult[] = [];
  const figures: Figure[] = [];
  const run = async (spec: LoadSpec, target?: number) => {
    const r = await load(spec);
    loads.push(r);
    printLoad(r);
    if (target !== undefined) figures.push(judge(`${r.name}: p95`, r.non2xx || r.errors ? null : r.p95, 'ms', { op: '<', value: target }, r.non2xx || r.errors ? 'requests failed' : undefined));
    return r;
  };

  // ---- The floors of this machine: bare node:http, and one SELECT 1 through a pg pool ------------
  const floors = await startFloors();
  console.log('\n[bench] floors: bare node:http; the same with one SELECT 1 through a pg pool');
  const bareHttp = await run({ name: 'floor: bare node:http', base: floors.base, path: '/bare' });
  const select1 = await run({ name: 'floor: SELECT 1 through a pg pool', base: floors.base, path: '/select1' });
  await floors.stop();

  // ---- The board floor ----------------------------------------------------------------------------
  const floor = await startFloor(fx.tenantId);
  console.log('\n[bench] floor: bare Express + pg, the best hand-written board query, no auth');
  // The small board first: requests still running after a full-board run would hold the pool.
  const floorPipe = await run({ name: 'floor: board, one pipeline', base: floor.base, path: `/board?pipelineId=${fx.pipelineId}` });
  const floorFull = await run({ name: 'floor: board, full tenant', base: floor.base, path: '/board', seconds: slowSeconds });
  await floor.stop();

  // ---- The product -------------------------------------------------------------------------------
  const server = await startServer();
  const rss = rssWatch(server.child.pid!);
  memory = rss;
  const rssIdle = rss.last();
  const control = await signIn(server.base, users.control);
  const lead = await signIn(server.base, users.lead);
  const authoriser = await signIn(server.base, users.authoriser);
  const tech = await signIn(server.base, users.tech);
  const gz = { 'accept-encoding': 'gzip' };
  const startEach = rss.each();
  console.log(`\n[bench] Holdpoint (compiled, plain node, SERVER_PROCESSES=${processes}: ${Math.max(1, startEach.length - 1)} server process(es), NODE_ENV=production, LOG_LEVEL=warn, WORKERS=off), RSS at start ${startEach.map((p) => `${p.mb.toFixed(0)} MB`).join(' + ')}`);
  const health = await run({ name: 'health (no session)', base: server.base, path: '/api/health' });
  const me = await run({ name: 'signed in: GET /api/auth/me', base: server.base, path: '/api/auth/me', headers: sessionHeaders(control) });
  const boardFull = await run({ name: `board, full tenant (${fx.liveSteps} rows, gzip)`, base: server.base, path: '/api/board', headers: sessionHeaders(control, gz) }, 150);
  const boardPipe = await run({ name: 'board, one pipeline', base: server.base, path: `/api/board?pipelineId=${fx.pipelineId}`, headers: sessionHeaders(control, gz) }, 60);
  const listQuery = 'state=live,suspended,isolated,accepted&sort=validFrom&dir=desc&pageSize=25';
  const list = await run({ name: 'permits list, filtered + sorted, page 1', base: server.base, path: `/api/permits?${listQuery}&page=1`, headers: sessionHeaders(authoriser) }, 60);
  await run({ name: 'permits list, closed, page 2000', base: server.base, path: '/api/permits?state=closed&sort=validFrom&dir=desc&pageSize=25&page=2000', headers: sessionHeaders(authoriser) }, 60);
  const pages = cycle(fx.pagePermitIds);
  const page = await run({ name: 'permit page', base: server.base, path: '/api/permits/', headers: sessionHeaders(authoriser), next: () => ({ method: 'GET', path: `/api/permits/${pages()}` }) }, 60);
  const ratio = (r: LoadResult, floorRun: LoadResult, target: number) =>
    figures.push(judge(`${r.name} / SELECT 1 floor: throughput`, r.rps / floorRun.rps, 'ratio', { op: '>=', value: target }, `${r.rps.toFixed(0)} vs ${floorRun.rps.toFixed(0)} req/s; ${(r.rps / bareHttp.rps).toFixed(3)} of bare node:http`));
  ratio(me, select1, 0.25);
  ratio(page, select1, 0.12);
  ratio(list, select1, 0.12);
  figures.push(judge('health / SELECT 1 floor: throughput', health.rps / select1.rps, 'ratio', undefined, `${health.rps.toFixed(0)} req/s`));

  const drafts = take(fx.drafts, 'draft permits');
  const submit = await run({
    name: 'transition: send for approval', base: server.base, path: '/api/permits', headers: sessionHeaders(lead), amount: counts.submits,
    next: () => ({ method: 'POST', path: `/api/permits/${drafts()}/transitions`, body: JSON.stringify({ event: 'submit', version: 1 }) }),
  });
  figures.push(judge('transition (send for approval): p95', submit.non2xx || submit.errors ? null : submit.p95, 'ms', { op: '<', value: 150 }, `${submit.rps.toFixed(0)} req/s`));
  const requested = take(fx.requested, 'requested permits');
  const approve = await run({
    name: 'transition: approve (signed: password check)', base: server.base, path: '/api/permits', headers: sessionHeaders(authoriser), amount: counts.approvals,
    next: () => ({
      method: 'POST', path: `/api/permits/${requested()}/transitions`,
      body: JSON.stringify({ event: 'approve', version: 2, signedName: users.authoriserName, password: 'holdpoint-demo' }),
    }),
  });
  figures.push(judge('transition (approve, signed): p95', approve.non2xx || approve.errors ? null : approve.p95, 'ms', undefined, `${approve.rps.toFixed(0)} req/s; the Argon2 password check is most of it, so no target`));

  const gasProbe = fx.gasPermitIds.length && fx.instrumentId ? await call(server.base, tech, 'POST', `/api/permits/${fx.gasPermitIds[0]}/gas-tests`, {}) : { status: 404, body: null };
  const gasBuilt = gasProbe.status === 400;
  if (!gasBuilt) {
    console.log('  SKIPPED: gas test entry not built (POST /api/permits/:id/gas-tests does not answer a bad body with 400)');
    figures.push(skipped('gas test entry: p95', 'not built'));
  } else {
    const gasPermits = cycle(fx.gasPermitIds);
    const gas = await run({
      name: 'gas test entry', base: server.base, path: '/api/permits', headers: sessionHeaders(tech), amount: counts.gasTests,
      next: () => ({
        method: 'POST', path: `/api/permits/${gasPermits()}/gas-tests`,
        body: JSON.stringify({ instrumentId: fx.instrumentId, place: 'work_area', testedAt: new Date().toISOString(), readings: { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 0 } }),
      }),
    });
    figures.push(judge('gas test entry: p95', gas.non2xx || gas.errors ? null : gas.p95, 'ms', undefined, `${gas.rps.toFixed(0)} req/s; no target set`));
  }

  figures.push(judge('board (as served) / floor, full tenant: throughput', boardFull.rps / floorFull.rps, 'ratio', { op: '>=', value: 0.6 }, `${boardFull.rps.toFixed(0)} vs ${floorFull.rps.toFixed(0)} req/s`));
  figures.push(judge('board (as served) / floor, one pipeline: throughput', boardPipe.rps / floorPipe.rps, 'ratio', { op: '>=', value: 0.6 }, `${boardPipe.rps.toFixed(0)} vs ${floorPipe.rps.toFixed(0)} req/s`));

  // ---- Live updates ------------------------------------------------------------------------------
  console.log(`\n[bench] ${sseClients} board streams, one isolation change at a time`);
  const fan = await sseFanOut(server.base, control, sseClients, Math.min(5, fx.ackSteps.length), (round) => fx.ackSteps[round].stepId, async (round) => {
    const { permitId, stepId } = fx.ackSteps[round];
    const res = await call(server.base, control, 'POST', `/api/permits/${permitId}/isolations/${stepId}/acknowledge`, { what: 'applied' });
    if (res.status !== 200) throw new Error(`acknowledging an isolation failed: ${res.status} ${JSON.stringify(res.body)}`);
  });
  const worst = fan.allHeardMs.some((v) => v === null) ? null : Math.max(...(fan.allHeardMs as number[]));
  console.log(`  ${fan.connected}/${fan.clients} streams connected; per round, until the last screen had it: ${fan.allHeardMs.map((v) => (v === null ? 'missed' : `${v.toFixed(0)} ms`)).join(', ')}`);
  figures.push(judge(`SSE fan-out to ${sseClients} screens: p95 delay`, fan.connected === fan.clients && !fan.missed ? percentile(fan.delays, 95) : null, 'ms', { op: '<', value: 1_000 }, `${fan.connected} connected, ${fan.missed} missed`));
  figures.push(judge(`SSE fan-out: until all ${sseClients} have it (worst round)`, worst, 'ms', undefined));
  const rssPeak = rss.peak();
  const endEach = rss.each();
  figures.push(judge('server RSS per process after the whole bench', Math.max(...endEach.map((p) => p.mb)), 'MB', { op: '<', value: 200 }, `each process now: ${endEach.map((p) => `${p.mb.toFixed(0)} MB`).join(', ')} (the first is the cluster's primary when there is one)`));
  figures.push(judge('server RSS per process, peak during the run', rssPeak, 'MB', undefined, `${rssIdle.toFixed(0)} MB at start`));

  // ---- The browser -------------------------------------------------------------------------------
  const { paint, slowLink } = await browserFigures(server.base, figures);
  rss.stop();
  memory = null;
  await server.stop();

  // ---- The board without its snapshot cache: the ORM, session and tenant-transaction cost --------
  const bare = await startServer({ BOARD_CACHE: 'off' });
  const control2 = await signIn(bare.base, users.control);
  console.log('\n[bench] Holdpoint with BOARD_CACHE=off (every request runs the board query)');
  const rawPipe = await run({ name: 'board, one pipeline, cache off', base: bare.base, path: `/api/board?pipelineId=${fx.pipelineId}`, headers: sessionHeaders(control2) });
  const rawFull = await run({ name: 'board, full tenant, cache off', base: bare.base, path: '/api/board', headers: sessionHeaders(control2), seconds: slowSeconds });
  await bare.stop();
  figures.push(judge('board (cache off) / floor, full tenant: throughput', rawFull.rps / floorFull.rps, 'ratio', { op: '>=', value: 0.6 }, `${rawFull.rps.toFixed(0)} vs ${floorFull.rps.toFixed(0)} req/s`));
  figures.push(judge('board (cache off) / floor, one pipeline: throughput', rawPipe.rps / floorPipe.rps, 'ratio', { op: '>=', value: 0.6 }, `${rawPipe.rps.toFixed(0)} vs ${floorPipe.rps.toFixed(0)} req/s`));
  await db.end();

  const loadAtEnd = loadavg();
  console.log(`\n[bench] figures (load average at the end ${loadAtEnd.map((l) => l.toFixed(1)).join(' ')}):`);
  for (const f of figures) printFigure(f);
  const failed = figures.filter((f) => f.verdict === 'FAIL').length;
  const passed = figures.filter((f) => f.verdict === 'PASS').length;
  console.log(`\n[bench] ${passed} PASS, ${failed} FAIL`);

  const dir = join(root, 'bench', 'results');
  mkdirSync(dir, { recursive: true });
  const file = join(dir, `bench-${startedAt.toISOString().replace(/[:.]/g, '-')}.json`);
  writeFileSync(
    file,
    `${JSON.stringify({ startedAt, machine: { cores: cpus().length, node: process.version, loadAtStart, loadAtEnd }, settings: { connections, seconds, sseClients, counts }, dataset: { ...dataset, liveIsolations: fx.liveSteps, busiestPipelineIsolations: fx.pipelineSteps }, loads, sse: fan, browser: paint, slowLink, figures }, null, 2)}\n`,
  );
  console.log(`[bench] written to ${file.slice(root.length + 1)}`);
  writeDocsTable({ startedAt, loadAtStart, loadAtEnd, loads, figures, floors: { bare: bareHttp, select1 } });
  if (cpuProfDir) console.log(`[bench] CPU profiles in ${cpuProfDir.slice(root.length + 1)}: \`node --import tsx scripts/bench/profile-top.ts ${cpuProfDir.slice(root.length + 1)}\` lists the top five by self time`);
  process.exitCode = failed ? 1 : 0;
}

/** The browser's figures (Chromium): the board's first rows, and issue 18's first and repeat visit on a slow link. */
async function browserFigures(base: string, figures: Figure[]) {
  console.log('\n[bench] browser: navigation to the first rows of the live board (Chromium)');
  let paint: Awaited<ReturnType<typeof measureBoardPaint>> | { error: string };
  try {
    paint = await measureBoardPaint(base, users.control);
  } catch (err) {
    paint = { error: (err as Error).message.split('\n')[0] };
  }
  if ('skipped' in paint) figures.push(skipped('browser: navigation to the board\'s first rows', paint.skipped));
  else if ('error' in paint) figures.push(judge('browser: navigation to the board\'s first rows', null, 'ms', { op: '<', value: 2_500 }, paint.error));
  else {
    const virtualised = paint.total === null || paint.rowsInDom < Math.min(paint.total, 1_000);
    console.log(`  first visit ${paint.coldMs} ms, second ${paint.warmMs} ms; ${paint.rowsInDom} rows in the DOM of ${paint.total ?? '?'}${virtualised ? '' : ' (NOT virtualised)'}`);
    figures.push(judge('browser: navigation to the board\'s first rows', paint.coldMs, 'ms', { op: '<', value: 2_500 }, `second visit ${paint.warmMs} ms; 2.5 s is the "good" largest-contentful-paint line of web.dev's Core Web Vitals`));
    figures.push(judge('browser: board rows in the DOM (virtualised?)', paint.rowsInDom, 'rows', undefined, virtualised ? 'virtualised' : `NOT virtualised: all ${paint.total} rows rendered`));
  }

  console.log('\n[bench] browser: the gas tester\'s phone opens "My work" over 400 kbit/s with 400 ms latency, then again (Chromium, issue 18)');
  let slowLink: Awaited<ReturnType<typeof measureSlowLinkVisits>> | { error: string };
  try {
    slowLink = await measureSlowLinkVisits(base, users.tech);
  } catch (err) {
    slowLink = { error: (err as Error).message.split('\n')[0] };
  }
  if ('error' in slowLink) {
    figures.push(judge('browser, slow link: first visit', null, 'ms', { op: '<', value: 5_000 }, slowLink.error));
    figures.push(judge('browser, slow link: repeat visit, from the worker', null, 'ms', { op: '<', value: 1_000 }, slowLink.error));
  } else {
    const s = slowLink;
    console.log(`  first visit ${s.firstMs} ms to the work (heading ${s.firstHeadingMs} ms; ${s.requests} requests, ${Math.round(s.bytes / 1024)} KB on the wire); repeat visit ${s.repeatMs} ms to the heading, ${s.repeatWorkMs} ms to the work${s.repeatFromWorker ? '' : ' (NOT from the service worker)'}`);
    figures.push(judge('browser, slow link: first visit', s.firstMs, 'ms', { op: '<', value: 5_000 }, `heading ${s.firstHeadingMs} ms, ${s.requests} requests, ${Math.round(s.bytes / 1024)} KB; phone, 400 kbit/s, 400 ms latency`));
    figures.push(judge('browser, slow link: repeat visit, from the worker', s.repeatFromWorker ? s.repeatMs : null, 'ms', { op: '<', value: 1_000 }, s.repeatFromWorker ? `to the heading; the work ${s.repeatWorkMs} ms` : 'the page did not come from the service worker'));
  }
  return { paint, slowLink };
}

/** `npm run bench -- browser`: only the browser's figures, against the production server on the scale data. */
async function browserOnly() {
  if (!databaseUrl) throw new Error('DATABASE_URL is not set (run through `npm run bench -- browser`).');
  console.log(`[bench] browser figures only; ${cpus().length} cores, load average ${loadavg().map((l) => l.toFixed(1)).join(' ')}`);
  const server = await startServer();
  const figures: Figure[] = [];
  try {
    await browserFigures(server.base, figures);
  } finally {
    await server.stop();
  }
  console.log(`\n[bench] figures (load average at the end ${loadavg().map((l) => l.toFixed(1)).join(' ')}):`);
  for (const f of figures) printFigure(f);
  const failed = figures.filter((f) => f.verdict === 'FAIL').length;
  console.log(`\n[bench] ${figures.filter((f) => f.verdict === 'PASS').length} PASS, ${failed} FAIL (not written to bench/results or docs/performance.md: a partial run)`);
  process.exitCode = failed ? 1 : 0;
}

/** Replaces the run in docs/performance.md (between its bench markers) with this one. */
function writeDocsTable(run: { startedAt: Date; loadAtStart: number[]; loadAtEnd: number[]; loads: LoadResult[]; figures: Figure[]; floors: { bare: LoadResult; select1: LoadResult } }) {
  const docs = join(root, 'docs', 'performance.md');
  const text = readFileSync(docs, 'utf8');
  const begin = '<!-- bench:begin -->';
  const end = '<!-- bench:end -->';
  const a = text.indexOf(begin);
  const b = text.indexOf(end);
  if (a < 0 || b < a) return console.log('[bench] docs/performance.md has no bench markers; table not written');
  const ms = (v: number) => (Number.isFinite(v) ? `${v < 10 ? v.toFixed(1) : Math.round(v).toLocaleString('en-GB')} ms` : '—');
  const fmt = (f: Figure) => (f.value === null ? '—' : f.unit === 'ratio' ? f.value.toFixed(3) : f.unit === 'ms' ? ms(f.value) : `${Math.round(f.value)} ${f.unit}`);
  const { bare, select1 } = run.floors;
  const lines = [
    begin,
    `Run of ${run.startedAt.toISOString().slice(0, 16).replace('T', ' ')} UTC: ${cpus().length} cores, Node ${process.version}, load average ${run.loadAtStart.map((l) => l.toFixed(1)).join(' / ')} at the start and ${run.loadAtEnd.map((l) => l.toFixed(1)).join(' / ')} at the end, ${connections} connections, server processes: ${processes}. Written by \`npm run bench\`.`,
    '',
    '| run | p50 | p95 | p99 | req/s | ÷ bare node:http | ÷ SELECT 1 |',
    '|---|---|---|---|---|---|---|',
    ...run.loads.map((r) => `| ${r.name}${r.non2xx || r.errors ? ` (${r.non2xx} non-2xx, ${r.errors} errors)` : ''} | ${ms(r.p50)} | ${ms(r.p95)} | ${ms(r.p99)} | ${Math.round(r.rps).toLocaleString('en-GB')} | ${(r.rps / bare.rps).toFixed(3)} | ${(r.rps / select1.rps).toFixed(3)} |`),
    '',
    '| figure | value | target | |',
    '|---|---|---|---|',
    ...run.figures.map((f) => `| ${f.name}${f.note ? ` (${f.note})` : ''} | ${fmt(f)} | ${f.target ? `${f.target.op} ${f.unit === 'ratio' ? f.target.value : `${f.target.value} ${f.unit}`}` : ''} | ${f.verdict} |`),
    end,
  ];
  writeFileSync(docs, text.slice(0, a) + lines.join('\n') + text.slice(b + end.length));
  console.log('[bench] docs/performance.md: the run table is updated');
}

(process.argv[2] === 'browser' ? browserOnly() : main()).catch((err) => {
  console.error(`[bench] failed: ${(err as Error).stack ?? err}`);
  process.exit(1);
});
