import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import pg from 'pg';
import { startMailCatcher } from '../../server/src/lib/mail-catcher';
import { deliverDueMail } from '../../server/src/lib/mailer';
import { DEMO_PASSWORD, startTestServer, type TestServer } from '../fixtures/test-server';

let srv: TestServer;
let catcher: Awaited<ReturnType<typeof startMailCatcher>>;
let oxbowId: string;
let operatorId: string;

/** The server's mail worker is off in tests: send the outbox now, then read the mail as it arrived over SMTP. */
async function mailTo(address: string) {
  await deliverDueMail(srv.deps.sequelize, srv.deps.mailTransport, srv.deps.config.MAIL_FROM, srv.deps.logger);
  const { email } = await catcher.tester.captureOne(address, { wait: 5000 });
  return { subject: String(email.headers.subject), body: email.body ?? '', from: String(email.headers.from) };
}

function linkIn(body: string, page: 'accept-invitation' | 'reset-password') {
  const m = body.match(new RegExp(`(https?://\\S+/${page}\\?token=([A-Za-z0-9_-]+))`));
  if (!m) throw new Error(`no ${page} link in:\n${body}`);
  return { url: m[1], token: m[2] };
}

async function invite(email: string, organisationId = oxbowId, role = 'isolation_technician') {
  const admin = await srv.signIn('admin@bramblecote.example');
  const res = await admin.post('/api/invitations', { email, organisationId, role });
  expect(res.status, JSON.stringify(res.body)).toBe(202);
  return res;
}

const outboxCount = async (address: string) =>
  (await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM mail_outbox WHERE lower(to_address) = lower(:address)`, { replacements: { address }, type: QueryTypes.SELECT }))[0].n;

beforeAll(async () => {
  catcher = await startMailCatcher();
  srv = await startTestServer({ smtpPort: catcher.port });
  const orgs = await srv.deps.sequelize.query<{ id: string; kind: string }>(
    `SELECT o.id, o.kind FROM organisations o JOIN tenants t ON t.id = o.tenant_id WHERE t.slug = 'bramblecote'`,
    { type: QueryTypes.SELECT },
  );
  oxbowId = orgs.find((o) => o.kind === 'contractor')!.id;
  operatorId = orgs.find((o) => o.kind === 'operator')!.id;
});

afterAll(async () => {
  await srv?.close();
  await catcher?.stop();
});

describe('invitation', () => {
  it('when the tenant admin invites someone new, then the mailed link lets them choose a name and password, sign in and see their role', async () => {
    await invite('Rhiannon.Vale@fenwick-survey.example');
    const mail = await mailTo('rhiannon.vale@fenwick-survey.example');
    expect(mail.subject).toBe('You are invited to Bramblecote Midstream on Holdpoint');
    expect(mail.from).toContain('no-reply@holdpoint.example');
    expect(mail.body).toContain('Oxbow Line Repair');
    const link = linkIn(mail.body, 'accept-invitation');
    expect(link.url.startsWith(`${srv.deps.config.PUBLIC_URL}/accept-invitation?token=`)).toBe(true);

    const visitor = await srv.anonymous();
    const accepted = await visitor.post('/api/auth/accept-invitation', { token: link.token, name: 'Rhiannon Vale', password: 'blue-kettle-morning-7' });
    expect(accepted.status, JSON.stringify(accepted.body)).toBe(200);

    const she = await srv.signIn('rhiannon.vale@fenwick-survey.example', 'blue-kettle-morning-7');
    const me = await she.get('/api/auth/me');
    expect(me.body.user).toMatchObject({ email: 'rhiannon.vale@fenwick-survey.example', name: 'Rhiannon Vale' });
    expect(me.body.memberships).toEqual([expect.objectContaining({ tenantName: 'Bramblecote Midstream', organisationName: 'Oxbow Line Repair', role: 'isolation_technician' })]);
    expect(me.body.activeTenant.name).toBe('Bramblecote Midstream');
    // A technician reads permits, not the qualifications register.
    expect((await she.get('/api/qualifications')).status).toBe(403);
  });

  it('when the invitation link is used a second time, then it is refused', async () => {
    await invite('once.only@fenwick-survey.example');
    const { token } = linkIn((await mailTo('once.only@fenwick-survey.example')).body, 'accept-invitation');
    const visitor = await srv.anonymous();
    expect((await visitor.post('/api/auth/accept-invitation', { token, name: 'Once Only', password: 'first-choice-password' })).status).toBe(200);
    const again = await visitor.post('/api/auth/accept-invitation', { token, name: 'Someone Else', password: 'second-choice-password' });
    expect(again.status).toBe(422);
    expect(again.body.error).toMatchObject({ code: 'unprocessable', message: expect.stringMatching(/not valid or has already been used/) });
    // The second attempt changed nothing: the first password still works.
    await srv.signIn('once.only@fenwick-survey.example', 'first-choice-password');
  });

  it('when the token is made up, then it is refused the same way as a used one', async () => {
    const visitor = await srv.anonymous();
    const res = await visitor.post('/api/auth/accept-invitation', { token: 'x'.repeat(43), name: 'Nobody', password: 'made-up-password-1' });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/not valid or has already been used/);
  });

  it('when the e-mail already has an account, then accepting needs its current password and adds the role without changing the password', async () => {
    await invite('authoriser@harlowridge.example', operatorId, 'auditor');
    const { token } = linkIn((await mailTo('authoriser@harlowridge.example')).body, 'accept-invitation');
    const visitor = await srv.anonymous();

    const wrong = await visitor.post('/api/auth/accept-invitation', { token, name: 'Wren Ashdown', password: 'not-her-password-at-all' });
    expect(wrong.status).toBe(400);
    expect(wrong.body.error.details).toEqual([{ path: 'password', message: expect.stringMatching(/current password/i) }]);

    // The refusal did not use up the link.
    const right = await visitor.post('/api/auth/accept-invitation', { token, name: 'Someone Else Entirely', password: DEMO_PASSWORD });
    expect(right.status, JSON.stringify(right.body)).toBe(200);

    const wren = await srv.signIn('authoriser@harlowridge.example', DEMO_PASSWORD);
    const me = (await wren.get('/api/auth/me')).body;
    expect(me.user.name).toBe('Wren Ashdown');
    expect(me.memberships.map((m: { tenantName: string; role: string }) => `${m.tenantName}: ${m.role}`).sort()).toEqual(['Bramblecote Midstream: auditor', 'Harlow Ridge Gas: authoriser']);
  });

  it('when the invitation is older than 72 hours, then it is refused as expired', async () => {
    await invite('late.reader@fenwick-survey.example');
    const { token } = linkIn((await mailTo('late.reader@fenwick-survey.example')).body, 'accept-invitation');
    srv.clock.advanceMinutes(73 * 60);
    try {
      const visitor = await srv.anonymous();
      const res = await visitor.post('/api/auth/accept-invitation', { token, name: 'Late Reader', password: 'too-late-password-9' });
      expect(res.status).toBe(422);
      expect(res.body.error.message).toMatch(/expired/i);
      const users = await srv.deps.sequelize.query(`SELECT 1 FROM users WHERE email = 'late.reader@fenwick-survey.example'`, { type: QueryTypes.SELECT });
      expect(users).toHaveLength(0);
    } finally {
      srv.clock.advanceMinutes(-73 * 60);
    }
  });
});

describe('password reset', () => {
  it('when someone asks for a reset, then the answer is the same for a known and an unknown address and only the known one gets mail', async () => {
    const visitor = await srv.anonymous();
    const known = await visitor.post('/api/auth/forgot-password', { email: 'control@bramblecote.example' });
    const unknown = await visitor.post('/api/auth/forgot-password', { email: 'nobody.here@fenwick-survey.example' });
    expect(known.status).toBe(200);
    expect(unknown.status).toBe(known.status);
    expect(unknown.body).toEqual(known.body);

    expect(await outboxCount('control@bramblecote.example')).toBe(1);
    expect(await outboxCount('nobody.here@fenwick-survey.example')).toBe(0);
    const mail = await mailTo('control@bramblecote.example');
    expect(mail.subject).toBe('Reset your Holdpoint password');
    linkIn(mail.body, 'reset-password');
    await expect(catcher.tester.captureOne('nobody.here@fenwick-survey.example', { wait: 300 })).rejects.toThrow(/No message/);
  });

  it('when the password is reset, then every existing session of that person ends, the new password works and the old one does not', async () => {
    const earlier = await srv.signIn('auditor@bramblecote.example');
    expect((await earlier.get('/api/auth/me')).status).toBe(200);

    const visitor = await srv.anonymous();
    await visitor.post('/api/auth/forgot-password', { email: 'Auditor@Bramblecote.example' });
    const { token } = linkIn((await mailTo('auditor@bramblecote.example')).body, 'reset-password');
    const reset = await visitor.post('/api/auth/reset-password', { token, password: 'fresh-start-password-4' });
    expect(reset.status, JSON.stringify(reset.body)).toBe(200);

    const after = await earlier.get('/api/auth/me');
    expect(after.status).toBe(401);
    await srv.signIn('auditor@bramblecote.example', 'fresh-start-password-4');
    const old = await (await srv.anonymous()).post('/api/auth/sign-in', { email: 'auditor@bramblecote.example', password: DEMO_PASSWORD });
    expect(old.status).toBe(401);

    const twice = await visitor.post('/api/auth/reset-password', { token, password: 'another-password-55' });
    expect(twice.status).toBe(422);
  });

  it('when the reset link is more than an hour old, then it is refused as expired', async () => {
    const visitor = await srv.anonymous();
    await visitor.post('/api/auth/forgot-password', { email: 'lead@oxbow-repair.example' });
    const { token } = linkIn((await mailTo('lead@oxbow-repair.example')).body, 'reset-password');
    srv.clock.advanceMinutes(61);
    try {
      const res = await visitor.post('/api/auth/reset-password', { token, password: 'too-late-password-8' });
      expect(res.status).toBe(422);
      expect(res.body.error.message).toMatch(/expired/i);
      await srv.signIn('lead@oxbow-repair.example', DEMO_PASSWORD);
    } finally {
      srv.clock.advanceMinutes(-61);
    }
  });

  it('when an invitation token is sent to the reset page, then it is refused', async () => {
    await invite('wrong.page@fenwick-survey.example');
    const { token } = linkIn((await mailTo('wrong.page@fenwick-survey.example')).body, 'accept-invitation');
    const res = await (await srv.anonymous()).post('/api/auth/reset-password', { token, password: 'wrong-page-password-3' });
    expect(res.status).toBe(422);
  });
});

describe('reset links and requests under abuse', () => {
  const resetTokensOf = (email: string) =>
    srv.deps.sequelize.query<{ used: boolean }>(`SELECT used_at IS NOT NULL AS used FROM auth_tokens WHERE kind = 'reset' AND lower(email) = lower(:email)`, {
      replacements: { email },
      type: QueryTypes.SELECT,
    });

  it('finding 7: when someone asked for two reset links and used the newer one, then the older link is refused too', async () => {
    const visitor = await srv.anonymous();
    expect((await visitor.post('/api/auth/forgot-password', { email: 'tech@oxbow-repair.example' })).status).toBe(200);
    const older = linkIn((await mailTo('tech@oxbow-repair.example')).body, 'reset-password').token;
    expect((await visitor.post('/api/auth/forgot-password', { email: 'tech@oxbow-repair.example' })).status).toBe(200);
    const newer = linkIn((await mailTo('tech@oxbow-repair.example')).body, 'reset-password').token;
    expect(older).not.toBe(newer);

    expect((await visitor.post('/api/auth/reset-password', { token: newer, password: 'newer-link-password-1' })).status).toBe(200);
    const stale = await visitor.post('/api/auth/reset-password', { token: older, password: 'older-link-password-2' });
    expect(stale.status).toBe(422);
    expect(stale.body.error).toMatchObject({ code: 'unprocessable', message: expect.stringMatching(/not valid or has already been used/) });
    expect(await resetTokensOf('tech@oxbow-repair.example')).toEqual([{ used: true }, { used: true }]);
    await srv.signIn('tech@oxbow-repair.example', 'newer-link-password-1');
  });

  it('finding 9: when one address asks for a reset again and again, then after three in an hour it is told to wait, the same for a known and an unknown address', async () => {
    const known = 'authoriser2@bramblecote.example';
    const unknown = 'nobody.at.all@fenwick-survey.example';
    const visitor = await srv.anonymous();
    const ask = (email: string) => visitor.post('/api/auth/forgot-password', { email });
    try {
      for (let i = 0; i < 3; i++) {
        const [a, b] = [await ask(known), await ask(unknown)];
        expect([a.status, b.status]).toEqual([200, 200]);
        expect(b.body).toEqual(a.body);
      }
      const [a, b] = [await ask(known), await ask(unknown)];
      expect(a.status).toBe(429);
      expect(a.body).toEqual({ error: { code: 'rate_limited', message: 'Too many reset requests for this address. Wait 60 minutes and try again.', details: [] } });
      expect(Number(a.headers['retry-after'])).toBe(3600);
      expect(b.status).toBe(a.status);
      expect(b.body).toEqual(a.body);
      expect(b.headers['retry-after']).toBe(a.headers['retry-after']);
      expect(await outboxCount(known)).toBe(3);
      expect(await outboxCount(unknown)).toBe(0);
      // Another address is not held up by this one.
      expect((await ask('someone.else@fenwick-survey.example')).status).toBe(200);

      srv.clock.advanceMinutes(61);
      expect((await ask(known)).status).toBe(200);
      expect((await ask(unknown)).status).toBe(200);
      expect(await outboxCount(known)).toBe(4);
    } finally {
      srv.clock.advanceMinutes(-61);
    }
  });

  it('finding 14: when a reset is asked for a known and an unknown address, then the server sends the very same SQL statements for both', async () => {
    const realQuery = pg.Client.prototype.query;
    let seen: string[] | null = null;
    pg.Client.prototype.query = function (this: pg.Client, ...args: unknown[]) {
      const sql = typeof args[0] === 'string' ? args[0] : (args[0] as { text?: string })?.text;
      // Values differ (the address, the token); the statements must not.
      if (seen && sql) seen.push(sql.replace(/'(?:[^']|'')*'/g, '?').replace(/\s+/g, ' ').trim());
      return (realQuery as (...a: unknown[]) => unknown).apply(this, args);
    } as typeof pg.Client.prototype.query;
    const statementsOf = async (email: string) => {
      const visitor = await srv.anonymous();
      seen = [];
      const res = await visitor.post('/api/auth/forgot-password', { email });
      const done = seen;
      seen = null;
      expect(res.status).toBe(200);
      return done;
    };
    try {
      const runs = [];
      for (let i = 0; i < 3; i++) runs.push(await statementsOf('tech2@oxbow-repair.example'), await statementsOf('no.one.here@fenwick-survey.example'));
      console.log(`forgot-password: ${runs[0].length} statement(s) per request, known and unknown address alike`);
      expect(runs[0].length).toBeGreaterThan(0);
      for (const run of runs) expect(run).toEqual(runs[0]);
    } finally {
      pg.Client.prototype.query = realQuery;
    }
    // The work the statements did differs only inside the database: mail for the known address alone.
    expect(await outboxCount('tech2@oxbow-repair.example')).toBe(3);
    expect(await outboxCount('no.one.here@fenwick-survey.example')).toBe(0);
  });
});
