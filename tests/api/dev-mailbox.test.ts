// The development mailbox (/dev/mail) holds every mail the demo sends, reset and invitation links
// included: it is there only when switched on, and shows each signed-in person only their share.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { deliverDueMail } from '../../server/src/lib/mailer';
import { startDevMailbox, type DevMailbox } from '../../server/src/modules/dev-mail/dev-mailbox';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { users } from '../fixtures/permit-fixtures';

const invitee = 'juniper.hale@fenwick-survey.example';
const harlowSubject = 'Harlow Ridge notice for its authoriser';

async function waitForMail(mailbox: DevMailbox, count: number) {
  for (let i = 0; i < 100 && mailbox.messages.length < count; i++) await new Promise((r) => setTimeout(r, 50));
  expect(mailbox.messages.length).toBeGreaterThanOrEqual(count);
}

describe('finding 2: the development mailbox when it is switched on', () => {
  let srv: TestServer;
  let mailbox: DevMailbox;

  beforeAll(async () => {
    mailbox = await startDevMailbox(0);
    srv = await startTestServer({ smtpPort: mailbox.port, devMailbox: mailbox, env: { DEV_MAILBOX: 'on' } });
    const db = srv.deps.sequelize;
    const [{ id: harlowId }] = await db.query<{ id: string }>(`SELECT id FROM tenants WHERE slug = 'harlowridge'`, { type: QueryTypes.SELECT });
    const [{ id: operatorId }] = await db.query<{ id: string }>(
      `SELECT o.id FROM organisations o JOIN tenants t ON t.id = o.tenant_id WHERE t.slug = 'bramblecote' AND o.kind = 'operator'`,
      { type: QueryTypes.SELECT },
    );
    // Three kinds of mail: an invitation Bramblecote sent, a reset link of one person, and another tenant's mail.
    const admin = await srv.signIn(users.admin);
    expect((await admin.post('/api/invitations', { email: invitee, organisationId: operatorId, role: 'auditor' })).status).toBe(202);
    expect((await (await srv.anonymous()).post('/api/auth/forgot-password', { email: users.control })).status).toBe(200);
    await db.query(`INSERT INTO mail_outbox (tenant_id, to_address, subject, text_body) VALUES (:t, :to, :subject, 'Harlow Ridge only.')`, {
      replacements: { t: harlowId, to: users.otherTenant, subject: harlowSubject },
    });
    // The sender runs as the server's own role, as the worker does.
    expect(await deliverDueMail(srv.appDeps.sequelize, srv.appDeps.mailTransport, srv.appDeps.config.MAIL_FROM, srv.appDeps.logger)).toBe(3);
    await waitForMail(mailbox, 3);
  });
  afterAll(async () => {
    await srv?.close();
    await mailbox?.stop();
  });

  it('when nobody is signed in, then /dev/mail answers 401 with a sign-in link and shows no mail', async () => {
    const res = await (await srv.anonymous()).get('/dev/mail');
    expect(res.status).toBe(401);
    expect(res.text).toMatch(/sign in/i);
    expect(res.text).not.toMatch(/token=|Reset your Holdpoint password|You are invited|Harlow Ridge notice/);
  });

  it('when a person is signed in, then they see the reset link sent to them and nobody else’s mail', async () => {
    const control = await srv.signIn(users.control);
    const res = await control.get('/dev/mail');
    expect(res.status).toBe(200);
    expect(res.headers['cache-control']).toBe('no-store');
    expect(res.text).toContain('Reset your Holdpoint password');
    expect(res.text).toMatch(/reset-password\?token=/);
    expect(res.text).not.toContain(invitee);
    expect(res.text).not.toContain(harlowSubject);
  });

  it("when the tenant admin is signed in, then they see the invitation their tenant sent but not a member's reset link or another tenant's mail", async () => {
    const admin = await srv.signIn(users.admin);
    const res = await admin.get('/dev/mail');
    expect(res.status).toBe(200);
    expect(res.text).toContain(`To ${invitee}`);
    expect(res.text).toMatch(/accept-invitation\?token=/);
    expect(res.text).not.toContain('Reset your Holdpoint password');
    expect(res.text).not.toContain(harlowSubject);
  });

  it("when someone of the other tenant is signed in, then they see their own tenant's mail to them and none of Bramblecote's", async () => {
    const other = await srv.signIn(users.otherTenant);
    const res = await other.get('/dev/mail');
    expect(res.status).toBe(200);
    expect(res.text).toContain(harlowSubject);
    expect(res.text).not.toMatch(/token=/);
    expect(res.text).not.toContain(invitee);
  });

  it('when the session has ended, then the page asks to sign in again and shows no mail', async () => {
    const control = await srv.signIn(users.control);
    srv.clock.advanceMinutes(31);
    try {
      const res = await control.get('/dev/mail');
      expect(res.status).toBe(401);
      expect(res.text).not.toMatch(/token=/);
    } finally {
      srv.clock.advanceMinutes(-31);
    }
  });
});

describe('finding 2: the development mailbox when DEV_MAILBOX is not on', () => {
  let srv: TestServer;
  let mailbox: DevMailbox;
  beforeAll(async () => {
    mailbox = await startDevMailbox(0);
    srv = await startTestServer({ smtpPort: mailbox.port, devMailbox: mailbox });
    expect((await (await srv.anonymous()).post('/api/auth/forgot-password', { email: users.control })).status).toBe(200);
    await deliverDueMail(srv.appDeps.sequelize, srv.appDeps.mailTransport, srv.appDeps.config.MAIL_FROM, srv.appDeps.logger);
    await waitForMail(mailbox, 1);
  });
  afterAll(async () => {
    await srv?.close();
    await mailbox?.stop();
  });

  it('when the server runs with the default DEV_MAILBOX=off, then /dev/mail does not exist, even for a signed-in person', async () => {
    for (const client of [await srv.anonymous(), await srv.signIn(users.control)]) {
      const res = await client.get('/dev/mail');
      expect(res.status).toBe(404);
      expect(res.text).not.toMatch(/token=/);
    }
  });
});
