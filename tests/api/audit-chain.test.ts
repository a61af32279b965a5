// The audit trail is append-only and hash-chained: the database refuses changes, and a change made
// behind its back (trigger disabled by the table owner) is found by GET /api/audit/verify.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { appendAudit, canonicalEventBytes, eventHash, verifyChain } from '../../server/src/modules/audit/audit.service';
import { withTenant } from '../../server/src/db/sequelize';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, transition } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, type Crew, type Ids } from '../fixtures/permit-journey';

describe('audit chain', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let id = '';
  const db = () => srv.deps.sequelize;
  const lastSeqOf = async (action: string) =>
    (await db().query<{ seq: number }>(`SELECT seq FROM audit_events WHERE permit_id = :id AND action = :action ORDER BY seq DESC LIMIT 1`, { replacements: { id, action }, type: QueryTypes.SELECT }))[0].seq;

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    id = await draftWithPlan(srv, crew, ids);
    await expectOk(await transition(crew.lead, id, 'submit'));
    await expectOk(await transition(crew.authoriser, id, 'reject', { reason: 'Add the drain points to the plan' }));
  });
  afterAll(() => srv.close());

  it('when nothing was touched, then the chain verifies', async () => {
    const res = await crew.auditor.get('/api/audit/verify');
    expect(res.status).toBe(200);
    expect(res.body.ok).toBe(true);
    expect(res.body.events).toBeGreaterThanOrEqual(4);
  });

  it('when the app’s own role updates, deletes, truncates audit events or disables the trigger, then the database refuses', async () => {
    // The server's login role (bound by row-level security), inside its tenant as the app would be.
    const app = srv.appDeps.sequelize;
    const asApp = (sql: string) => withTenant(app, ids.tenantId, () => app.query(sql, { replacements: { id } }));
    await expect(asApp(`UPDATE audit_events SET reason = 'nothing to see' WHERE permit_id = :id`)).rejects.toThrow(/permission denied/);
    await expect(asApp(`DELETE FROM audit_events WHERE permit_id = :id`)).rejects.toThrow(/permission denied/);
    await expect(asApp(`TRUNCATE audit_events`)).rejects.toThrow(/permission denied/);
    await expect(asApp(`ALTER TABLE audit_events DISABLE TRIGGER audit_events_append_only`)).rejects.toThrow(/must be owner/);
  });

  it('when even the table owner updates, deletes or truncates audit events, then the append-only trigger refuses', async () => {
    await expect(db().query(`UPDATE audit_events SET reason = 'nothing to see' WHERE permit_id = :id`, { replacements: { id } })).rejects.toThrow(/append-only/);
    await expect(db().query(`DELETE FROM audit_events WHERE permit_id = :id`, { replacements: { id } })).rejects.toThrow(/append-only/);
    await expect(db().query(`TRUNCATE audit_events CASCADE`)).rejects.toThrow(/append-only/);
    const [{ reason }] = await db().query<{ reason: string }>(`SELECT reason FROM audit_events WHERE permit_id = :id AND action = 'reject'`, { replacements: { id }, type: QueryTypes.SELECT });
    expect(reason).toBe('Add the drain points to the plan');
  });

  it('when an event is appended while the chain is being checked, then the check does not report it missing', async () => {
    // Append (and commit) one event right after the check has read its first page, before it ends.
    let appended = false;
    const sequelize = db();
    const interleaved = new Proxy(sequelize, {
      get(target, prop, receiver) {
        if (prop !== 'query') return Reflect.get(target, prop, receiver);
        return async (...args: Parameters<typeof sequelize.query>) => {
          const result = await (target.query as (...a: unknown[]) => Promise<unknown>)(...args);
          if (!appended && /FROM audit_events WHERE tenant_id = :tenantId AND seq >= :from/.test(String(args[0]))) {
            appended = true;
            await sequelize.transaction(() =>
              appendAudit(sequelize, { tenantId: ids.tenantId, entityType: 'permit', entityId: id, permitId: id, action: 'viewed_by_test', occurredAt: srv.clock.now() }),
            );
          }
          return result;
        };
      },
    });
    const report = await verifyChain(interleaved as typeof sequelize, ids.tenantId);
    expect(appended).toBe(true);
    expect(report).toMatchObject({ ok: true });
    expect((await crew.auditor.get('/api/audit/verify')).body.ok).toBe(true);
  });

  // Awkward but well-formed text: it must come back from PostgreSQL byte for byte and re-hash to the stored hash.
  const corpus: Record<string, string> = {
    'combining marks': 'Cafe\u0301 ma\u0308rker: re-check the n\u0303 valve',
    'right-to-left text and marks': 'صمام العزل \u202eabc\u202c שסתום',
    emoji: 'Vent 🔒 locked by 👷‍♀️ crew 🇬🇧',
    'control-free punctuation': 'quotes " \' \\ / and tabs\tinside',
    'long text': 'ä𝔘'.repeat(660),
  };
  const rehashes = (row: Parameters<typeof eventHash>[1] & { prev_hash: string; hash: string }) => eventHash(row.prev_hash, row) === row.hash;
  const readEvent = async (seq: number) =>
    (await db().query<Parameters<typeof eventHash>[1] & { prev_hash: string; hash: string }>(`SELECT * FROM audit_events WHERE tenant_id = :t AND seq = :seq`, { replacements: { t: ids.tenantId, seq }, type: QueryTypes.SELECT }))[0];

  it('finding 1: when a send-back reason is awkward but well-formed text, then it is stored exactly, re-hashes to its hash and the chain verifies', async () => {
    const permitId = await draftWithPlan(srv, crew, ids);
    for (const [label, reason] of Object.entries(corpus)) {
      await expectOk(await transition(crew.lead, permitId, 'submit'));
      const res = await transition(crew.authoriser, permitId, 'reject', { reason });
      expect(res.status, label).toBe(200);
      const [{ seq }] = await db().query<{ seq: number }>(`SELECT seq FROM audit_events WHERE permit_id = :id AND action = 'reject' ORDER BY seq DESC LIMIT 1`, {
        replacements: { id: permitId },
        type: QueryTypes.SELECT,
      });
      const row = await readEvent(seq);
      expect(Buffer.from(row.reason!, 'utf8').equals(Buffer.from(reason, 'utf8')), label).toBe(true);
      expect(rehashes(row), label).toBe(true);
    }
    expect((await crew.auditor.get('/api/audit/verify')).body).toMatchObject({ ok: true, breaks: [] });
  });

  it('finding 1: when a reason holds a lone surrogate or a NUL, then 400 naming the reason, no event is written and the chain still verifies', async () => {
    const [{ n: before }] = await db().query<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events WHERE tenant_id = :t`, { replacements: { t: ids.tenantId }, type: QueryTypes.SELECT });
    const draft = await draftWithPlan(srv, crew, ids);
    await expectOk(await transition(crew.lead, draft, 'submit'));
    const [{ n: submitted }] = await db().query<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events WHERE tenant_id = :t`, { replacements: { t: ids.tenantId }, type: QueryTypes.SELECT });
    expect(submitted).toBeGreaterThan(before);
    for (const reason of ['probe \ud800 text', 'probe \udc00', '\ude00\ud83d', 'probe \u0000 text']) {
      const res = await transition(crew.authoriser, draft, 'reject', { reason });
      expect(res.status).toBe(400);
      expect(res.body.error.details).toEqual([{ path: 'reason', message: expect.stringContaining('cannot be saved') }]);
      expect(res.body.error.message).toMatch(/broken or hidden character/);
    }
    const [{ n: after }] = await db().query<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events WHERE tenant_id = :t`, { replacements: { t: ids.tenantId }, type: QueryTypes.SELECT });
    expect(after).toBe(submitted);
    expect((await crew.auditor.get('/api/audit/verify')).body).toMatchObject({ ok: true });
  });

  it('finding 1: when an event carries 10 kB of text, jsonb-reordered keys, odd numbers and an upper-case id, then what PostgreSQL returns re-hashes to the stored hash', async () => {
    const tenKb = Object.values(corpus).join(' ').repeat(20).slice(0, 10_240);
    const data = { zeta: 1, alpha: { b: [1.0, 0.1 + 0.2, 1e21, -0, 5e-324], a: tenKb }, 'é': 'x', '10': true, emoji: corpus.emoji, none: null };
    const { seq, hash } = await db().transaction(() =>
      appendAudit(db(), {
        tenantId: ids.tenantId, entityType: 'permit', entityId: id.toUpperCase(), permitId: id, action: 'awkward_text_probe', reason: tenKb,
        actor: { userId: ids.leadUserId, name: corpus['right-to-left text and marks'], role: 'contractor_lead' }, data, occurredAt: new Date('2026-03-01T10:00:00.123Z'),
      }),
    );
    const row = await readEvent(seq);
    expect(row.hash).toBe(hash);
    expect(row.reason).toBe(tenKb);
    expect(Buffer.byteLength(row.reason!, 'utf8')).toBeGreaterThan(10_240);
    expect(row.entity_id).toBe(id);
    expect(rehashes(row)).toBe(true);
    expect(canonicalEventBytes(row).equals(canonicalEventBytes(await readEvent(seq)))).toBe(true);
    expect(await verifyChain(db(), ids.tenantId)).toMatchObject({ ok: true, breaks: [] });
  });

  it('finding 1: when several events are changed behind the trigger’s back, then verify reports every one of them, not only the first', async () => {
    const rows = await db().query<{ seq: number; reason: string | null; actor_name: string | null }>(
      `SELECT seq, reason, actor_name FROM audit_events WHERE tenant_id = :t ORDER BY seq LIMIT 3 OFFSET 1`,
      { replacements: { t: ids.tenantId }, type: QueryTypes.SELECT },
    );
    const [first, , third] = rows.map((r) => ({ ...r, seq: Number(r.seq) }));
    const rewrite = (sql: string, replacements: Record<string, unknown>) =>
      db().transaction(async () => {
        await db().query(`ALTER TABLE audit_events DISABLE TRIGGER audit_events_append_only`);
        await db().query(sql, { replacements: { t: ids.tenantId, ...replacements } });
        await db().query(`ALTER TABLE audit_events ENABLE TRIGGER audit_events_append_only`);
      });
    await rewrite(`UPDATE audit_events SET actor_name = 'Someone else' WHERE tenant_id = :t AND seq = :seq`, { seq: first.seq });
    await rewrite(`UPDATE audit_events SET reason = 'Approved by phone' WHERE tenant_id = :t AND seq = :seq`, { seq: third.seq });
    const res = await crew.auditor.get('/api/audit/verify');
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ ok: false, brokenAtSeq: first.seq, problem: 'the event was changed after it was written' });
    expect(res.body.breaks).toEqual([
      { seq: first.seq, problem: 'the event was changed after it was written' },
      { seq: third.seq, problem: 'the event was changed after it was written' },
    ]);
    // Put both back: the chain verifies again, so the later checks start from a clean trail.
    await rewrite(`UPDATE audit_events SET actor_name = :v WHERE tenant_id = :t AND seq = :seq`, { seq: first.seq, v: first.actor_name });
    await rewrite(`UPDATE audit_events SET reason = :v WHERE tenant_id = :t AND seq = :seq`, { seq: third.seq, v: third.reason });
    expect((await crew.auditor.get('/api/audit/verify')).body).toMatchObject({ ok: true, breaks: [] });
  });

  it('when the table owner disables the trigger and rewrites a reason, then verify answers ok:false at that event', async () => {
    const seq = await lastSeqOf('reject');
    // One transaction: the trigger is off only inside it, never for anyone else.
    await db().transaction(async () => {
      await db().query(`ALTER TABLE audit_events DISABLE TRIGGER audit_events_append_only`);
      await db().query(`UPDATE audit_events SET reason = 'Approved by phone' WHERE tenant_id = :t AND seq = :seq`, { replacements: { t: ids.tenantId, seq } });
      await db().query(`ALTER TABLE audit_events ENABLE TRIGGER audit_events_append_only`);
    });
    const res = await crew.auditor.get('/api/audit/verify');
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ ok: false, brokenAtSeq: seq, problem: 'the event was changed after it was written' });
    // The trigger is back on.
    await expect(db().query(`UPDATE audit_events SET reason = 'again' WHERE tenant_id = :t AND seq = :seq`, { replacements: { t: ids.tenantId, seq } })).rejects.toThrow(/append-only/);
  });

  it('when the last event is deleted behind the trigger’s back, then verify reports the end of the chain missing', async () => {
    const [{ max }] = await db().query<{ max: number }>(`SELECT max(seq) AS max FROM audit_events WHERE tenant_id = :t`, { replacements: { t: ids.tenantId }, type: QueryTypes.SELECT });
    // Restore the rewritten reason first, so only the deletion is left to find.
    await db().transaction(async () => {
      await db().query(`ALTER TABLE audit_events DISABLE TRIGGER audit_events_append_only`);
      await db().query(`UPDATE audit_events SET reason = 'Add the drain points to the plan' WHERE permit_id = :id AND action = 'reject'`, { replacements: { id } });
      await db().query(`DELETE FROM audit_events WHERE tenant_id = :t AND seq = :max`, { replacements: { t: ids.tenantId, max } });
      await db().query(`ALTER TABLE audit_events ENABLE TRIGGER audit_events_append_only`);
    });
    const res = await crew.auditor.get('/api/audit/verify');
    expect(res.body).toMatchObject({ ok: false, brokenAtSeq: max, problem: 'events at the end of the chain are missing' });
  });

  it('when an event is slipped in past the chain head (INSERT is allowed), then verify reports it', async () => {
    const [head] = await db().query<{ seq: number; last_hash: string }>(`SELECT seq, last_hash FROM audit_chain_heads WHERE tenant_id = :t`, { replacements: { t: ids.tenantId }, type: QueryTypes.SELECT });
    await db().query(
      `INSERT INTO audit_events (tenant_id, seq, entity_type, entity_id, permit_id, action, occurred_at, prev_hash, hash)
       VALUES (:t, :seq, 'permit', :id, :id, 'approve', now(), :prev, 'forged')`,
      { replacements: { t: ids.tenantId, seq: Number(head.seq) + 1, id, prev: head.last_hash } },
    );
    const res = await crew.auditor.get('/api/audit/verify');
    expect(res.body).toMatchObject({ ok: false, brokenAtSeq: Number(head.seq) + 1, problem: 'an event lies beyond the end of the chain' });
  });

  it('when the contractor lead asks to verify the chain, then 403', async () => {
    expect((await crew.lead.get('/api/audit/verify')).status).toBe(403);
  });
});
