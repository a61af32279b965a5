// `npm run security:sqlmap`: an optional SQL-injection scan of the API with Debian's sqlmap. Starts a
// throwaway database (migrated, seeded with the demo) and the real server on loopback, signs in as a
// demo user and points sqlmap, in batch mode with a bounded level, risk and time, at the query and
// body parameters of a representative set of routes on 127.0.0.1 only. Exits non-zero on any finding.
// Not part of `npm test`.
import { spawn, spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureAptPackages } from './lib/apt.mjs';
import { ensureNodeModules } from './lib/deps.mjs';
import { freePort, withCredentials } from './lib/pg.mjs';
import { startTestDatabase } from './lib/test-db.mjs';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const log = (msg) => console.log(`[sqlmap] ${msg}`);
const started = Date.now();

ensureNodeModules(root);
ensureAptPackages(['sqlmap']);

const db = await startTestDatabase(root);
const work = mkdtempSync(join(tmpdir(), 'holdpoint-sqlmap-'));
let server = null;
let status = 1;
try {
  // A copy of the template with the demo permits, so list routes answer rows and sqlmap can compare answers.
  db.superuserPsql('CREATE DATABASE holdpoint_sqlmap TEMPLATE holdpoint_template');
  const ownerUrl = db.templateUrl.replace(/\/holdpoint_template$/, '/holdpoint_sqlmap');
  const seed = spawnSync(process.execPath, ['--import', 'tsx', 'server/src/demo/cli.ts', 'setup'], { cwd: root, env: { ...process.env, DATABASE_URL: ownerUrl }, stdio: ['ignore', 'ignore', 'inherit'] });
  if (seed.status !== 0) throw new Error('seeding the scan database failed');

  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  server = spawn(process.execPath, ['--import', 'tsx', 'server/src/index.ts'], {
    cwd: root,
    env: {
      ...process.env, NODE_ENV: 'development', HOST: '127.0.0.1', PORT: String(port), DATABASE_URL: withCredentials(ownerUrl, db.appRole), DATABASE_OWNER_URL: ownerUrl,
      DATA_DIR: work, WORKERS: 'off', LOG_LEVEL: 'error', PUBLIC_URL: base,
    },
    stdio: ['ignore', 'inherit', 'inherit'],
  });
  server.on('exit', (code, signal) => {
    if (status === 1) console.error(`[sqlmap] the server stopped during the scan (exit ${code ?? signal})`);
  });
  for (let i = 0; ; i++) {
    const up = await fetch(`${base}/api/health`).then((r) => r.ok, () => false);
    if (up) break;
    if (i > 200 || server.exitCode !== null) throw new Error('the server did not start');
    await new Promise((r) => setTimeout(r, 150));
  }

  // Sign in as the demo authoriser (sees every permit of the tenant), as a browser would: CSRF token, sign-in, fresh token.
  const jar = new Map();
  const keep = (res) => {
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';');
      const i = pair.indexOf('=');
      jar.set(pair.slice(0, i), pair.slice(i + 1));
    }
    return res;
  };
  const cookie = () => [...jar].map(([k, v]) => `${k}=${v}`).join('; ');
  const csrf = async () => (await keep(await fetch(`${base}/api/auth/csrf`, { headers: { cookie: cookie() } })).json()).csrfToken;
  const email = 'authoriser@bramblecote.example';
  const firstToken = await csrf();
  const signIn = keep(
    await fetch(`${base}/api/auth/sign-in`, {
      method: 'POST',
      headers: { cookie: cookie(), 'content-type': 'application/json', 'x-csrf-token': firstToken },
      body: JSON.stringify({ email, password: 'holdpoint-demo' }),
    }),
  );
  if (signIn.status !== 200) throw new Error(`sign-in failed: ${signIn.status}`);
  const token = await csrf();
  const get = async (path) => (await fetch(`${base}${path}`, { headers: { cookie: cookie() } })).json();
  const pipeline = (await get('/api/pipelines?pageSize=1')).items[0];
  const permit = (await get('/api/permits?pageSize=1')).items[0];
  if (!pipeline || !permit) throw new Error('the demo data has no pipeline or permit to scan with');
  const detail = await get(`/api/permits/${permit.id}`);
  const now = Date.now();
  const newPermit = {
    kinds: ['cold_work'], title: 'Replace a flange gasket', scope: 'Swap the gasket on the launcher flange', pipelineId: detail.pipelineId,
    fromPosition: detail.fromPosition, toPosition: detail.toPosition, methodStatement: 'Isolate, drain, vent, swap, test.', hazards: 'Residual product.',
    ppe: ['Gloves'], validFrom: new Date(now).toISOString(), validTo: new Date(now + 8 * 3600_000).toISOString(),
    contractorOrganisationId: detail.contractorOrganisationId, fireWatchMinutes: 60,
  };

  const targets = [
    { name: 'permit list filters', args: ['-u', `${base}/api/permits?state=approved&q=valve&sort=updatedAt&dir=desc&pipelineId=${pipeline.id}&page=1`, '-p', 'state,q,sort,dir,pipelineId,page'] },
    { name: 'pipeline search', args: ['-u', `${base}/api/pipelines?q=BM&page=1`, '-p', 'q,page'] },
    { name: 'board by pipeline', args: ['-u', `${base}/api/board?pipelineId=${pipeline.id}`, '-p', 'pipelineId'] },
    { name: 'audit events paging', args: ['-u', `${base}/api/audit/events?page=1&pageSize=10`, '-p', 'page,pageSize'] },
    {
      name: 'JSON POST: create a permit',
      // Free text goes to an INSERT, the ids to reference checks; each clean hit adds a draft to this throwaway database.
      args: ['-u', `${base}/api/permits`, '--method', 'POST', '--data', JSON.stringify(newPermit), '-p', 'title,scope,hazards,pipelineId,contractorOrganisationId'],
    },
  ];
  const common = [
    '--batch', '--disable-coloring', '--level=2', '--risk=1', '--technique=BEST', '--dbms=PostgreSQL', '--time-sec=2', '--timeout=10', '--retries=1',
    '--cookie', cookie(), '--headers', `X-CSRF-Token: ${token}\nAccept: application/json`, '--flush-session', '--output-dir', join(work, 'out'),
    // Loopback only, and never the session cookie itself (sqlmap's level 2 would test it).
    '--skip=hp.sid,hp.csrf', '--ignore-code=400,404,409,422', '--answers=follow=N,quit=N',
  ];
  const findings = [];
  for (const t of targets) {
    // The untouched request must succeed, or sqlmap would only ever see the validation error.
    const url = t.args[t.args.indexOf('-u') + 1];
    const data = t.args.includes('--data') ? t.args[t.args.indexOf('--data') + 1] : undefined;
    const send = () => fetch(url, { method: data ? 'POST' : 'GET', body: data, headers: { cookie: cookie(), 'content-type': 'application/json', 'x-csrf-token': token } });
    // Once more on a network error: a kept-alive socket may have been closed by the server while sqlmap ran.
    const baseline = await send().catch((err) => {
      log(`  retrying the unmodified request after: ${err.cause?.message ?? err.message}`);
      return send();
    });
    if (!baseline.ok) throw new Error(`${t.name}: the unmodified request answered ${baseline.status} ${await baseline.text()}`);
    const t0 = Date.now();
    log(`scanning ${t.name}`);
    const r = spawnSync('sqlmap', [...t.args, ...common], { cwd: work, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
    const out = `${r.stdout}\n${r.stderr}`;
    // SQLMAP_LOG_DIR keeps sqlmap's full output of each target for reading afterwards.
    if (process.env.SQLMAP_LOG_DIR) {
      mkdirSync(process.env.SQLMAP_LOG_DIR, { recursive: true });
      writeFileSync(join(process.env.SQLMAP_LOG_DIR, `${t.name.replace(/[^a-z0-9]+/gi, '-').toLowerCase()}.log`), out);
    }
    // Only sqlmap's final verdict counts: a tentative "appears to be injectable" it then rules out is not a finding.
    const found = /identified the following injection point/i.test(out);
    const clean = /do not appear to be injectable/i.test(out);
    const errors = out.split('\n').filter((l) => /\[(CRITICAL|ERROR)\]/.test(l) && !/do not appear to be injectable/.test(l));
    log(`  ${t.name}: ${found ? 'INJECTION FOUND' : clean ? 'no injection' : 'inconclusive'} (${Math.round((Date.now() - t0) / 1000)} s)`);
    for (const l of errors) log(`  ${l.trim()}`);
    if (found) findings.push({ name: t.name, out: out.split('\n').filter((l) => /Parameter:|Type:|Title:|Payload:/.test(l)).join('\n') });
    else if (!clean) findings.push({ name: t.name, out: 'sqlmap did not finish its tests (see the errors above)' });
  }
  log(`${targets.length} targets in ${Math.round((Date.now() - started) / 1000)} s; ${findings.length ? `${findings.length} with findings` : 'no findings'}`);
  for (const f of findings) log(`finding: ${f.name}\n${f.out}`);
  status = findings.length ? 1 : 0;
} catch (err) {
  console.error(`[sqlmap] ${err.message}`);
} finally {
  server?.kill('SIGTERM');
  await new Promise((r) => setTimeout(r, 300));
  db.stop();
  rmSync(work, { recursive: true, force: true });
}
process.exit(status);
