// Issue 20, part 1: every server process alike. Process A is the app in this test's process; B and C
// are the compiled server in processes of their own on the same database and the same bucket, as
// machines behind a balancer would run. Limits, uploads, board versions, background rounds, health and
// shutdown are checked across them.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn } from 'node:child_process';
import { crc32, deflateSync } from 'node:zlib';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { QueryTypes } from 'sequelize';
import { inject } from 'vitest';
import { s3Env, startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, sign, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, type Crew } from '../fixtures/permit-journey';
import { buildServerOnce, SessionCookies, startServerProcess, type ServerProcess } from '../fixtures/server-process';
import { startMailCatcher } from '../../server/src/lib/mail-catcher';
import { drainState } from '../../server/src/lib/draining';

const root = fileURLToPath(new URL('../..', import.meta.url));
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const HARLOW_AUTHORISER = 'authoriser@harlowridge.example';
// The per-address limit of these servers: ten attempts, the eleventh refused.
const PER_IP = 10;
const shared = { ...s3Env(), SIGN_IN_LIMIT_PER_IP: String(PER_IP), TRUST_PROXY: 'loopback' };

/** A real 1×1 PNG (PNG specification, ISO/IEC 15948): signature, IHDR, IDAT, IEND, each chunk with its CRC. */
function png(): Buffer {
  const chunk = (type: string, data: Buffer) => {
    const len = Buffer.alloc(4);
    len.writeUInt32BE(data.length);
    const body = Buffer.concat([Buffer.from(type, 'ascii'), data]);
    const crc = Buffer.alloc(4);
    crc.writeUInt32BE(crc32(body));
    return Buffer.concat([len, body, crc]);
  };
  const ihdr = Buffer.from([0, 0, 0, 1, 0, 0, 0, 1, 8, 2, 0, 0, 0]);
  return Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', ihdr), chunk('IDAT', deflateSync(Buffer.from([0, 0xc8, 0x32, 0x1e]))), chunk('IEND', Buffer.alloc(0))]);
}

let srv: TestServer;
let build: Awaited<ReturnType<typeof buildServerOnce>>;
let b: ServerProcess;
let c: ServerProcess;
let catcher: Awaited<ReturnType<typeof startMailCatcher>>;
const caught: { to: string; subject: string; body: string }[] = [];
let lead: ApiClient;
let authoriser: ApiClient;
let ids: Awaited<ReturnType<typeof demoIds>>;
// Sessions kept as cookies, used against any process. Few sign-ins: they count towards this address's limit too.
let authoriserCookies: SessionCookies;
let controlCookies: SessionCookies;
const rows = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });

beforeAll(async () => {
  srv = await startTestServer({ env: shared });
  catcher = await startMailCatcher();
  catcher.tester.bind((_addr: string | null, _id: number, email: { receivers: Record<string, boolean>; headers: Record<string, unknown>; body?: string }) => {
    for (const to of Object.keys(email.receivers)) caught.push({ to, subject: String(email.headers.subject), body: email.body ?? '' });
  });
  build = await buildServerOnce();
  // B and C run their background loops, as every process now does; A (this process) does not.
  const withWorkers = { ...shared, WORKERS: 'on', SMTP_URL: `smtp://127.0.0.1:${catcher.port}` };
  [b, c] = await Promise.all([startServerProcess(build.dir, srv.databaseUrl, withWorkers), startServerProcess(build.dir, srv.databaseUrl, withWorkers)]);
  [lead, authoriser] = await Promise.all([srv.signIn(users.lead), srv.signIn(users.authoriser)]);
  [authoriserCookies, controlCookies] = await Promise.all([SessionCookies.signIn(srv.baseUrl, users.authoriser), SessionCookies.signIn(srv.baseUrl, users.control)]);
  ids = await demoIds(srv);
}, 180_000);

afterAll(async () => {
  await Promise.all([b?.stop(), c?.stop()]);
  build?.remove();
  await catcher?.stop();
  await srv?.close();
});

describe('issue 20 finding 1: limits shared by every process', () => {
  it('when ten sign-ins from one address fail through process A, then the eleventh through process B is refused 429', async () => {
    const browser = new SessionCookies();
    browser.csrf = ((await (await browser.send(srv.baseUrl, 'GET', '/api/auth/csrf')).json()) as { csrfToken: string }).csrfToken;
    // Through the balancer (a trusted loopback proxy) from one outside address; each a different account, so no account is slowed.
    const from = { 'x-forwarded-for': '198.51.100.77' };
    for (let n = 0; n < PER_IP; n++) {
      const res = await browser.send(srv.baseUrl, 'POST', '/api/auth/sign-in', { email: `nobody-${n}@scale-out.example`, password: 'not the password' }, from);
      expect(res.status, `failure ${n + 1} through A`).toBe(401);
    }
    const eleventh = await browser.send(b.base, 'POST', '/api/auth/sign-in', { email: 'nobody-10@scale-out.example', password: 'not the password' }, from);
    expect(eleventh.status).toBe(429);
    expect(await eleventh.json()).toEqual({ error: { code: 'rate_limited', message: expect.stringMatching(/too many attempts from this network.*try again/i), details: [] } });
    expect(Number(eleventh.headers.get('retry-after'))).toBeGreaterThan(0);
    // Another address is not held back, in either process.
    const other = await browser.send(b.base, 'POST', '/api/auth/sign-in', { email: 'nobody-11@scale-out.example', password: 'not the password' }, { 'x-forwarded-for': '198.51.100.78' });
    expect(other.status).toBe(401);
  });

  it('when the authoriser signs with a wrong password five times through process A, then the sixth signature through process B is refused 429, even with the right password', async () => {
    const permitId = await draftWithPlan(srv, { lead } as Crew, ids);
    await expectOk(await transition(lead, permitId, 'submit'));
    for (let i = 0; i < 5; i++) {
      const res = await transition(authoriser, permitId, 'approve', { password: `guess-${i}`, signedName: 'Priya Castellan' });
      expect(res.status, `wrong password ${i + 1} through A`).toBe(400);
    }
    const onB = authoriserCookies;
    const version = ((await (await onB.send(b.base, 'GET', `/api/permits/${permitId}`)).json()) as { version: number }).version;
    const res = await onB.send(b.base, 'POST', `/api/permits/${permitId}/transitions`, { event: 'approve', version, ...sign(users.authoriser) });
    expect(res.status).toBe(429);
    expect(((await res.json()) as { error: { message: string } }).error.message).toBe('Too many wrong passwords when signing. Wait 15 minutes and try again.');
    const [row] = await rows<{ state: string }>(`SELECT state FROM permits WHERE id = :permitId`, { permitId });
    expect(row.state).toBe('requested');
  });
});

describe('issue 20 finding 2: uploads in the shared bucket', () => {
  it('when a file is uploaded through process A, then it downloads byte for byte through process B, stored by tenant, permit and id; another tenant gets 404 from both', async () => {
    const permit = await expectOk(await lead.post('/api/permits', permitBody(ids, srv.clock.now())), 201);
    const bytes = png();
    const up = await lead.agent.post(`/api/permits/${permit.id}/attachments`).set('x-csrf-token', lead.csrf).attach('file', bytes, { filename: 'valve BV-7 closed.png', contentType: 'image/png' });
    expect(up.status, JSON.stringify(up.body)).toBe(201);
    const [stored] = await rows<{ stored_name: string }>(`SELECT stored_name FROM attachments WHERE id = :id`, { id: up.body.id });
    expect(stored.stored_name).toBe(`${ids.tenantId}/${permit.id}/${up.body.id}`);

    const onB = authoriserCookies;
    const got = await onB.send(b.base, 'GET', up.body.downloadUrl);
    expect(got.status).toBe(200);
    expect(got.headers.get('content-type')).toBe('image/png');
    expect(Buffer.compare(Buffer.from(await got.arrayBuffer()), bytes)).toBe(0);

    const harlow = await SessionCookies.signIn(srv.baseUrl, HARLOW_AUTHORISER);
    for (const base of [srv.baseUrl, b.base]) {
      const res = await harlow.send(base, 'GET', up.body.downloadUrl);
      expect(res.status, base).toBe(404);
      expect(((await res.json()) as { error: { code: string } }).error.code).toBe('not_found');
    }
  });
});

describe('issue 20 finding 6: board versions every process agrees on', () => {
  it('when process B gives the board with its ETag, then process C answers 304 to it; after a change both answer the new board', async () => {
    const control = controlCookies;
    // An ETag covers one period of reuse (5 s); a period that ends between the two requests gives a new one, so try up to three times.
    let answered = 0;
    for (let attempt = 0; attempt < 3 && answered !== 304; attempt++) {
      const first = await control.send(b.base, 'GET', '/api/board');
      expect(first.status).toBe(200);
      const etag = first.headers.get('etag')!;
      expect(etag).toMatch(/^W\/"/);
      // As a browser revalidates (fetch would add "no-cache" to a conditional request, which asks for a full answer).
      answered = (await control.send(c.base, 'GET', '/api/board', undefined, { 'if-none-match': etag, 'cache-control': 'max-age=0' })).status;
    }
    expect(answered).toBe(304);

    const before = (await control.send(b.base, 'GET', '/api/board')).headers.get('etag')!;
    await expectOk(await lead.post('/api/permits', permitBody(ids, srv.clock.now())), 201);
    const after = await control.send(c.base, 'GET', '/api/board', undefined, { 'if-none-match': before, 'cache-control': 'max-age=0' });
    expect(after.status, 'a change moves the version').toBe(200);
  });
});

describe('issue 20 finding 4: one background round at a time', () => {
  it('when a permit runs out of time with two processes running their loops, then it expires once and every mail goes out once', async () => {
    const authoriser2 = await srv.signIn(users.authoriser2);
    const permitId = await draftWithPlan(srv, { lead } as Crew, ids);
    await expectOk(await transition(lead, permitId, 'submit'));
    await expectOk(await transition(authoriser2, permitId, 'approve', sign(users.authoriser2)));
    // Its validity ended a minute ago (as if the time had passed): B and C both run their scheduler.
    await srv.deps.sequelize.query(`UPDATE permits SET valid_from = now() - interval '3 hours', valid_to = now() - interval '1 minute' WHERE id = :permitId`, { replacements: { permitId } });
    for (const deadline = Date.now() + 45_000; ; await sleep(250)) {
      const [row] = await rows<{ state: string }>(`SELECT state FROM permits WHERE id = :permitId`, { permitId });
      if (row.state === 'expired') break;
      if (Date.now() > deadline) throw new Error('the permit was not expired by either process within 45 s');
    }
    // Another round of each process's loop (every 1 s), and the scheduler's (every 15 s) may come: nothing more may happen.
    await sleep(3_000);
    const events = await rows<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events WHERE permit_id = :permitId AND action = 'expire'`, { permitId });
    expect(events[0].n).toBe(1);
    for (const deadline = Date.now() + 15_000; ; await sleep(250)) {
      const [{ pending }] = await rows<{ pending: number }>(`SELECT count(*)::int AS pending FROM mail_outbox WHERE status = 'pending'`);
      if (pending === 0) break;
      if (Date.now() > deadline) throw new Error('the outbox was not sent within 15 s');
    }
    await sleep(500);
    const sent = await rows<{ to_address: string; subject: string }>(`SELECT to_address, subject FROM mail_outbox WHERE status = 'sent'`);
    expect(sent.length).toBeGreaterThan(0);
    const key = (m: { to: string; subject: string }) => `${m.to.toLowerCase()}|${m.subject}`;
    const caughtKeys = caught.map(key).sort();
    expect(caughtKeys, 'each sent mail arrived once').toEqual(sent.map((m) => key({ to: m.to_address, subject: m.subject })).sort());
    console.log(`[scale-out] two processes' loops: the permit expired once (1 audit event), ${sent.length} mail(s) each delivered once`);
  }, 90_000);
});

describe('issue 20 finding 5: health and a clean stop', () => {
  it('when a process is up, then liveness answers and readiness reports database and storage up, not draining, no replica', async () => {
    expect(await (await fetch(`${b.base}/api/health/live`)).json()).toEqual({ status: 'live' });
    const ready = await fetch(`${b.base}/api/health/ready`);
    expect(ready.status).toBe(200);
    expect(await ready.json()).toEqual({ status: 'ready', db: 'up', storage: 'up', draining: false, replica: null });
  });

  it('when the bucket cannot be reached or the process drains, then readiness answers 503 in the error shape, and a board stream ends with a retry hint', async () => {
    const noBucket = await startTestServer({ databaseUrl: srv.databaseUrl, env: { ...s3Env(), S3_BUCKET: 'no-such-bucket' } });
    try {
      const res = await noBucket.request.get('/api/health/ready');
      expect(res.status).toBe(503);
      expect(res.body).toEqual({ status: 'not_ready', db: 'up', storage: 'down', draining: false, replica: null, error: { code: 'service_unavailable', message: 'The file store is not reachable right now.', details: [] } });
    } finally {
      await noBucket.close();
    }
    const draining = await startTestServer({ databaseUrl: srv.databaseUrl, env: s3Env() });
    try {
      const stream = await controlCookies.send(draining.baseUrl, 'GET', '/api/board/stream');
      expect(stream.status).toBe(200);
      const reader = stream.body!.getReader();
      drainState(draining.appDeps.config).start();
      let text = '';
      for (let r = await reader.read(); !r.done; r = await reader.read()) text += Buffer.from(r.value).toString();
      expect(text).toMatch(/retry: \d+\nevent: closing/);
      const res = await draining.request.get('/api/health/ready');
      expect(res.status).toBe(503);
      expect(res.body).toMatchObject({ status: 'not_ready', draining: true, error: { code: 'service_unavailable', message: 'This server is shutting down.' } });
      expect((await draining.request.get('/api/health/live')).status).toBe(200);
    } finally {
      await draining.close();
    }
  });

  it('when SIGTERM arrives with a slow request in flight, then that request is answered 200, a new connection is refused and the process exits 0', async () => {
    const auditor = await SessionCookies.signIn(srv.baseUrl, users.auditor);
    expect((await auditor.send(c.base, 'GET', '/api/auth/me')).status).toBe(200);
    // The owner holds the users table, so the next request's session read waits: a request in flight.
    const holder = new pg.Client({ connectionString: srv.databaseUrl });
    await holder.connect();
    try {
      await holder.query('BEGIN');
      await holder.query('LOCK TABLE users IN ACCESS EXCLUSIVE MODE');
      let settled = false;
      const slow = auditor.send(c.base, 'GET', '/api/auth/me').finally(() => {
        settled = true;
      });
      await sleep(400);
      expect(settled, 'the request waits on the lock').toBe(false);
      c.child.kill('SIGTERM');
      await sleep(400);
      await expect(fetch(`${c.base}/api/health/live`), 'a new connection is refused').rejects.toThrow();
      await holder.query('COMMIT');
      const res = await slow;
      expect(res.status).toBe(200);
      expect(((await res.json()) as { user: { email: string } }).user.email).toBe(users.auditor);
    } finally {
      await holder.end().catch(() => undefined);
    }
    expect(await c.exited).toBe(0);
  }, 60_000);
});

describe('issue 20 finding 3: migrations as their own step', () => {
  it('when two migrators start at once on an empty database, then both finish and each migration runs once', async () => {
    const adminUrl = inject('dbAdminUrl');
    const name = `t_migrate_${Date.now().toString(36)}`;
    const admin = new pg.Client({ connectionString: adminUrl });
    await admin.connect();
    await admin.query(`CREATE DATABASE ${name}`);
    const url = adminUrl.replace(/\/postgres$/, `/${name}`);
    try {
      const migrate = () =>
        new Promise<{ code: number | null; out: string }>((resolve) => {
          const { DATABASE_OWNER_URL: _owner, ...inherited } = process.env;
          const child = spawn(process.execPath, ['--import', 'tsx', 'server/src/db/cli.ts', 'migrate'], { cwd: root, env: { ...inherited, DATABASE_URL: url }, stdio: ['ignore', 'pipe', 'pipe'] });
          let out = '';
          child.stdout.on('data', (d: Buffer) => (out += d.toString()));
          child.stderr.on('data', (d: Buffer) => (out += d.toString()));
          child.on('exit', (code) => resolve({ code, out }));
        });
      const [one, two] = await Promise.all([migrate(), migrate()]);
      expect(one.code, one.out).toBe(0);
      expect(two.code, two.out).toBe(0);
      // One of them applied everything; the other waited on the lock and found nothing left to do.
      expect([one.out, two.out].filter((o) => /applied \d+ migration/.test(o))).toHaveLength(1);
      const check = new pg.Client({ connectionString: url });
      await check.connect();
      const { rows: names } = await check.query<{ name: string }>('SELECT name FROM schema_migrations ORDER BY name');
      await check.end();
      expect(names.length).toBe(new Set(names.map((r) => r.name)).size);
      const [{ n }] = await rows<{ n: number }>(`SELECT count(*)::int AS n FROM schema_migrations`);
      expect(names.length, 'as many as the seeded database has').toBe(n);
    } finally {
      await admin.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
      await admin.end();
    }
  }, 120_000);
});
