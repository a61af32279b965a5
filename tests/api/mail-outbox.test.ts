// Mail goes through the outbox: transitions never wait for SMTP, queued mail survives an SMTP outage,
// and every queued mail is delivered exactly once when the mail server is back, even with two senders.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import pg from 'pg';
import { startMailCatcher } from '../../server/src/lib/mail-catcher';
import { deliverDueMail } from '../../server/src/lib/mailer';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, sign, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, type Crew } from '../fixtures/permit-journey';

interface OutboxRow {
  id: number;
  to_address: string;
  subject: string;
  status: string;
  attempts: number;
  last_error: string | null;
}

describe('mail outbox while the mail server is down and after it returns', () => {
  let srv: TestServer;
  let crew: Crew;
  let smtpPort = 0;
  let catcher: Awaited<ReturnType<typeof startMailCatcher>> | null = null;
  let id = '';
  const outbox = () => srv.deps.sequelize.query<OutboxRow>(`SELECT id, to_address, subject, status, attempts, last_error FROM mail_outbox ORDER BY id`, { type: QueryTypes.SELECT });
  // The sender runs as the server's own role, as the worker does.
  const deliver = () => deliverDueMail(srv.appDeps.sequelize, srv.appDeps.mailTransport, srv.appDeps.config.MAIL_FROM, srv.appDeps.logger);

  beforeAll(async () => {
    // Take a free loopback port from a catcher, then stop it: the port is closed while the server runs.
    const probe = await startMailCatcher();
    smtpPort = probe.port;
    await probe.stop();
    srv = await startTestServer({ smtpPort });
    crew = await signInCrew(srv);
    // Demo history may have left mail behind; this test counts only its own.
    await srv.deps.sequelize.query(`DELETE FROM mail_outbox`);
    id = await draftWithPlan(srv, crew, await demoIds(srv));
  });
  afterAll(async () => {
    await catcher?.stop();
    await srv.close();
  });

  it('when the mail server is unreachable, then transitions still succeed and their mail waits in the outbox', async () => {
    await expectOk(await transition(crew.lead, id, 'submit'));
    await expectOk(await transition(crew.authoriser, id, 'approve', sign(users.authoriser)));
    const rows = await outbox();
    // Submit tells both authorisers; approve tells the lead (who is also the requester: one mail).
    expect(rows.map((r) => r.to_address).sort()).toEqual([users.authoriser, users.authoriser2, users.lead].sort());
    expect(rows.every((r) => r.status === 'pending' && r.attempts === 0)).toBe(true);
  });

  it('when delivery is tried with the server down, then nothing is sent, attempts count up and the error is kept', async () => {
    expect(await deliver()).toBe(0);
    const rows = await outbox();
    const tried = rows.filter((r) => r.attempts > 0);
    expect(tried.length).toBeGreaterThan(0);
    for (const r of tried) {
      expect(r.status).toBe('pending');
      expect(r.last_error).toMatch(/ECONNREFUSED|connect/i);
    }
    // A transition made during the outage is not held up either.
    await expectOk(await transition(crew.lead, id, 'accept', sign(users.lead)));
    expect((await outbox()).length).toBeGreaterThan(rows.length);
  });

  it('when a row was tried and is backing off, then a delivery run skips it until it is due', async () => {
    const [tried] = (await outbox()).filter((r) => r.attempts > 0);
    const [due] = await srv.deps.sequelize.query<{ later: boolean }>(`SELECT next_attempt_at > now() AS later FROM mail_outbox WHERE id = :id`, {
      replacements: { id: tried.id },
      type: QueryTypes.SELECT,
    });
    expect(due.later).toBe(true);
  });

  it('when the mail server is back on the same port, then every queued mail arrives exactly once, even with two senders at once', async () => {
    catcher = await startMailCatcher(smtpPort);
    const received: string[] = [];
    catcher.tester.bind((_addr, _id, email) => {
      for (const to of Object.keys(email.receivers)) received.push(`${to} | ${String(email.headers.subject)}`);
    });
    // Rows that failed wait out their backoff (next_attempt_at, seconds of wall-clock time that the
    // test clock does not move); make them due now instead of sleeping.
    await srv.deps.sequelize.query(`UPDATE mail_outbox SET next_attempt_at = now() WHERE status = 'pending'`);
    const queued = (await outbox()).filter((r) => r.status === 'pending');
    expect(queued.length).toBeGreaterThanOrEqual(4);

    // Two workers at once (FOR UPDATE SKIP LOCKED), then two more runs with nothing left to do.
    const [a, b] = await Promise.all([deliver(), deliver()]);
    expect(a + b).toBe(queued.length);
    expect(await deliver()).toBe(0);
    expect(await deliver()).toBe(0);

    const expected = queued.map((r) => `${r.to_address} | ${r.subject}`).sort();
    expect(received.sort()).toEqual(expected);
    expect(new Set(received).size).toBe(received.length);
    const after = await outbox();
    expect(after.every((r) => r.status === 'sent')).toBe(true);
  });
});

describe('mail with sign-in and reset links, once sent, and who may read the outbox and the tokens', () => {
  let srv: TestServer;
  let catcher: Awaited<ReturnType<typeof startMailCatcher>>;
  let bramblecote = '';
  let harlow = '';
  const invitee = 'linnea.frost@fenwick-survey.example';
  const deliver = () => deliverDueMail(srv.appDeps.sequelize, srv.appDeps.mailTransport, srv.appDeps.config.MAIL_FROM, srv.appDeps.logger);
  const tenantOf = async (slug: string) =>
    (await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM tenants WHERE slug = :slug`, { replacements: { slug }, type: QueryTypes.SELECT }))[0].id;

  beforeAll(async () => {
    catcher = await startMailCatcher();
    srv = await startTestServer({ smtpPort: catcher.port });
    bramblecote = await tenantOf('bramblecote');
    harlow = await tenantOf('harlowridge');
    await srv.deps.sequelize.query(`DELETE FROM mail_outbox`);
  });
  afterAll(async () => {
    await srv?.close();
    await catcher?.stop();
  });

  it('finding 8: when an invitation and a reset mail have been delivered, then the outbox keeps no usable link, and the mailed links still work', async () => {
    const admin = await srv.signIn(users.admin);
    const [{ id: orgId }] = await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM organisations WHERE tenant_id = :t AND kind = 'operator'`, {
      replacements: { t: bramblecote },
      type: QueryTypes.SELECT,
    });
    expect((await admin.post('/api/invitations', { email: invitee, organisationId: orgId, role: 'auditor' })).status).toBe(202);
    expect((await (await srv.anonymous()).post('/api/auth/forgot-password', { email: users.tech2 })).status).toBe(200);
    const [inviteMail, resetMail] = [catcher.tester.captureOne(invitee, { wait: 5000 }), catcher.tester.captureOne(users.tech2, { wait: 5000 })];
    expect(await deliver()).toBe(2);
    const tokenIn = async (mail: typeof inviteMail) => (await mail).email.body!.match(/\?token=([A-Za-z0-9_-]+)/)![1];
    const [inviteToken, resetToken] = [await tokenIn(inviteMail), await tokenIn(resetMail)];

    const rows = await srv.deps.sequelize.query<{ status: string; text_body: string }>(`SELECT status, text_body FROM mail_outbox ORDER BY id`, { type: QueryTypes.SELECT });
    expect(rows.map((r) => r.status)).toEqual(['sent', 'sent']);
    for (const row of rows) {
      expect(row.text_body).not.toContain(inviteToken);
      expect(row.text_body).not.toContain(resetToken);
      expect(row.text_body).toMatch(/\?token=\(removed once the mail was sent\)/);
      expect(row.text_body).not.toMatch(/\?token=[A-Za-z0-9_-]{20,}/);
    }
    // Only the stored copy lost its link: the person who got the mail can still use it.
    const visitor = await srv.anonymous();
    expect((await visitor.post('/api/auth/accept-invitation', { token: inviteToken, name: 'Linnea Frost', password: 'frost-on-the-valve-9' })).status).toBe(200);
    expect((await visitor.post('/api/auth/reset-password', { token: resetToken, password: 'tech-two-new-password' })).status).toBe(200);
  });

  it('finding 8: when a mail with a link is given up after its last attempt, then its stored link is removed too', async () => {
    await srv.deps.sequelize.query(
      `INSERT INTO mail_outbox (tenant_id, to_address, subject, text_body, attempts) VALUES (:t, 'nowhere@fenwick-survey.example', 'Undeliverable', 'Open https://x.example/accept-invitation?token=abcdefghijklmnopqrstuvwxyz012345', 11)`,
      { replacements: { t: bramblecote } },
    );
    const broken = { sendMail: () => Promise.reject(new Error('mailbox unavailable')) } as unknown as Parameters<typeof deliverDueMail>[1];
    expect(await deliverDueMail(srv.appDeps.sequelize, broken, srv.appDeps.config.MAIL_FROM, srv.appDeps.logger)).toBe(0);
    const [row] = await srv.deps.sequelize.query<{ status: string; text_body: string }>(`SELECT status, text_body FROM mail_outbox WHERE subject = 'Undeliverable'`, { type: QueryTypes.SELECT });
    expect(row.status).toBe('failed');
    expect(row.text_body).not.toContain('abcdefghijklmnopqrstuvwxyz012345');
  });

  it("finding 16: when the server's own role works inside one tenant, then it reads neither another tenant's mail and invitations nor anybody's reset tokens", async () => {
    const owner = srv.deps.sequelize;
    await owner.query(
      `INSERT INTO mail_outbox (tenant_id, to_address, subject, text_body, status) VALUES (:h, 'x@harlow.example', 'Harlow mail', 'Harlow only', 'sent'),
         (:b, 'y@bramblecote.example', 'Bramblecote mail', 'Bramblecote only', 'sent'), (NULL, 'w@fenwick-survey.example', 'Account mail', 'No tenant', 'sent')`,
      { replacements: { h: harlow, b: bramblecote } },
    );
    await owner.query(
      `INSERT INTO auth_tokens (kind, token_hash, email, user_id, expires_at) SELECT 'reset', 'some-reset-hash', email, id, now() + interval '1 hour' FROM users WHERE email = :e`,
      { replacements: { e: users.auditor } },
    );
    const [{ id: harlowOrg }] = await owner.query<{ id: string }>(`SELECT id FROM organisations WHERE tenant_id = :h LIMIT 1`, { replacements: { h: harlow }, type: QueryTypes.SELECT });
    await owner.query(
      `INSERT INTO auth_tokens (kind, token_hash, email, tenant_id, organisation_id, role, expires_at) VALUES ('invite', 'harlow-invite-hash', 'z@harlow.example', :h, :o, 'auditor', now() + interval '1 day'),
         ('invite', 'bramblecote-invite-hash', 'v@fenwick-survey.example', :b, (SELECT id FROM organisations WHERE tenant_id = :b LIMIT 1), 'auditor', now() + interval '1 day')`,
      { replacements: { h: harlow, o: harlowOrg, b: bramblecote } },
    );
    const all = async (table: string) => (await owner.query<{ tenant_id: string | null }>(`SELECT tenant_id FROM ${table}`, { type: QueryTypes.SELECT })).map((r) => r.tenant_id);
    // The owner sees rows of both tenants and tenant-less reset rows: the probes below have something to miss.
    expect(new Set(await all('mail_outbox'))).toEqual(new Set([bramblecote, harlow, null]));
    expect(new Set(await all('auth_tokens'))).toEqual(new Set([bramblecote, harlow, null]));

    const c = new pg.Client({ connectionString: srv.appDeps.config.DATABASE_URL });
    await c.connect();
    try {
      const tenantsIn = async (table: string) => new Set((await c.query(`SELECT tenant_id FROM ${table}`)).rows.map((r) => r.tenant_id));
      expect(await tenantsIn('mail_outbox')).toEqual(new Set());
      expect(await tenantsIn('auth_tokens')).toEqual(new Set());
      await c.query('BEGIN');
      await c.query(`SELECT set_config('app.tenant_id', $1, true)`, [bramblecote]);
      expect(await tenantsIn('mail_outbox')).toEqual(new Set([bramblecote]));
      expect(await tenantsIn('auth_tokens')).toEqual(new Set([bramblecote]));
      expect((await c.query(`SELECT 1 FROM mail_outbox WHERE tenant_id = $1 OR tenant_id IS NULL`, [harlow])).rowCount).toBe(0);
      expect((await c.query(`SELECT 1 FROM auth_tokens WHERE kind = 'reset' OR token_hash = 'harlow-invite-hash'`)).rowCount).toBe(0);
      expect((await c.query(`UPDATE auth_tokens SET used_at = now() WHERE tenant_id = $1 OR tenant_id IS NULL`, [harlow])).rowCount).toBe(0);
      expect((await c.query(`DELETE FROM mail_outbox WHERE tenant_id = $1`, [harlow])).rowCount).toBe(0);
      await expect(c.query(`INSERT INTO mail_outbox (tenant_id, to_address, subject, text_body) VALUES ($1, 'a@b.example', 'Smuggled', 'x')`, [harlow])).rejects.toThrow(/row-level security/);
      await c.query('ROLLBACK');
      await expect(c.query('ALTER TABLE mail_outbox DISABLE ROW LEVEL SECURITY')).rejects.toThrow(/owner/);
    } finally {
      await c.end();
    }
    const [{ n }] = await owner.query<{ n: number }>(`SELECT count(*)::int AS n FROM auth_tokens WHERE token_hash = 'harlow-invite-hash' AND used_at IS NULL`, { type: QueryTypes.SELECT });
    expect(n).toBe(1);
  });

  it('finding 16: when the schema is inspected, then the outbox, the tokens and the reset-request log all have row-level security', async () => {
    const rows = await srv.deps.sequelize.query<{ relname: string; relrowsecurity: boolean }>(
      `SELECT relname, relrowsecurity FROM pg_class WHERE relname IN ('mail_outbox', 'auth_tokens', 'password_reset_requests') ORDER BY relname`,
      { type: QueryTypes.SELECT },
    );
    expect(rows).toEqual([
      { relname: 'auth_tokens', relrowsecurity: true },
      { relname: 'mail_outbox', relrowsecurity: true },
      { relname: 'password_reset_requests', relrowsecurity: true },
    ]);
  });
});
