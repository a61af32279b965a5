// An Idempotency-Key whose request dies with its server process. The answer under the key is committed
// with the write, in one transaction, so a retry finds the answer or finds nothing and runs once; a key
// held by a process that froze is freed after a short lease. Processes are real: the compiled server in a
// process of its own on the same database, killed with SIGKILL or frozen with SIGSTOP. A test trigger
// holds the moment the key's answer is written (an advisory lock the test owns, or a short sleep).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash, randomUUID } from 'node:crypto';
import pg from 'pg';
import QRCode from 'qrcode';
import { QueryTypes } from 'sequelize';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, signInCrew } from '../fixtures/permit-journey';
import { buildServerOnce, SessionCookies, startServerProcess, type ServerProcess } from '../fixtures/server-process';
import { canonicalJson } from '../../server/src/lib/canonical-json';
import { objectStorage } from '../../server/src/lib/storage';
import { storageKey } from '../../server/src/modules/attachments/attachments.service';
import { BACKGROUND_PHOTOS } from '../../server/src/modules/dossier/dossier.service';

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
/** The advisory lock the test trigger waits on before a "hold-" key's answer is written. */
const HOLD = 4711;
const LEASE_SECONDS = 2;

let srv: TestServer;
let build: Awaited<ReturnType<typeof buildServerOnce>>;
let proc: ServerProcess | null = null;
let lead: SessionCookies;
let ids: Awaited<ReturnType<typeof demoIds>>;
let holder: pg.Client;
let probe: pg.Client;

const one = async <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
  (await srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT }))[0];
const permitsTitled = async (title: string) => (await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM permits WHERE title = :title`, { replacements: { title }, type: QueryTypes.SELECT })).map((r) => r.id);
const keyRow = (key: string) => one<{ status: number | null; body: { id?: string } | null }>(`SELECT status, body FROM idempotency_keys WHERE key = :key`, { key });

/** A permit draft with a key, through any process; the answer's status and body (or how it was cut off). */
async function create(base: string, key: string, body: Record<string, unknown>) {
  const res = await lead.send(base, 'POST', '/api/permits', body, { 'idempotency-key': key });
  return { status: res.status, replayed: res.headers.get('idempotent-replayed'), body: (await res.json()) as { id?: string; error?: { code: string; message: string } } };
}
const settle = (p: Promise<{ status: number }>) => p.then((r) => `answered ${r.status}`, (e: Error) => `cut off (${e.message})`);

/** The backend waiting in the test trigger for the HOLD lock (pg_locks is readable by the owner). */
async function waitForHeldAnswer(): Promise<number> {
  for (let i = 0; i < 200; i++) {
    const { rows } = await probe.query<{ pid: number }>(`SELECT pid FROM pg_locks WHERE locktype = 'advisory' AND NOT granted AND classid = 0 AND objid = $1`, [HOLD]);
    if (rows[0]) return rows[0].pid;
    await sleep(25);
  }
  throw new Error('no request reached the moment its answer is written');
}

async function backendGone(pid: number) {
  for (let i = 0; i < 100; i++) {
    if (!(await probe.query('SELECT 1 FROM pg_stat_activity WHERE pid = $1', [pid])).rowCount) return;
    await sleep(100);
  }
  throw new Error(`backend ${pid} is still there`);
}

async function kill(p: ServerProcess) {
  p.child.kill('SIGKILL');
  await p.exited;
  await p.stop();
  proc = null;
}

beforeAll(async () => {
  srv = await startTestServer();
  build = await buildServerOnce();
  lead = await SessionCookies.signIn(srv.baseUrl, users.lead);
  ids = await demoIds(srv);
  // Installed by the owner in this file's own database: it slows or holds only keys named for it.
  await srv.deps.sequelize.query(`
    CREATE FUNCTION test_hold_idempotent_answer() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF NEW.status IS NOT NULL AND NEW.key LIKE 'hold-%' THEN PERFORM pg_advisory_xact_lock(${HOLD}); END IF;
      IF NEW.status IS NOT NULL AND NEW.key LIKE 'slow-%' THEN PERFORM pg_sleep(0.4); END IF;
      RETURN NEW;
    END $$;
    CREATE TRIGGER test_hold_idempotent_answer BEFORE INSERT OR UPDATE ON idempotency_keys FOR EACH ROW EXECUTE FUNCTION test_hold_idempotent_answer();`);
  holder = new pg.Client({ connectionString: srv.databaseUrl });
  probe = new pg.Client({ connectionString: srv.databaseUrl });
  await Promise.all([holder.connect(), probe.connect()]);
}, 180_000);

afterAll(async () => {
  if (proc) {
    proc.child.kill('SIGCONT');
    await proc.stop();
  }
  build?.remove();
  await Promise.all([holder?.end(), probe?.end()]);
  await srv?.close();
});

describe('IDEM: a key stranded by a process that dies between its write and its answer', () => {
  it('IDEM-1: when the server process is killed while it stores the answer under the key, then the key is not left in progress: a retry with the same key runs the write once and later retries get that answer', async () => {
    proc = await startServerProcess(build.dir, srv.databaseUrl);
    const title = 'Idempotency: killed while storing the answer';
    const body = permitBody(ids, new Date(), { title });
    await holder.query('SELECT pg_advisory_lock($1)', [HOLD]);
    const inFlight = settle(create(proc.base, 'hold-1', body));
    const pid = await waitForHeldAnswer();
    await kill(proc);
    await holder.query('SELECT pg_advisory_unlock($1)', [HOLD]);
    await backendGone(pid);

    const retry = await create(srv.baseUrl, 'hold-1', body);
    expect(retry.status, JSON.stringify(retry.body)).toBe(201);
    const stored = await permitsTitled(title);
    expect(stored).toEqual([retry.body.id]);
    const again = await create(srv.baseUrl, 'hold-1', body);
    expect([again.status, again.replayed, again.body.id]).toEqual([201, 'true', retry.body.id]);
    expect(await permitsTitled(title)).toHaveLength(1);
    console.log(`[idempotency] process killed while its backend ${pid} wrote the answer; the first request was ${await inFlight}; the retry answered ${retry.status}, one permit`);
  }, 60_000);

  it('IDEM-2: when the process is killed right after its commit, before the answer reached the phone, then the answer was committed with the permit and the retry gets it (same status and id), the permit stored once', async () => {
    proc = await startServerProcess(build.dir, srv.databaseUrl);
    const title = 'Idempotency: killed after the commit';
    const body = permitBody(ids, new Date(), { title });
    const inFlight = settle(create(proc.base, 'slow-2', body));
    let seen: { permit_id: string | null; status: number | null } | undefined;
    // One statement, one snapshot: the permit and the key's answer as another reader sees them together.
    for (let i = 0; i < 2_000 && !seen?.permit_id; i++) {
      const { rows } = await probe.query<{ permit_id: string | null; status: number | null }>(
        `SELECT (SELECT id FROM permits WHERE title = $1) AS permit_id, (SELECT status FROM idempotency_keys WHERE key = 'slow-2') AS status`,
        [title],
      );
      seen = rows[0];
      if (!seen.permit_id) await sleep(2);
    }
    await kill(proc);
    expect(seen?.permit_id, 'the permit was written').toBeTruthy();
    expect(seen?.status, 'the answer is committed in the same moment as the permit').toBe(201);

    const retry = await create(srv.baseUrl, 'slow-2', body);
    expect([retry.status, retry.replayed, retry.body.id]).toEqual([201, 'true', seen!.permit_id]);
    expect(await permitsTitled(title)).toEqual([seen!.permit_id]);
    console.log(`[idempotency] process killed once the permit was visible; the first request was ${await inFlight}; the retry replayed 201 with the same id`);
  }, 60_000);

  it('IDEM-3: when the process holding a key freezes inside its transaction, then the retry is told it is still being processed, after the lease the key is free and the retry runs the write once, and the frozen process cannot commit its copy', async () => {
    proc = await startServerProcess(build.dir, srv.databaseUrl, { IDEMPOTENCY_LEASE_SECONDS: String(LEASE_SECONDS) });
    const title = 'Idempotency: frozen owner';
    const body = permitBody(ids, new Date(), { title });
    await holder.query('SELECT pg_advisory_lock($1)', [HOLD]);
    const inFlight = create(proc.base, 'hold-3', body);
    await waitForHeldAnswer();
    // Frozen, its socket open: PostgreSQL cannot tell it from a slow process.
    proc.child.kill('SIGSTOP');
    await holder.query('SELECT pg_advisory_unlock($1)', [HOLD]);
    const frozenAt = Date.now();

    const early = await create(srv.baseUrl, 'hold-3', body);
    expect(early.status).toBe(409);
    expect(early.body.error?.message).toMatch(/still being processed/);
    let retry = early;
    while (retry.status === 409 && Date.now() - frozenAt < 15_000) {
      await sleep(250);
      retry = await create(srv.baseUrl, 'hold-3', body);
    }
    const freedAfterMs = Date.now() - frozenAt;
    expect(retry.status, JSON.stringify(retry.body)).toBe(201);
    expect(freedAfterMs).toBeGreaterThanOrEqual(LEASE_SECONDS * 1000 - 250);

    proc.child.kill('SIGCONT');
    const late = await inFlight.then((r) => r.status, () => 0);
    expect(late, 'the frozen process does not answer success').not.toBe(201);
    expect(await permitsTitled(title)).toEqual([retry.body.id]);
    expect((await keyRow('hold-3'))?.body?.id).toBe(retry.body.id);
    await proc.stop();
    proc = null;
    console.log(`[idempotency] owner frozen with SIGSTOP; the key was free after ${freedAfterMs} ms (lease ${LEASE_SECONDS} s); its late answer was ${late}; one permit`);
  }, 60_000);

  it('IDEM-4: when the write is refused (bad input, or the service refuses it), then nothing is kept under the key: the same request is judged again (the same refusal, not a replay) and the corrected request with that key runs once', async () => {
    const title = 'Idempotency: corrected after a refusal';
    const bad = permitBody(ids, srv.clock.now(), { title: '' });
    const first = await create(srv.baseUrl, 'refused-1', bad);
    expect(first.status).toBe(400);
    expect(await keyRow('refused-1')).toBeUndefined();
    const repeat = await create(srv.baseUrl, 'refused-1', bad);
    expect([repeat.status, repeat.replayed]).toEqual([400, null]);

    const tooLong = permitBody(ids, srv.clock.now(), { title, validTo: new Date(srv.clock.now().getTime() + 1_000 * 3600_000).toISOString() });
    const refused = await create(srv.baseUrl, 'refused-2', tooLong);
    expect(refused.status).toBe(422);
    expect(await keyRow('refused-2')).toBeUndefined();
    expect(await permitsTitled(title)).toEqual([]);

    const corrected = permitBody(ids, srv.clock.now(), { title });
    const ok = await create(srv.baseUrl, 'refused-1', corrected);
    expect(ok.status, JSON.stringify(ok.body)).toBe(201);
    const replayed = await create(srv.baseUrl, 'refused-1', corrected);
    expect([replayed.status, replayed.replayed, replayed.body.id]).toEqual([201, 'true', ok.body.id]);
    expect(await permitsTitled(title)).toEqual([ok.body.id]);
  });

  it('IDEM-5: when two requests come with one key at once, then one write: the second is told the first is still being processed, and a later retry gets the first answer', async () => {
    const title = 'Idempotency: two at once';
    const body = permitBody(ids, srv.clock.now(), { title });
    await holder.query('SELECT pg_advisory_lock($1)', [HOLD]);
    const first = create(srv.baseUrl, 'hold-5', body);
    await waitForHeldAnswer();
    const second = await create(srv.baseUrl, 'hold-5', body);
    expect(second.status).toBe(409);
    expect(second.body.error?.message).toMatch(/still being processed/);
    await holder.query('SELECT pg_advisory_unlock($1)', [HOLD]);
    const answered = await first;
    expect(answered.status).toBe(201);
    const later = await create(srv.baseUrl, 'hold-5', body);
    expect([later.status, later.replayed, later.body.id]).toEqual([201, 'true', answered.body.id]);

    const burstTitle = 'Idempotency: eight at once';
    const burstBody = permitBody(ids, srv.clock.now(), { title: burstTitle });
    const burst = await Promise.all(Array.from({ length: 8 }, () => create(srv.baseUrl, 'burst-5', burstBody)));
    expect(burst.every((r) => r.status === 201 || (r.status === 409 && /still being processed/.test(r.body.error?.message ?? '')))).toBe(true);
    const written = await permitsTitled(burstTitle);
    expect(written).toHaveLength(1);
    expect(new Set(burst.filter((r) => r.status === 201).map((r) => r.body.id))).toEqual(new Set(written));
  });

  it('IDEM-7: when a kept answer holds a character the database\u2019s jsonb refuses (U+0000 read back from a broken CSV), then it is stored with the write and replayed exactly', async () => {
    const admin = await srv.signIn(users.admin);
    const utf16 = Buffer.from('\ufeffrecord_type,pipeline_code\n', 'utf16le');
    const send = () => admin.agent.post('/api/imports/assets?dryRun=true').set('x-csrf-token', admin.csrf).set('Idempotency-Key', 'nul-7').set('content-type', 'text/csv').send(utf16);
    const first = await send();
    expect(first.status, first.text).toBeLessThan(400);
    expect(first.text).toContain('\\u0000');
    const again = await send();
    expect([again.status, again.headers['idempotent-replayed'], again.text]).toEqual([first.status, 'true', first.text]);
  });

  it('IDEM-8: when a dossier built in the background is started with an Idempotency-Key, then the build starts once the request has committed and finishes', async () => {
    const crew = await signInCrew(srv);
    const permit = { id: await draftWithPlan(srv, crew, ids, { title: 'Idempotency: dossier in the background' }) };
    expect((await transition(crew.lead, permit.id, 'submit')).status).toBe(200);
    // More photos than a dossier builds before its answer (BACKGROUND_PHOTOS).
    for (let i = 0; i < BACKGROUND_PHOTOS + 2; i++) {
      const bytes = await QRCode.toBuffer(`photo ${i} of the bell hole`, { width: 300 });
      const id = randomUUID();
      const key = storageKey(ids.tenantId, permit.id, id);
      await objectStorage(srv.deps.config).put(key, bytes, 'image/png');
      await srv.deps.sequelize.query(
        `INSERT INTO attachments (id, tenant_id, permit_id, entity_type, entity_id, original_name, stored_name, content_type, size_bytes, sha256, uploaded_by, created_at)
         VALUES (:id, :tenantId, :permitId, 'permit', :permitId, :name, :key, 'image/png', :size, :sha, :by, :at)`,
        { replacements: { id, tenantId: ids.tenantId, permitId: permit.id, name: `bell hole ${i + 1}.png`, key, size: bytes.length, sha: createHash('sha256').update(bytes).digest('hex'), by: ids.leadUserId, at: srv.clock.now() } },
      );
    }
    const auditor = await SessionCookies.signIn(srv.baseUrl, users.auditor);
    const started = await auditor.send(srv.baseUrl, 'POST', `/api/permits/${permit.id}/dossier`, {}, { 'idempotency-key': 'dossier-8' });
    const first = (await started.json()) as { id: string; state: string };
    expect([started.status, first.state]).toEqual([202, 'running']);
    let job = first;
    for (const deadline = Date.now() + 60_000; job.state === 'running' && Date.now() < deadline; await sleep(100)) {
      job = (await (await auditor.send(srv.baseUrl, 'GET', `/api/permits/${permit.id}/dossier/${first.id}`)).json()) as typeof job;
    }
    expect(job.state).toBe('done');
    const again = await auditor.send(srv.baseUrl, 'POST', `/api/permits/${permit.id}/dossier`, {}, { 'idempotency-key': 'dossier-8' });
    expect([again.status, again.headers.get('idempotent-replayed'), ((await again.json()) as { id: string }).id]).toEqual([202, 'true', first.id]);
  }, 90_000);

  it('IDEM-6: when a key was left without an answer by an earlier version that stored answers after the write, then the retry is told plainly that the earlier try was cut off, not "still being processed" for ever', async () => {
    const body = permitBody(ids, srv.clock.now(), { title: 'Idempotency: stranded before the fix' });
    const requestHash = createHash('sha256').update(`POST /api/permits\n${canonicalJson(body)}`).digest('hex');
    await srv.deps.sequelize.query(
      `INSERT INTO idempotency_keys (tenant_id, user_id, key, request_hash, created_at) VALUES (:tenantId, :userId, 'stranded-6', :requestHash, now() - interval '10 minutes')`,
      { replacements: { tenantId: ids.tenantId, userId: ids.leadUserId, requestHash } },
    );
    const res = await create(srv.baseUrl, 'stranded-6', body);
    expect(res.status).toBe(409);
    expect(res.body.error?.message).toBe('An earlier try of this request was cut off and Holdpoint cannot tell whether it was saved. Check the permit, then enter it again if it is missing.');
  });
});
