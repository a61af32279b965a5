// Who the caller is, by address: X-Forwarded-For counts only when it comes from a proxy named in
// TRUST_PROXY, and only a real IP address reaches the audit trail.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, users } from '../fixtures/permit-fixtures';

const limits = { perIp: 4, perAccount: 1000, windowMs: 10 * 60_000 };

async function failedSignIn(srv: TestServer, forwardedFor: string, n: number) {
  const client = await srv.anonymous();
  return client.post('/api/auth/sign-in', { email: `nobody-${n}@example.com`, password: 'not the password at all' }).set('X-Forwarded-For', forwardedFor);
}

/** Creates a permit with the given X-Forwarded-For and answers the address its audit event holds. */
async function recordedAddress(srv: TestServer, lead: ApiClient, forwardedFor: string) {
  const ids = await demoIds(srv);
  const res = await lead.post('/api/permits', permitBody(ids, srv.clock.now())).set('X-Forwarded-For', forwardedFor);
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  const [row] = await srv.deps.sequelize.query<{ ip: string | null }>(`SELECT ip FROM audit_events WHERE entity_id = :id AND action = 'created'`, {
    replacements: { id: res.body.id },
    type: QueryTypes.SELECT,
  });
  return row.ip;
}

describe('finding 4: X-Forwarded-For with the default setting (no proxy trusted)', () => {
  let srv: TestServer;
  let lead: ApiClient;
  beforeAll(async () => {
    srv = await startTestServer({ authLimits: limits });
    // The one sign-in the test needs counts against 127.0.0.1 like every attempt below.
    lead = await srv.signIn(users.lead);
  });
  afterAll(() => srv?.close());

  it('when a client forges a new X-Forwarded-For on every sign-in attempt, then the per-IP limit still counts them as one address', async () => {
    for (let n = 1; n < limits.perIp; n++) expect((await failedSignIn(srv, `198.51.100.${n}`, n)).status).toBe(401);
    const res = await failedSignIn(srv, '198.51.100.250', 99);
    expect(res.status).toBe(429);
    expect(res.body.error.code).toBe('rate_limited');
  });

  it('when a client sends X-Forwarded-For, then the audit trail records the address it connected from, not the header', async () => {
    expect(await recordedAddress(srv, lead, '203.0.113.9')).toBe('127.0.0.1');
    expect(await recordedAddress(srv, lead, '<script>alert(1)</script>')).toBe('127.0.0.1');
  });
});

describe('finding 4: X-Forwarded-For with TRUST_PROXY=loopback', () => {
  let srv: TestServer;
  let lead: ApiClient;
  beforeAll(async () => {
    srv = await startTestServer({ authLimits: limits, env: { TRUST_PROXY: 'loopback' } });
    lead = await srv.signIn(users.lead);
  });
  afterAll(() => srv?.close());

  it('when the trusted proxy forwards the client address, then the audit trail records that address', async () => {
    expect(await recordedAddress(srv, lead, '203.0.113.9')).toBe('203.0.113.9');
    expect(await recordedAddress(srv, lead, '198.51.100.7, 203.0.113.9')).toBe('203.0.113.9');
  });

  it('when the trusted proxy forwards text that is not an IP address, then nothing is recorded as the address', async () => {
    expect(await recordedAddress(srv, lead, 'not-an-address')).toBeNull();
  });

  it('when the trusted proxy forwards the client address, then the per-IP limit counts each client address on its own', async () => {
    for (let n = 0; n < limits.perIp; n++) expect((await failedSignIn(srv, '198.51.100.20', n)).status).toBe(401);
    expect((await failedSignIn(srv, '198.51.100.20', 50)).status).toBe(429);
    expect((await failedSignIn(srv, '198.51.100.21', 51)).status).toBe(401);
  });
});

describe('the per-address limit as a setting', () => {
  let srv: TestServer;
  beforeAll(async () => {
    srv = await startTestServer({ env: { SIGN_IN_LIMIT_PER_IP: '3' } });
  });
  afterAll(() => srv?.close());

  it('when SIGN_IN_LIMIT_PER_IP is 3, then the fourth sign-in attempt from one address is refused with 429', async () => {
    for (let n = 1; n <= 3; n++) expect((await failedSignIn(srv, '198.51.100.7', n)).status).toBe(401);
    const res = await failedSignIn(srv, '198.51.100.7', 4);
    expect(res.status).toBe(429);
    expect(res.body.error.code).toBe('rate_limited');
  });
});
