// Faults injected for real: PostgreSQL stopped and started under a stream of requests, and the server
// process killed with -9 while a request is inside its transaction. Each part prints what it injected.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { QueryTypes } from 'sequelize';
import { inject } from 'vitest';
import { ApiClient, createTestDatabase, startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, signInCrew, steps, toAccepted } from '../fixtures/permit-journey';
import { verifyChain } from '../../server/src/modules/audit/audit.service';
// @ts-expect-error plain ESM helper shared with the npm scripts
import { startTestDatabase } from '../../scripts/lib/test-db.mjs';
// @ts-expect-error plain ESM helper shared with the npm scripts
import { freePort, withCredentials } from '../../scripts/lib/pg.mjs';

const root = fileURLToPath(new URL('../..', import.meta.url));
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
/** No answer may take longer than this, down or up: the pool gives up after 5 s, the health probe after 3 s. */
const ANSWER_BOUND_MS = 8_000;

interface OwnCluster {
  templateUrl: string;
  appRole: { role: string; password: string };
  stopServer: (mode?: 'fast' | 'immediate') => Promise<void>;
  startServer: () => Promise<void>;
  stop: () => void;
}

describe('when PostgreSQL is restarted while permits are being moved', () => {
  // Its own cluster: the other API files share the run's cluster and would break if it stopped.
  let cluster: OwnCluster;
  let srv: TestServer;

  beforeAll(async () => {
    cluster = (await startTestDatabase(root)) as OwnCluster;
    srv = await startTestServer({ databaseUrl: cluster.templateUrl });
  }, 90_000);
  afterAll(async () => {
    await srv?.close();
    cluster?.stop();
  });

  it('then it answers 503 in the error shape while it is down, recovers by itself, and every 2xx is in the database', async () => {
    const ids = await demoIds(srv);
    const [lead, authoriser] = await Promise.all([srv.signIn(users.lead), srv.signIn(users.authoriser)]);

    const tally = { sent: 0, ok: 0, unavailable: 0, conflict: 0, other: [] as string[], slowestMs: 0, faults: 0 };
    /** Every write answered 2xx: the permit, the audit action it must have appended, and the version it reached. */
    const acknowledged: { permitId: string; action: string; version: number }[] = [];
    let down = false;
    let downAnswersNot503 = 0;
    let committedAnswered503 = 0;
    const owned = new Map<number, { id: string; version: number }>();

    async function call(req: () => PromiseLike<{ status: number; body: { error?: { code?: string; message?: string } } }>) {
      tally.sent++;
      const wasDown = down;
      const started = Date.now();
      let res;
      try {
        res = await Promise.race([req(), sleep(ANSWER_BOUND_MS + 2_000).then(() => null)]);
      } catch (err) {
        tally.other.push(`no answer: ${(err as Error).message}`);
        return null;
      }
      tally.slowestMs = Math.max(tally.slowestMs, Date.now() - started);
      if (!res) {
        tally.other.push('no answer within the bound');
        return null;
      }
      if (res.status < 300) tally.ok++;
      else if (res.status === 503) {
        tally.unavailable++;
        expect(res.body.error?.code).toBe('service_unavailable');
        expect(typeof res.body.error?.message).toBe('string');
      } else if (res.status === 409) tally.conflict++;
      else tally.other.push(`${res.status} ${JSON.stringify(res.body).slice(0, 200)}`);
      if (wasDown && down && res.status !== 503) downAnswersNot503++;
      // A client backs off a little on 503, as the browser's query client does.
      if (res.status === 503) await sleep(50);
      return res;
    }

    let running = true;
    // A writer owns one permit and sends it back and forth: submitted by the lead, sent back by the authoriser.
    async function writer(n: number) {
      let permit: { id: string; version: number; state: string } | null = null;
      let attempt = 0;
      while (running) {
        if (!permit) {
          const res = await call(() => lead.post('/api/permits', permitBody(ids, new Date(), { title: `Fault run writer ${n} try ${attempt++}` })));
          if (res?.status === 201) {
            const body = res.body as unknown as { id: string; version: number; state: string };
            permit = { id: body.id, version: body.version, state: body.state };
            owned.set(n, permit);
            acknowledged.push({ permitId: body.id, action: 'created', version: body.version });
          }
          continue;
        }
        const event = permit.state === 'draft' ? 'submit' : 'reject';
        const p = permit;
        const res = await call(() =>
          (event === 'submit' ? lead : authoriser).post(`/api/permits/${p.id}/transitions`, {
            event,
            version: p.version,
            ...(event === 'reject' ? { reason: 'Add the drain-down route to the method statement.' } : {}),
          }),
        );
        if (res && res.status === 200) {
          const body = res.body as unknown as { version: number; state: string };
          acknowledged.push({ permitId: p.id, action: event, version: body.version });
          permit = { id: p.id, version: body.version, state: body.state };
          owned.set(n, permit);
        } else {
          // Refused or cut off: find out where the permit really is before the next move.
          const now = await call(() => lead.get(`/api/permits/${p.id}`));
          if (now?.status === 200) {
            const body = now.body as unknown as { version: number; state: string };
            // Only this writer moves this permit: a version it was never answered for is a change that
            // committed just before the link died (the caller heard 503).
            committedAnswered503 += body.version - p.version;
            permit = { id: p.id, version: body.version, state: body.state };
            owned.set(n, permit);
          } else await sleep(100);
        }
      }
    }
    async function reader() {
      while (running) {
        await call(() => lead.get('/api/permits?state=draft&sort=updatedAt&dir=desc&pageSize=20'));
        await call(() => authoriser.get(`/api/board?pipelineId=${ids.pipelineId}`));
      }
    }

    const load = Promise.all([writer(1), writer(2), writer(3), reader()]);
    const recoveries: number[] = [];
    for (const mode of ['fast', 'fast'] as const) {
      await sleep(1_500);
      const before = tally.ok;
      await cluster.stopServer(mode);
      tally.faults++;
      down = true;
      await sleep(2_000);
      down = false;
      await cluster.startServer();
      const back = Date.now();
      const okBack = tally.ok;
      while (tally.ok < okBack + 5 && Date.now() - back < 15_000) await sleep(50);
      recoveries.push(Date.now() - back);
      expect(tally.ok, 'requests succeed again after the restart').toBeGreaterThan(before);
    }
    await sleep(1_500);
    running = false;
    await load;

    // Health says up again, without the server being restarted.
    expect((await srv.request.get('/api/health')).body).toEqual({ status: 'ok', db: 'up' });

    // Every permit in the database is whole: its version is one more per audited change, and its state is
    // the state the last audited change reached (a change without its audit event, or the reverse, shows here).
    const permits = await srv.deps.sequelize.query<{ id: string; state: string; version: number; title: string }>(`SELECT id, state, version, title FROM permits`, {
      type: QueryTypes.SELECT,
    });
    const events = await srv.deps.sequelize.query<{ permit_id: string; action: string; to_state: string }>(
      `SELECT permit_id, action, to_state FROM audit_events WHERE entity_type = 'permit' ORDER BY seq`,
      { type: QueryTypes.SELECT },
    );
    const byPermit = new Map<string, { action: string; to_state: string }[]>();
    for (const e of events) byPermit.set(e.permit_id, [...(byPermit.get(e.permit_id) ?? []), e]);
    for (const p of permits) {
      const trail = byPermit.get(p.id) ?? [];
      expect(trail.length, `permit ${p.title}: one audit event per version`).toBe(p.version);
      expect(trail[0]?.action).toBe('created');
      expect(trail.at(-1)?.to_state, `permit ${p.title}: state matches its last audit event`).toBe(p.state);
    }
    // Nothing acknowledged is lost: the n-th audit event of each permit is the change that answered version n.
    for (const a of acknowledged) expect(byPermit.get(a.permitId)?.[a.version - 1]?.action, `${a.action} of ${a.permitId} to version ${a.version}`).toBe(a.action);
    // Nothing else was written: besides the 2xx writes, only changes whose commit went through just before the
    // link died (answered 503, seen on reload) and permits created the same way, which no writer moved on.
    // A writer's last attempt may have been cut off with no reload after it.
    for (const o of owned.values()) committedAnswered503 += permits.find((p) => p.id === o.id)!.version - o.version;
    const createdIds = new Set(acknowledged.filter((a) => a.action === 'created').map((a) => a.permitId));
    const createdAnswered503 = permits.filter((p) => !createdIds.has(p.id));
    for (const p of createdAnswered503) expect(p.version, `unacknowledged permit ${p.title} was never moved`).toBe(1);
    const unacknowledged = events.length - acknowledged.length;
    expect(unacknowledged, 'audit events = 2xx writes + commits answered 503').toBe(committedAnswered503 + createdAnswered503.length);

    const chain = await verifyChain(srv.deps.sequelize, ids.tenantId);
    expect(chain.ok).toBe(true);

    console.log(
      `[faults] PostgreSQL restarts: ${tally.faults} (pg_ctl stop -m fast, 2 s down, start); requests sent ${tally.sent}, 2xx ${tally.ok}, 503 ${tally.unavailable}, ` +
        `409 ${tally.conflict}, other ${tally.other.length}; writes acknowledged ${acknowledged.length}, audit events ${events.length} ` +
        `(${unacknowledged} committed just before the link died and answered 503, each whole); slowest answer ${tally.slowestMs} ms; back to 2xx after ${recoveries.join(' / ')} ms`,
    );
    expect(tally.other, 'no 500, no hang, no other status').toEqual([]);
    expect(tally.faults).toBe(2);
    expect(tally.unavailable, 'some requests met the outage').toBeGreaterThan(0);
    expect(downAnswersNot503, 'every answer sent while the database was down is 503').toBe(0);
    expect(tally.slowestMs).toBeLessThan(ANSWER_BOUND_MS);
    expect(acknowledged.length).toBeGreaterThan(10);
  }, 60_000);
});

/** The real server as its own process, as `npm start` runs it. */
async function startServerProcess(databaseUrl: string, dataDir: string) {
  const port = await freePort();
  const child: ChildProcess = spawn(process.execPath, ['--import', 'tsx', 'server/src/index.ts'], {
    cwd: root,
    env: {
      ...process.env, NODE_ENV: 'development', PORT: String(port), DATABASE_URL: withCredentials(databaseUrl, inject('dbAppRole')), DATABASE_OWNER_URL: databaseUrl,
      DATA_DIR: dataDir, SESSION_SECRET: 'test-session-secret-0123456789', WORKERS: 'off', LOG_LEVEL: 'error', PUBLIC_URL: `http://127.0.0.1:${port}`,
    },
    stdio: ['ignore', 'inherit', 'inherit'],
  });
  const baseUrl = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 30_000;
  for (;;) {
    const ok = await fetch(`${baseUrl}/api/health`).then((r) => r.ok, () => false);
    if (ok) break;
    if (Date.now() > deadline || child.exitCode !== null) throw new Error('the server process did not start');
    await sleep(150);
  }
  return { child, baseUrl };
}

describe('when the server process is killed in the middle of a transition', () => {
  let db: Awaited<ReturnType<typeof createTestDatabase>>;
  let srv: TestServer;
  let dataDir: string;
  let proc: ChildProcess | null = null;

  beforeAll(async () => {
    db = await createTestDatabase();
    // In-process, only to arrange the permit through the API and to read rows as the owner.
    srv = await startTestServer({ databaseUrl: db.url });
    dataDir = mkdtempSync(join(tmpdir(), 'holdpoint-faults-'));
  });
  afterAll(async () => {
    proc?.kill('SIGKILL');
    await srv?.close();
    await db?.drop();
    rmSync(dataDir, { recursive: true, force: true });
  });

  it('then nothing of it is written, the audit chain verifies, and the same request succeeds after a restart', async () => {
    const ids = await demoIds(srv);
    const crew = await signInCrew(srv);
    const permitId = await draftWithPlan(srv, crew, ids);
    await toAccepted(crew, permitId);
    const valve = (await steps(crew.tech, permitId)).find((s) => s.kind === 'block_valve')!;
    const one = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
      srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT }).then((rows) => rows[0]);
    const lock = await one<{ id: string; number: string }>(`SELECT id, number FROM locks WHERE tenant_id = :t AND state = 'in_store' ORDER BY number LIMIT 1`, { t: ids.tenantId });
    const tag = await one<{ id: string; number: string }>(`SELECT id, number FROM tags WHERE tenant_id = :t AND state = 'in_store' ORDER BY number LIMIT 1`, { t: ids.tenantId });
    const snapshot = async () => ({
      permit: await one<{ state: string; version: number }>(`SELECT state, version FROM permits WHERE id = :id`, { id: permitId }),
      step: await one<{ status: string; lock_id: string | null; tag_id: string | null; applied_by: string | null }>(
        `SELECT status, lock_id, tag_id, applied_by FROM isolation_steps WHERE id = :id`,
        { id: valve.id },
      ),
      lock: await one<{ state: string }>(`SELECT state FROM locks WHERE id = :id`, { id: lock.id }),
      tag: await one<{ state: string }>(`SELECT state FROM tags WHERE id = :id`, { id: tag.id }),
      events: (await one<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events WHERE tenant_id = :t`, { t: ids.tenantId })).n,
      head: await one<{ seq: number; last_hash: string }>(`SELECT seq, last_hash FROM audit_chain_heads WHERE tenant_id = :t`, { t: ids.tenantId }),
    });
    const before = await snapshot();
    expect(before.step.status).toBe('planned');
    expect(before.lock.state).toBe('in_store');

    let server = await startServerProcess(db.url, dataDir);
    proc = server.child;
    const apply = async (baseUrl: string) => {
      const tech = await ApiClient.create(baseUrl);
      expect((await tech.post('/api/auth/sign-in', { email: users.tech, password: 'holdpoint-demo' })).status).toBe(200);
      return () => tech.post(`/api/permits/${permitId}/isolations/${valve.id}/apply`, { lockId: lock.id, tagId: tag.id });
    };
    const send = await apply(server.baseUrl);

    // The owner holds the tenant's audit chain head: the apply updates the step, the lock and the tag, then waits there.
    const holder = new pg.Client({ connectionString: db.url });
    const probe = new pg.Client({ connectionString: db.url });
    await Promise.all([holder.connect(), probe.connect()]);
    await holder.query('BEGIN');
    await holder.query('SELECT seq FROM audit_chain_heads WHERE tenant_id = $1 FOR UPDATE', [ids.tenantId]);
    const inFlight = send().then(
      (r) => `answered ${r.status}`,
      (e: Error) => `cut off (${e.message})`,
    );
    const holderPid = (await holder.query<{ pid: number }>('SELECT pg_backend_pid() AS pid')).rows[0].pid;
    // pg_locks is readable without the app role's privileges (pg_stat_activity hides other roles' queries).
    let waiting: { pid: number; xid: string | null; writing: string[] } | undefined;
    for (let i = 0; i < 100 && !waiting; i++) {
      await sleep(100);
      const r = await probe.query(
        `SELECT w.pid,
           (SELECT l.transactionid::text FROM pg_locks l WHERE l.pid = w.pid AND l.locktype = 'transactionid' AND l.granted AND l.mode = 'ExclusiveLock' LIMIT 1) AS xid,
           ARRAY(SELECT DISTINCT c.relname::text FROM pg_locks l JOIN pg_class c ON c.oid = l.relation AND c.relkind = 'r'
                 WHERE l.pid = w.pid AND l.granted AND l.mode = 'RowExclusiveLock' AND l.database = (SELECT oid FROM pg_database WHERE datname = current_database()) ORDER BY 1) AS writing
         FROM (SELECT DISTINCT pid FROM pg_locks WHERE NOT granted) w
         WHERE $1 = ANY (pg_blocking_pids(w.pid))`,
        [holderPid],
      );
      waiting = r.rows[0];
    }
    expect(waiting, 'the apply is waiting for the chain head, inside its transaction').toBeDefined();
    expect(waiting!.xid, 'it has already written (it holds a transaction id)').not.toBeNull();
    expect(waiting!.writing).toEqual(expect.arrayContaining(['isolation_steps', 'locks', 'tags']));

    server.child.kill('SIGKILL');
    await new Promise((r) => server.child.once('exit', r));
    proc = null;
    await holder.query('ROLLBACK');
    await holder.end();
    // PostgreSQL notices the dead client once the lock is free, and rolls its transaction back.
    for (let i = 0; i < 100; i++) {
      const r = await probe.query('SELECT 1 FROM pg_stat_activity WHERE pid = $1', [waiting!.pid]);
      if (!r.rowCount) break;
      await sleep(100);
    }
    expect((await probe.query('SELECT 1 FROM pg_stat_activity WHERE pid = $1', [waiting!.pid])).rowCount, 'the dead server\u2019s backend is gone').toBe(0);
    await probe.end();
    const outcome = await inFlight;

    const after = await snapshot();
    expect(after, 'permit, step, lock, tag, audit trail and chain head exactly as before').toEqual(before);
    expect((await verifyChain(srv.deps.sequelize, ids.tenantId)).ok).toBe(true);

    server = await startServerProcess(db.url, dataDir);
    proc = server.child;
    const retry = await (await apply(server.baseUrl))();
    expect(retry.status, JSON.stringify(retry.body)).toBe(200);
    const done = await snapshot();
    expect(done.step).toMatchObject({ status: 'applied', lock_id: lock.id, tag_id: tag.id });
    expect([done.lock.state, done.tag.state]).toEqual(['applied', 'applied']);
    expect(done.events).toBe(before.events + 1);
    expect((await verifyChain(srv.deps.sequelize, ids.tenantId)).ok).toBe(true);

    console.log(
      `[faults] server process killed with SIGKILL while backend ${waiting!.pid} (xid ${waiting!.xid}) had written ` +
        `${waiting!.writing.join(', ')} and waited on the audit chain head held by the owner; the in-flight request was ${outcome}; ` +
        `after: permit ${after.permit.state} v${after.permit.version}, step ${after.step.status}, lock ${lock.number} ${after.lock.state}, ` +
        `${after.events - before.events} new audit events, chain verifies; after the restart the same apply answered ${retry.status}`,
    );
    server.child.kill('SIGTERM');
    await new Promise((r) => server.child.once('exit', r));
    proc = null;
  }, 60_000);
});
