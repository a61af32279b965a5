// Finding H3: accepting an invitation to an address that already has an account asks for that account's
// password. Failed tries are limited per invitation too, not only per client address, so guesses
// spread over many addresses run out.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { DEMO_PASSWORD, startTestServer, type TestServer } from '../fixtures/test-server';
import { users } from '../fixtures/permit-fixtures';

let srv: TestServer;
let organisationId: string;

/** Invites `email` to Bramblecote and answers the token from the queued mail. */
async function invitationFor(email: string) {
  const admin = await srv.signIn(users.admin);
  const res = await admin.post('/api/invitations', { email, organisationId, role: 'auditor' });
  expect(res.status, JSON.stringify(res.body)).toBe(202);
  const [mail] = await srv.deps.sequelize.query<{ text_body: string }>(
    `SELECT text_body FROM mail_outbox WHERE lower(to_address) = lower(:email) ORDER BY id DESC LIMIT 1`,
    { replacements: { email }, type: QueryTypes.SELECT },
  );
  return /accept-invitation\?token=([A-Za-z0-9_-]+)/.exec(mail.text_body)![1];
}

beforeAll(async () => {
  // Behind a trusted proxy each try may come from its own client address.
  srv = await startTestServer({ env: { TRUST_PROXY: 'loopback' } });
  const [org] = await srv.deps.sequelize.query<{ id: string }>(
    `SELECT o.id FROM organisations o JOIN tenants t ON t.id = o.tenant_id WHERE t.slug = 'bramblecote' AND o.kind = 'operator'`,
    { type: QueryTypes.SELECT },
  );
  organisationId = org.id;
});
afterAll(() => srv?.close());

describe('finding H3: failed tries per invitation', () => {
  it('finding H3: when an invitation\'s password is guessed wrong ten times from ten addresses, then the eleventh try from another address is refused with 429 and Retry-After, and other invitations are not held up', async () => {
    const token = await invitationFor(users.otherTenant);
    const visitor = await srv.anonymous();
    const attempt = (n: number, password: string) =>
      visitor.post('/api/auth/accept-invitation', { token, name: 'Wren Ashdown', password }).set('X-Forwarded-For', `198.51.100.${n}`);

    for (let n = 1; n <= 10; n++) {
      const res = await attempt(n, `wrong-guess-number-${n}`);
      expect(res.status, JSON.stringify(res.body)).toBe(400);
    }
    const refused = await attempt(11, 'wrong-guess-number-11');
    expect(refused.status).toBe(429);
    expect(refused.body).toEqual({ error: { code: 'rate_limited', message: 'Too many failed tries with this invitation. Wait 15 minutes and try again.', details: [] } });
    const retryAfter = Number(refused.headers['retry-after']);
    expect(retryAfter).toBeGreaterThan(0);
    expect(retryAfter).toBeLessThanOrEqual(15 * 60);
    // While it is held, even the right password waits: a guesser learns nothing from the answer.
    expect((await attempt(12, DEMO_PASSWORD)).status).toBe(429);

    // Another invitation, from one of the same addresses, is accepted at once.
    const other = await invitationFor('new.reader@fenwick-survey.example');
    const accepted = await visitor
      .post('/api/auth/accept-invitation', { token: other, name: 'New Reader', password: 'a-fresh-long-password-4' })
      .set('X-Forwarded-For', '198.51.100.1');
    expect(accepted.status, JSON.stringify(accepted.body)).toBe(200);
  });
});
