// Issue 21, the audit log a regulator trusts: the tenant-wide log (scoped, paged, filtered, in words),
// the chain check run in the background, the export re-checked by the standalone verifier with no
// database, and signed checkpoints that a rewritten or re-signed history fails against.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { generateKeyPairSync, sign } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { QueryTypes } from 'sequelize';
import { eventHash } from '../../server/src/modules/audit/audit.service';
import { checkpointPayload, runCheckpointRound } from '../../server/src/modules/audit/checkpoints';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, type Crew, type Ids } from '../fixtures/permit-journey';

const root = fileURLToPath(new URL('../..', import.meta.url));

/** The answer as text, whatever its content type (JSON Lines is not one supertest reads by itself). */
const download = (client: ApiClient, path: string) =>
  client
    .get(path)
    .buffer(true)
    .parse((res, done) => {
      let text = '';
      res.setEncoding('utf8');
      res.on('data', (chunk: string) => (text += chunk));
      res.on('end', () => done(null, text));
    });

describe('issue 21: the audit log', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let id = '';
  let dir = '';
  const db = () => srv.deps.sequelize;
  const one = async <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    (await db().query<T>(sql, { replacements, type: QueryTypes.SELECT }))[0];

  const verifier = (...args: string[]) => spawnSync(process.execPath, [join(root, 'scripts/audit-verify.mjs'), ...args], { encoding: 'utf8', cwd: root });

  /** Exports the whole trail as JSON Lines into a file and returns its path. */
  const exportAll = async (name: string) => {
    const res = await download(crew.auditor, '/api/audit/export?format=jsonl');
    expect(res.status).toBe(200);
    const file = join(dir, name);
    writeFileSync(file, res.body as string);
    return file;
  };

  const checkChain = async () => {
    const started = await crew.auditor.post('/api/audit/chain-checks');
    expect(started.status).toBe(202);
    for (let i = 0; i < 200; i++) {
      const res = await crew.auditor.get('/api/audit/chain-checks/latest');
      expect(res.status).toBe(200);
      expect(res.body.id).toBe(started.body.id);
      if (res.body.status !== 'running') return res.body;
      await new Promise((r) => setTimeout(r, 50));
    }
    throw new Error('the chain check did not finish');
  };

  /** As the table owner, with the append-only trigger off: what someone with the database's rights could do. */
  const asOwnerBehindTheTrigger = async (fn: () => Promise<unknown>) => {
    await db().query(`ALTER TABLE audit_events DISABLE TRIGGER audit_events_append_only`);
    try {
      await fn();
    } finally {
      await db().query(`ALTER TABLE audit_events ENABLE TRIGGER audit_events_append_only`);
    }
  };

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    id = await draftWithPlan(srv, crew, ids);
    await expectOk(await transition(crew.lead, id, 'submit'));
    await expectOk(await transition(crew.authoriser, id, 'reject', { reason: 'Add the drain points to the plan' }));
    await db().query(`UPDATE tenants SET settings = settings || '{"recordsEmail": "records@bramblecote.example"}'::jsonb WHERE id = :t`, { replacements: { t: ids.tenantId } });
    dir = mkdtempSync(join(tmpdir(), 'audit-export-'));
  });
  afterAll(async () => {
    await srv.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('issue 21 audit 1: when the auditor pages and filters the log, then only their tenant’s events come, newest first, in words', async () => {
    const { n } = await one<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events WHERE tenant_id = :t`, { t: ids.tenantId });
    expect(n).toBeGreaterThanOrEqual(4);
    const page = await crew.auditor.get('/api/audit/events?pageSize=2&page=2');
    expect(page.status).toBe(200);
    expect(page.body).toMatchObject({ total: n, page: 2, pageSize: 2 });
    expect(page.body.items).toHaveLength(2);
    const { seq: head } = await one<{ seq: number }>(`SELECT seq FROM audit_chain_heads WHERE tenant_id = :t`, { t: ids.tenantId });
    expect(page.body.items[0].seq).toBe(Number(head) - 2);
    const seqs = page.body.items.map((e: { seq: number }) => e.seq);
    expect(seqs).toEqual([...seqs].sort((a, b) => b - a));

    const ofPermit = await crew.auditor.get(`/api/audit/events?permitId=${id}`);
    const { n: permitEvents } = await one<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events WHERE permit_id = :id`, { id });
    expect(ofPermit.body.total).toBe(permitEvents);
    const reject = ofPermit.body.items.find((e: { action: string }) => e.action === 'reject');
    expect(reject).toMatchObject({ reason: 'Add the drain points to the plan', permitNumber: expect.any(String) });
    expect(reject.change).toMatch(/→/);
    expect(reject.change).not.toMatch(/_/);

    const { id: authoriserId } = await one<{ id: string }>(`SELECT id FROM users WHERE email = :e`, { e: users.authoriser });
    const byWho = await crew.auditor.get(`/api/audit/events?actor=${authoriserId}&kind=reject&permitId=${id}`);
    expect(byWho.body.total).toBe(1);
    expect(byWho.body.items[0]).toMatchObject({ actorUserId: authoriserId, action: 'reject', actionLabel: expect.not.stringMatching(/_/) });

    const later = new Date(srv.clock.now().getTime() + 3_600_000).toISOString();
    expect((await crew.auditor.get(`/api/audit/events?from=${encodeURIComponent(later)}`)).body.total).toBe(0);
    const earlier = new Date(srv.clock.now().getTime() - 3_600_000).toISOString();
    expect((await crew.auditor.get(`/api/audit/events?permitId=${id}&from=${encodeURIComponent(earlier)}&to=${encodeURIComponent(later)}`)).body.total).toBe(permitEvents);

    // Another tenant's auditor-level reader sees none of it, even naming the permit.
    const outsider = await srv.signIn(users.otherTenant);
    const theirs = await outsider.get(`/api/audit/events?permitId=${id}`);
    expect(theirs.status).toBe(200);
    expect(theirs.body.total).toBe(0);
  });

  it('issue 21 audit 2: when the log is asked with bad filters, then it answers 400 naming each, never 500', async () => {
    for (const query of ['from=yesterday', 'permitId=12', 'kind=DROP%20TABLE', 'tenantId=x', `from=2026-12-02T10:00:00Z&to=2026-12-01T10:00:00Z`, 'pageSize=5000']) {
      const res = await crew.auditor.get(`/api/audit/events?${query}`);
      expect(res.status, query).toBe(400);
      expect(res.body.error.code).toBe('validation_failed');
      expect(res.body.error.details.length, query).toBeGreaterThan(0);
    }
    expect((await crew.auditor.get('/api/audit/export?format=pdf')).status).toBe(400);
    expect((await crew.lead.get('/api/audit/events')).status).toBe(403);
    expect((await crew.lead.get('/api/audit/export')).status).toBe(403);
  });

  it('issue 21 audit 3: when the trail is exported as JSON Lines, then the standalone verifier re-checks it and it extends the signed checkpoint', async () => {
    const cp = await crew.auditor.post('/api/audit/checkpoints');
    expect(cp.status).toBe(201);
    const key = await srv.request.get('/api/audit/public-key');
    expect(key.status).toBe(200);
    expect(key.body).toMatchObject({ algorithm: 'Ed25519', keyId: cp.body.keyId });
    writeFileSync(join(dir, 'checkpoint.json'), JSON.stringify({ payload: cp.body.payload, signature: cp.body.signature }));
    writeFileSync(join(dir, 'key.pem'), key.body.pem);
    expect(JSON.parse(cp.body.payload)).toEqual({ hash: cp.body.hash, seq: cp.body.seq, tenant: ids.tenantId, time: cp.body.signedAt });

    // Mailed to the records address through the outbox.
    const mail = await one<{ to_address: string; text_body: string }>(`SELECT to_address, text_body FROM mail_outbox WHERE dedupe_key = :k`, { k: `audit-checkpoint:${cp.body.id}` });
    expect(mail.to_address).toBe('records@bramblecote.example');
    expect(mail.text_body).toContain(cp.body.signature);
    expect((await crew.auditor.get('/api/audit/checkpoints')).body.map((c: { id: string }) => c.id)).toContain(cp.body.id);

    // One more event after the checkpoint: the export must still extend it.
    await expectOk(await transition(crew.lead, id, 'submit'));
    const file = await exportAll('whole.jsonl');
    const { n } = await one<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events WHERE tenant_id = :t`, { t: ids.tenantId });
    expect(readFileSync(file, 'utf8').trim().split('\n')).toHaveLength(n);
    const plain = verifier(file);
    expect(plain.stdout).toContain('every hash and link is correct');
    expect(plain.status).toBe(0);
    const anchored = verifier(file, '--checkpoint', join(dir, 'checkpoint.json'), '--public-key', join(dir, 'key.pem'));
    expect(anchored.stdout).toContain(`The export extends the checkpoint`);
    expect(anchored.status).toBe(0);

    // A filtered export: each entry still checks on its own.
    const filtered = await download(crew.auditor, `/api/audit/export?format=jsonl&permitId=${id}`);
    writeFileSync(join(dir, 'permit.jsonl'), filtered.body as string);
    const partial = verifier(join(dir, 'permit.jsonl'));
    expect(partial.status).toBe(0);

    const csv = await download(crew.auditor, `/api/audit/export?format=csv&permitId=${id}`);
    expect(csv.status).toBe(200);
    expect(csv.headers['content-type']).toMatch(/text\/csv/);
    const lines = (csv.body as string).trim().split('\r\n');
    expect(lines[0]).toMatch(/^Entry,Time \(site\),Time \(UTC\),Kind,Change/);
    expect(lines.some((l) => l.includes('Add the drain points to the plan'))).toBe(true);
  });

  it('issue 21 audit 4: when the chain is checked in the background, then it reports the last event verified; the tenant interval signs a checkpoint once per period', async () => {
    const check = await checkChain();
    const { seq } = await one<{ seq: number }>(`SELECT seq FROM audit_chain_heads WHERE tenant_id = :t`, { t: ids.tenantId });
    expect(check).toMatchObject({ status: 'done', ok: true, breaks: [], lastSeq: Number(seq), checked: Number(seq) });
    expect((await crew.auditor.get('/api/audit/chain-checks/latest')).body.id).toBe(check.id);

    const count = async () => (await one<{ n: number }>(`SELECT count(*)::int AS n FROM audit_checkpoints WHERE tenant_id = :t AND reason = 'interval'`, { t: ids.tenantId })).n;
    const before = await count();
    await runCheckpointRound(srv.appDeps);
    const once = await count();
    expect(once).toBe(before + 1);
    await runCheckpointRound(srv.appDeps);
    expect(await count()).toBe(once);
    const now = srv.clock.now();
    srv.clock.advanceMinutes(25 * 60);
    await runCheckpointRound(srv.appDeps);
    srv.clock.set(now);
    expect(await count()).toBe(once + 1);
  });

  it('issue 21 audit 8: when a permit is printed, then the copy carries the chain head signed at printing, as text and QR code, and the same head printed again gives no second checkpoint', async () => {
    const pdfOf = async () => {
      const res = await crew.auditor.agent
        .get(`/api/permits/${id}/pdf`)
        .buffer(true)
        .parse((r, done) => {
          const chunks: Buffer[] = [];
          r.on('data', (c: Buffer) => chunks.push(c));
          r.on('end', () => done(null, Buffer.concat(chunks)));
        });
      expect(res.status).toBe(200);
      const file = join(dir, 'permit.pdf');
      writeFileSync(file, res.body as Buffer);
      const r = spawnSync('pdftotext', ['-enc', 'UTF-8', file, '-'], { encoding: 'utf8' });
      expect(r.status).toBe(0);
      return r.stdout.replace(/\s+/g, ' ');
    };
    const text = await pdfOf();
    const head = await one<{ seq: number; last_hash: string }>(`SELECT seq, last_hash FROM audit_chain_heads WHERE tenant_id = :t`, { t: ids.tenantId });
    const signed = await one<{ n: number }>(`SELECT count(*)::int AS n FROM audit_checkpoints WHERE tenant_id = :t AND seq = :seq AND hash = :hash`, { t: ids.tenantId, seq: head.seq, hash: head.last_hash });
    expect(signed.n).toBeGreaterThan(0);
    expect(text).toContain('Signed audit checkpoint');
    expect(text).toContain(`Hash: ${head.last_hash}`);
    const { n } = await one<{ n: number }>(`SELECT count(*)::int AS n FROM audit_checkpoints WHERE tenant_id = :t`, { t: ids.tenantId });
    await pdfOf();
    expect((await one<{ n: number }>(`SELECT count(*)::int AS n FROM audit_checkpoints WHERE tenant_id = :t`, { t: ids.tenantId })).n).toBe(n);
  });

  it('issue 21 audit 5: when a row is changed in the database with the trigger disabled, then the UI check and the verifier both name that event', async () => {
    const { seq, reason } = await one<{ seq: number; reason: string }>(`SELECT seq, reason FROM audit_events WHERE permit_id = :id AND action = 'reject'`, { id });
    await asOwnerBehindTheTrigger(() => db().query(`UPDATE audit_events SET reason = 'Approved as drawn' WHERE permit_id = :id AND action = 'reject'`, { replacements: { id } }));
    try {
      const check = await checkChain();
      expect(check.ok).toBe(false);
      expect(check.breaks).toContainEqual({ seq: Number(seq), problem: 'the event was changed after it was written' });
      const result = verifier(await exportAll('changed.jsonl'));
      expect(result.status).toBe(1);
      expect(result.stdout).toContain(`Entry ${seq} was changed after it was written`);
    } finally {
      await asOwnerBehindTheTrigger(() => db().query(`UPDATE audit_events SET reason = :reason WHERE permit_id = :id AND action = 'reject'`, { replacements: { id, reason } }));
    }
    expect((await checkChain()).ok).toBe(true);
  });

  it('issue 21 audit 6: when history before the last signed checkpoint is rewritten with every hash recomputed, then the chain alone still links but the checkpoint catches it', async () => {
    const cp = await crew.auditor.post('/api/audit/checkpoints');
    writeFileSync(join(dir, 'latest-checkpoint.json'), JSON.stringify({ payload: cp.body.payload, signature: cp.body.signature }));
    const { seq: from } = await one<{ seq: number }>(`SELECT seq FROM audit_events WHERE permit_id = :id AND action = 'reject'`, { id });
    await asOwnerBehindTheTrigger(async () => {
      // The reason rewritten, then every hash from there to the head recomputed, as someone with the owner's rights but no key would.
      await db().query(`UPDATE audit_events SET reason = 'Approved as drawn' WHERE tenant_id = :t AND seq = :from`, { replacements: { t: ids.tenantId, from } });
      const rows = await db().query<Record<string, unknown> & { seq: number; hash: string; prev_hash: string }>(
        `SELECT seq, tenant_id, entity_type, entity_id, permit_id, action, from_state, to_state, actor_user_id, actor_name, actor_role, membership_id, reason, ip, data, occurred_at, prev_hash, hash
         FROM audit_events WHERE tenant_id = :t AND seq >= :from ORDER BY seq`,
        { replacements: { t: ids.tenantId, from }, type: QueryTypes.SELECT },
      );
      let prev = rows[0].prev_hash;
      for (const { hash: _h, prev_hash: _p, ...fields } of rows) {
        const hash = eventHash(prev, { ...(fields as Parameters<typeof eventHash>[1]), seq: Number(fields.seq) });
        await db().query(`UPDATE audit_events SET prev_hash = :prev, hash = :hash WHERE tenant_id = :t AND seq = :seq`, { replacements: { prev, hash, t: ids.tenantId, seq: fields.seq } });
        prev = hash;
      }
      await db().query(`UPDATE audit_chain_heads SET last_hash = :prev WHERE tenant_id = :t`, { replacements: { prev, t: ids.tenantId } });
    });
    // The hash chain alone cannot tell (the limit docs/security.md names) ...
    expect((await crew.auditor.get('/api/audit/verify')).body.ok).toBe(true);
    expect(verifier(await exportAll('rewritten.jsonl')).status).toBe(0);
    // ... the signed checkpoints can: in the UI check, and in the verifier with the mailed copy.
    const check = await checkChain();
    expect(check.ok).toBe(false);
    expect(check.breaks.some((b: { seq: number; problem: string }) => b.seq === cp.body.seq && /differs from the one signed in the checkpoint/.test(b.problem))).toBe(true);
    const result = verifier(join(dir, 'rewritten.jsonl'), '--checkpoint', join(dir, 'latest-checkpoint.json'), '--public-key', join(dir, 'key.pem'));
    expect(result.status).toBe(1);
    expect(result.stdout).toContain(`Entry ${cp.body.seq} differs from the one signed in the checkpoint`);
  });

  it('issue 21 audit 7: when an event is appended with the owner’s rights and the head re-signed without Holdpoint’s key, then the re-signed checkpoint does not verify', async () => {
    const head = await one<{ seq: number; last_hash: string }>(`SELECT seq, last_hash FROM audit_chain_heads WHERE tenant_id = :t`, { t: ids.tenantId });
    const seq = Number(head.seq) + 1;
    const occurredAt = srv.clock.now();
    const forged = {
      tenant_id: ids.tenantId, seq, entity_type: 'permit', entity_id: id, permit_id: id, action: 'approve', from_state: 'submitted', to_state: 'approved',
      actor_user_id: null, actor_name: 'A. Nobody', actor_role: 'authoriser', membership_id: null, reason: null, ip: null, data: {}, occurred_at: occurredAt,
    };
    const hash = eventHash(head.last_hash, forged);
    await db().query(
      `INSERT INTO audit_events (tenant_id, seq, entity_type, entity_id, permit_id, action, from_state, to_state, actor_name, actor_role, data, occurred_at, prev_hash, hash)
       VALUES (:tenant_id, :seq, :entity_type, :entity_id, :permit_id, :action, :from_state, :to_state, :actor_name, :actor_role, '{}'::jsonb, :occurred_at, :prev, :hash);
       UPDATE audit_chain_heads SET seq = :seq, last_hash = :hash WHERE tenant_id = :tenant_id`,
      { replacements: { ...forged, prev: head.last_hash, hash } },
    );
    // A checkpoint of the forged head, signed with a key of the forger's own.
    const { privateKey } = generateKeyPairSync('ed25519');
    const payload = checkpointPayload(ids.tenantId, seq, hash, occurredAt);
    const signature = sign(null, Buffer.from(payload), privateKey).toString('base64');
    const { keyId } = (await srv.request.get('/api/audit/public-key')).body;
    await db().query(
      `INSERT INTO audit_checkpoints (tenant_id, seq, hash, signed_at, reason, payload, signature, key_id) VALUES (:t, :seq, :hash, :at, 'interval', :payload, :signature, :keyId)`,
      { replacements: { t: ids.tenantId, seq, hash, at: occurredAt, payload, signature, keyId } },
    );
    writeFileSync(join(dir, 'forged-checkpoint.json'), JSON.stringify({ payload, signature }));
    const file = await exportAll('appended.jsonl');
    const result = verifier(file, '--checkpoint', join(dir, 'forged-checkpoint.json'), '--public-key', join(dir, 'key.pem'));
    expect(result.status).toBe(1);
    expect(result.stdout).toContain('signature does not verify with this public key');
    const check = await checkChain();
    expect(check.breaks).toContainEqual({ seq, problem: expect.stringMatching(/does not carry Holdpoint’s signature|does not carry Holdpoint's signature/) });
  });
});
