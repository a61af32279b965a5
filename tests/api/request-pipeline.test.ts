// Finding 19: a signed-in request costs as few statements as it can. The person, their memberships and
// rules are kept per session in each server process, the session is written back only when it changed
// or its idle timer moves (at most once a minute), and the tenant is set by the statement that opens
// the transaction. A role change, a removal or a sign-out counts on the very next request, also in a
// second server process on the same database, which the change feed tells to drop what it kept.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { QueryTypes } from 'sequelize';
import { inject } from 'vitest';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, users } from '../fixtures/permit-fixtures';
import { accessCache } from '../../server/src/lib/access-cache';
import { changeFeed } from '../../server/src/lib/change-feed';
import { call, signIn as signInOver, type BenchSession } from '../../scripts/bench/session';
// @ts-expect-error plain ESM helper shared with the npm scripts
import { freePort, withCredentials } from '../../scripts/lib/pg.mjs';
// @ts-expect-error plain ESM script (it runs before node_modules exists)
import { buildServer } from '../../scripts/build-server.mjs';

const root = fileURLToPath(new URL('../..', import.meta.url));
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

let counting = false;
let sent: string[] = [];
const realQuery = pg.Client.prototype.query;

/** The SQL text of every statement the app sends while `fn` runs. */
async function statementsOf(fn: () => Promise<unknown>) {
  sent = [];
  counting = true;
  try {
    await fn();
  } finally {
    counting = false;
  }
  return sent;
}

const pipeline = (sql: string) => /http_sessions|^START TRANSACTION|^COMMIT|app\.tenant_id|FROM users WHERE|hp_memberships_of/.test(sql);

let srv: TestServer;
let second: { base: string; child: ChildProcess; dir: string[] } | null = null;
const rows = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });

/**
 * The server as production runs it, compiled and under plain node, as its own process on the same
 * database (the second server behind a balancer). Built into a folder of its own inside the repository.
 */
async function startSecondProcess() {
  const port = await freePort();
  const dir = mkdtempSync(join(tmpdir(), 'holdpoint-second-'));
  const build = join(root, '.tmp', `server-build-${randomBytes(4).toString('hex')}`);
  await buildServer(root, build);
  const { SMTP_URL: _smtp, DEV_MAILBOX: _mailbox, NODE_ENV: _mode, ...inherited } = process.env;
  const child = spawn(process.execPath, [join(build, 'index.js')], {
    cwd: root,
    env: {
      ...inherited, NODE_ENV: 'test', PORT: String(port), HOST: '127.0.0.1', DATABASE_URL: withCredentials(srv.databaseUrl, inject('dbAppRole')), DATABASE_OWNER_URL: srv.databaseUrl,
      DATA_DIR: dir, SESSION_SECRET: 'test-session-secret-0123456789', WORKERS: 'off', LOG_LEVEL: 'error', PUBLIC_URL: `http://127.0.0.1:${port}`, CLIENT_DIST: join(dir, 'no-client'),
    },
    stdio: ['ignore', 'inherit', 'inherit'],
  });
  const base = `http://127.0.0.1:${port}`;
  for (const deadline = Date.now() + 60_000; ; await sleep(150)) {
    if (await fetch(`${base}/api/health`).then((r) => r.ok, () => false)) break;
    if (Date.now() > deadline || child.exitCode !== null) throw new Error('the second server process did not start');
  }
  return { base, child, dir: [dir, build] };
}

/** A person with one role who can sign in (the demo password, copied from the demo admin). */
async function newMember(role: string) {
  const email = `pipeline-${randomBytes(5).toString('hex')}@pipeline.example`;
  const [user] = await rows<{ id: string }>(
    `INSERT INTO users (email, name, password_hash) SELECT :email, 'Pipeline Test Person', password_hash FROM users WHERE email = 'admin@bramblecote.example' RETURNING id`,
    { email },
  );
  const [m] = await rows<{ id: string }>(
    `INSERT INTO memberships (tenant_id, organisation_id, user_id, role)
     SELECT t.id, (SELECT id FROM organisations WHERE tenant_id = t.id AND kind = 'operator' LIMIT 1), :userId, :role FROM tenants t WHERE t.slug = 'bramblecote' RETURNING id`,
    { userId: user.id, role },
  );
  return { email, userId: user.id, membershipId: m.id };
}

/** Both servers hold the person's access: the in-process one through `warm`, the second process through its own request. */
async function until(what: string, check: () => boolean | Promise<boolean>, ms = 5_000) {
  for (const deadline = Date.now() + ms; ; await sleep(25)) {
    if (await check()) return;
    if (Date.now() > deadline) throw new Error(`${what} did not happen within ${ms} ms`);
  }
}

beforeAll(async () => {
  pg.Client.prototype.query = function countingQuery(this: pg.Client, ...args: unknown[]) {
    if (counting) {
      const q = args[0];
      sent.push(typeof q === 'string' ? q.trim() : String((q as { text?: string })?.text ?? '').trim());
    }
    return (realQuery as (...a: unknown[]) => unknown).apply(this, args);
  } as typeof realQuery;
  srv = await startTestServer();
  second = await startSecondProcess();
}, 120_000);

afterAll(async () => {
  pg.Client.prototype.query = realQuery;
  if (second) {
    const exited = new Promise((r) => second!.child.once('exit', r));
    second.child.kill('SIGTERM');
    await exited;
    for (const d of second.dir) rmSync(d, { recursive: true, force: true });
  }
  await srv?.close();
});

describe('finding 19: the signed-in request', () => {
  it('finding 19: when a signed-in person asks who they are again, then one statement answers (the session read) and nothing is written back', async () => {
    const control = await srv.signIn(users.control);
    expect((await control.get('/api/auth/me')).status).toBe(200);
    // The process's one change-feed connection (LISTEN), opened when it first keeps an access, is not the request's.
    await changeFeed(srv.appDeps).whenListening();
    const again = await statementsOf(async () => expect((await control.get('/api/auth/me')).status).toBe(200));
    expect(again, again.join('\n')).toHaveLength(1);
    expect(again[0]).toMatch(/FROM http_sessions/);
  });

  it('finding 19: when a minute has passed since the idle timer last moved, then the next request writes the session back once, and the one after does not', async () => {
    const control = await srv.signIn(users.control);
    await control.get('/api/auth/me');
    srv.clock.advanceMinutes(0.5);
    const within = await statementsOf(() => control.get('/api/auth/me'));
    expect(within.filter((s) => /INSERT INTO "?http_sessions/.test(s)), within.join('\n')).toHaveLength(0);
    srv.clock.advanceMinutes(0.6);
    const after = await statementsOf(() => control.get('/api/auth/me'));
    expect(after.filter((s) => /INSERT INTO "?http_sessions/.test(s)), after.join('\n')).toHaveLength(1);
    const next = await statementsOf(() => control.get('/api/auth/me'));
    expect(next, next.join('\n')).toHaveLength(1);
  });

  it('finding 19: when a signed-in person reads one permit, then at most 3 statements are the pipeline around its own queries (session read, begin with the tenant set, commit)', async () => {
    const authoriser = await srv.signIn(users.authoriser);
    const lead = await srv.signIn(users.lead);
    const created = await lead.post('/api/permits', permitBody(await demoIds(srv), srv.clock.now()));
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const permit = created.body as { id: string };
    expect((await authoriser.get(`/api/permits/${permit.id}`)).status).toBe(200);
    const read = await statementsOf(async () => expect((await authoriser.get(`/api/permits/${permit.id}`)).status).toBe(200));
    const around = read.filter(pipeline);
    expect(around, around.join('\n')).toHaveLength(3);
    expect(around[0]).toMatch(/FROM http_sessions/);
    expect(around[1]).toMatch(/^START TRANSACTION; SELECT set_config\('app\.tenant_id'/);
    expect(around[2]).toMatch(/^COMMIT/);
  });
});

describe('finding 19: changes of access count on the very next request, in every server process', () => {
  it('finding 19: when the admin changes a role in one server, then the next request of that person to a second server process has the new rules', async () => {
    const admin = await srv.signIn(users.admin);
    const person = await newMember('auditor');
    const there: BenchSession = await signInOver(second!.base, person.email);
    const here = await srv.signIn(person.email);
    // Both servers now keep the person's access.
    expect((await call(second!.base, there, 'GET', '/api/auth/me')).status).toBe(200);
    expect((await here.get('/api/auth/me')).status).toBe(200);
    expect((await here.get('/api/auth/me')).body.memberships.map((m: { role: string }) => m.role)).toEqual(['auditor']);
    expect((await admin.get('/api/auth/me')).status).toBe(200);
    const kept = accessCache(srv.appDeps).size;

    const res = await admin.patch(`/api/memberships/${person.membershipId}`, { role: 'control_room' });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    // The change feed drops what this server kept of the person (and only that) without waiting for a request.
    await until('the kept access dropped', () => accessCache(srv.appDeps).size === kept - 1);
    const me = await call(second!.base, there, 'GET', '/api/auth/me');
    expect(me.status).toBe(200);
    expect((me.body as { memberships: { role: string }[] }).memberships.map((m) => m.role)).toEqual(['control_room']);
    expect((await here.get('/api/auth/me')).body.memberships.map((m: { role: string }) => m.role)).toEqual(['control_room']);
  });

  it('finding 19: when the admin removes a membership, then the next request of that person to the second server process is refused', async () => {
    const admin = await srv.signIn(users.admin);
    const person = await newMember('control_room');
    const there = await signInOver(second!.base, person.email);
    expect((await call(second!.base, there, 'GET', '/api/board')).status).toBe(200);
    expect((await admin.delete(`/api/memberships/${person.membershipId}`)).status).toBe(204);
    const board = await call(second!.base, there, 'GET', '/api/board');
    expect(board.status).toBe(403);
    expect((board.body as { error: { code: string } }).error.code).toBe('forbidden');
  });

  it('finding 19: when a person signs out through one server, then their next request to the second server process answers 401', async () => {
    const session = await signInOver(srv.baseUrl, users.control);
    expect((await call(second!.base, session, 'GET', '/api/auth/me')).status).toBe(200);
    expect((await call(second!.base, session, 'GET', '/api/auth/me')).status).toBe(200);
    expect((await call(srv.baseUrl, session, 'POST', '/api/auth/sign-out')).status).toBe(204);
    const me = await call(second!.base, session, 'GET', '/api/auth/me');
    expect(me.status).toBe(401);
    expect((me.body as { error: { code: string } }).error.code).toBe('unauthenticated');
  });

  it('finding 19: when an account is disabled, then its next request in either server answers 401', async () => {
    const person = await newMember('auditor');
    const there = await signInOver(second!.base, person.email);
    const here = await srv.signIn(person.email);
    expect((await call(second!.base, there, 'GET', '/api/auth/me')).status).toBe(200);
    expect((await here.get('/api/auth/me')).status).toBe(200);
    await rows(`UPDATE users SET disabled_at = now() WHERE id = :id`, { id: person.userId });
    expect((await call(second!.base, there, 'GET', '/api/auth/me')).status).toBe(401);
    expect((await here.get('/api/auth/me')).status).toBe(401);
  });
});
