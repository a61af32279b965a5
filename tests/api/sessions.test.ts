import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import type { Response } from 'supertest';
import { DEMO_PASSWORD, startTestServer, type TestServer } from '../fixtures/test-server';
import { users } from '../fixtures/permit-fixtures';

/** `name=value` of one cookie the response set, and the attributes that came with it. */
function setCookie(res: Response, name: string) {
  const raw = ([] as string[]).concat(res.headers['set-cookie'] ?? []).find((c) => c.startsWith(`${name}=`));
  if (!raw) return null;
  const [pair, ...attrs] = raw.split(';').map((s) => s.trim());
  return { pair, value: pair.slice(name.length + 1), attrs: attrs.map((a) => a.toLowerCase()), raw };
}

let srv: TestServer;

/** Signs in with hand-made cookies so the test sees and controls every cookie. */
async function rawSignIn(email: string, extraCookie?: string) {
  const csrfRes = await srv.request.get('/api/auth/csrf').set('Cookie', extraCookie ?? '');
  const csrf = setCookie(csrfRes, 'hp.csrf')!;
  const res = await srv.request
    .post('/api/auth/sign-in')
    .set('Cookie', [csrf.pair, ...(extraCookie ? [extraCookie] : [])].join('; '))
    .set('x-csrf-token', csrfRes.body.csrfToken)
    .send({ email, password: DEMO_PASSWORD });
  return { res, sid: setCookie(res, 'hp.sid'), csrfPair: csrf.pair, csrfToken: csrfRes.body.csrfToken as string };
}

const me = (sidPair: string) => srv.request.get('/api/auth/me').set('Cookie', sidPair);

beforeAll(async () => {
  srv = await startTestServer();
});
afterAll(async () => {
  await srv?.close();
});

describe('session cookie', () => {
  it('when someone signs in over http, then the session cookie is hp.sid, HttpOnly, SameSite=Lax, Path=/ and not Secure', async () => {
    const { res, sid } = await rawSignIn('auditor@bramblecote.example');
    expect(res.status).toBe(200);
    expect(sid, 'hp.sid cookie set at sign-in').not.toBeNull();
    expect(sid!.attrs).toContain('httponly');
    expect(sid!.attrs).toContain('samesite=lax');
    expect(sid!.attrs).toContain('path=/');
    expect(sid!.attrs).not.toContain('secure');
    expect(sid!.value.startsWith('s%3A'), 'the id is signed').toBe(true);
  });

  it('when the CSRF token is handed out, then its cookie is HttpOnly, SameSite=Lax, Path=/', async () => {
    const res = await srv.request.get('/api/auth/csrf');
    const c = setCookie(res, 'hp.csrf')!;
    expect(c.attrs).toEqual(expect.arrayContaining(['httponly', 'samesite=lax', 'path=/']));
    expect(c.attrs).not.toContain('secure');
    expect(res.body.csrfToken).toBe(decodeURIComponent(c.value));
  });

  it('when nobody has signed in, then asking for a CSRF token starts no session', async () => {
    const res = await srv.request.get('/api/auth/csrf');
    expect(setCookie(res, 'hp.sid')).toBeNull();
  });
});

describe('session fixation', () => {
  it('when someone signs in carrying a session id another person knows, then they get a new id and the known one never becomes theirs', async () => {
    // The attacker's own session, planted in the victim's browser.
    const attacker = await rawSignIn('control@bramblecote.example');
    const planted = attacker.sid!.pair;

    const victim = await rawSignIn('admin@bramblecote.example', planted);
    expect(victim.res.status).toBe(200);
    expect(victim.sid, 'a new session cookie at sign-in').not.toBeNull();
    expect(victim.sid!.pair).not.toBe(planted);

    const withPlanted = await me(planted);
    if (withPlanted.status === 200) expect(withPlanted.body.user.email).not.toBe('admin@bramblecote.example');
    else expect(withPlanted.status).toBe(401);
    const withNew = await me(victim.sid!.pair);
    expect(withNew.status).toBe(200);
    expect(withNew.body.user.email).toBe('admin@bramblecote.example');

    // The CSRF token the attacker's session handed out does not carry over into the victim's session.
    const post = (csrfPair: string, token: string) =>
      srv.request.post('/api/organisations').set('Cookie', `${victim.sid!.pair}; ${csrfPair}`).set('x-csrf-token', token).send({ name: 'Fixation Test Ltd', kind: 'contractor' });
    expect((await post(attacker.csrfPair, attacker.csrfToken)).status).toBe(403);
    expect((await post(victim.csrfPair, victim.csrfToken)).status).toBe(403);
    const fresh = await srv.request.get('/api/auth/csrf').set('Cookie', victim.sid!.pair);
    expect((await post(setCookie(fresh, 'hp.csrf')!.pair, fresh.body.csrfToken)).status).toBe(201);
  });

  it('when the same browser signs in again, then the session id changes', async () => {
    const client = await srv.signIn('auditor@bramblecote.example');
    const first = await client.get('/api/auth/me');
    expect(first.status).toBe(200);
    const before = (await srv.deps.sequelize.query<{ sid: string }>(`SELECT sid FROM http_sessions WHERE sess->>'userId' = :id`, { replacements: { id: first.body.user.id }, type: QueryTypes.SELECT })).map((r) => r.sid);
    const again = await client.post('/api/auth/sign-in', { email: 'auditor@bramblecote.example', password: DEMO_PASSWORD });
    expect(again.status).toBe(200);
    const sid = setCookie(again, 'hp.sid')!;
    const id = decodeURIComponent(sid.value).slice(2).split('.')[0];
    expect(before).not.toContain(id);
  });
});

describe('timeouts (injected clock)', () => {
  it('when a signed-in person is idle for 29 minutes, then the session still works and the idle time starts again', async () => {
    const { sid } = await rawSignIn('auditor@bramblecote.example');
    srv.clock.advanceMinutes(29);
    expect((await me(sid!.pair)).status).toBe(200);
    srv.clock.advanceMinutes(29); // 58 minutes after sign-in, 29 after the last request
    expect((await me(sid!.pair)).status).toBe(200);
  });

  it('when a signed-in person is idle for 31 minutes, then the next request answers 401 and the session is gone for good', async () => {
    const { sid } = await rawSignIn('auditor@bramblecote.example');
    srv.clock.advanceMinutes(31);
    const res = await me(sid!.pair);
    expect(res.status).toBe(401);
    expect(res.body).toEqual({ error: { code: 'unauthenticated', message: expect.stringMatching(/session has ended/i), details: [] } });
    srv.clock.advanceMinutes(-31);
    expect((await me(sid!.pair)).status).toBe(401);
    srv.clock.advanceMinutes(31);
  });

  it('when a person keeps working, then the session still ends 12 hours after sign-in', async () => {
    const { sid } = await rawSignIn('auditor@bramblecote.example');
    let elapsed = 0;
    while (elapsed + 25 <= 12 * 60) {
      srv.clock.advanceMinutes(25);
      elapsed += 25;
      expect((await me(sid!.pair)).status, `${elapsed} minutes after sign-in`).toBe(200);
    }
    srv.clock.advanceMinutes(25);
    const res = await me(sid!.pair);
    expect(res.status, `${elapsed + 25} minutes after sign-in`).toBe(401);
    expect(res.body.error.code).toBe('unauthenticated');
  });
});

describe('sign-out', () => {
  it('when someone signs out, then the old session cookie no longer works and the cookie is cleared', async () => {
    const { sid, csrfPair, csrfToken } = await rawSignIn('auditor@bramblecote.example');
    expect((await me(sid!.pair)).status).toBe(200);
    const out = await srv.request.post('/api/auth/sign-out').set('Cookie', `${csrfPair}; ${sid!.pair}`).set('x-csrf-token', csrfToken);
    expect(out.status).toBe(204);
    const cleared = setCookie(out, 'hp.sid');
    expect(cleared, 'the response clears hp.sid').not.toBeNull();
    expect(cleared!.value).toBe('');
    const after = await me(sid!.pair);
    expect(after.status).toBe(401);
    expect(after.body.error.code).toBe('unauthenticated');
  });
});

describe('CSRF', () => {
  it('when a state-changing request carries no x-csrf-token header, then 403 csrf_failed', async () => {
    const client = await srv.signIn('admin@bramblecote.example');
    const res = await client.agent.post('/api/organisations').send({ name: 'No Token Ltd', kind: 'contractor' });
    expect(res.status).toBe(403);
    expect(res.body).toEqual({ error: { code: 'csrf_failed', message: expect.any(String), details: [] } });
  });

  it('when the header and cookie carry a made-up token, then 403 csrf_failed', async () => {
    const { sid } = await rawSignIn('admin@bramblecote.example');
    const forged = 'bm90LWEtbm9uY2U.bm90LWEtc2lnbmF0dXJl';
    const res = await srv.request.post('/api/organisations').set('Cookie', `${sid!.pair}; hp.csrf=${forged}`).set('x-csrf-token', forged).send({ name: 'Forged Ltd', kind: 'contractor' });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('csrf_failed');
  });

  it('when the header does not match the cookie, then 403 csrf_failed', async () => {
    const { sid, csrfPair } = await rawSignIn('admin@bramblecote.example');
    const other = (await srv.request.get('/api/auth/csrf')).body.csrfToken as string;
    const res = await srv.request.post('/api/organisations').set('Cookie', `${sid!.pair}; ${csrfPair}`).set('x-csrf-token', other).send({ name: 'Mismatch Ltd', kind: 'contractor' });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('csrf_failed');
  });

  it('when a validly signed token from another browser is planted in a signed-in session, then 403 csrf_failed', async () => {
    const { sid } = await rawSignIn('admin@bramblecote.example');
    // The attacker fetches a token of their own and plants it as cookie and header.
    const theirs = await srv.request.get('/api/auth/csrf');
    const planted = setCookie(theirs, 'hp.csrf')!;
    const res = await srv.request.post('/api/organisations').set('Cookie', `${sid!.pair}; ${planted.pair}`).set('x-csrf-token', theirs.body.csrfToken).send({ name: 'Planted Ltd', kind: 'contractor' });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('csrf_failed');
  });

  it('when a signed-in page reloads and asks for the token again, then the token it gets still works', async () => {
    const { sid } = await rawSignIn('admin@bramblecote.example');
    const again = await srv.request.get('/api/auth/csrf').set('Cookie', sid!.pair);
    const cookie = setCookie(again, 'hp.csrf')!;
    const res = await srv.request.post('/api/organisations').set('Cookie', `${sid!.pair}; ${cookie.pair}`).set('x-csrf-token', again.body.csrfToken).send({ name: 'Reloaded Page Ltd', kind: 'contractor' });
    expect(res.status).toBe(201);
  });

  it('when the token is right, then the same request succeeds (the refusals above are about the token alone)', async () => {
    const client = await srv.signIn('admin@bramblecote.example');
    const res = await client.post('/api/organisations', { name: 'Proper Token Ltd', kind: 'contractor' });
    expect(res.status).toBe(201);
  });
});

describe('tenant switch', () => {
  let harlowId: string;
  let bramblecoteId: string;

  beforeAll(async () => {
    const db = srv.deps.sequelize;
    const [harlow] = await db.query<{ id: string; org: string }>(
      `SELECT t.id, o.id AS org FROM tenants t JOIN organisations o ON o.tenant_id = t.id AND o.kind = 'contractor' WHERE t.slug = 'harlowridge'`,
      { type: QueryTypes.SELECT },
    );
    const [bramblecote] = await db.query<{ id: string }>(`SELECT id FROM tenants WHERE slug = 'bramblecote'`, { type: QueryTypes.SELECT });
    harlowId = harlow.id;
    bramblecoteId = bramblecote.id;
    // Sam (technician + gas tester at Bramblecote) also works for Oxbow at Harlow Ridge, as a technician only.
    await db.query(
      `INSERT INTO memberships (tenant_id, organisation_id, user_id, role)
       SELECT :tenantId, :orgId, id, 'isolation_technician' FROM users WHERE email = 'tech@oxbow-repair.example'`,
      { replacements: { tenantId: harlow.id, orgId: harlow.org } },
    );
  });

  it('when a person with roles in two tenants switches, then 200 and /me shows the new active tenant and its rules', async () => {
    const client = await srv.signIn('tech@oxbow-repair.example');
    const before = await client.get('/api/auth/me');
    expect(before.body.activeTenant.name).toBe('Bramblecote Midstream');
    expect(new Set(before.body.memberships.map((m: { tenantId: string }) => m.tenantId))).toEqual(new Set([bramblecoteId, harlowId]));

    const res = await client.post('/api/auth/switch-tenant', { tenantId: harlowId });
    expect(res.status).toBe(200);
    expect(res.body.activeTenantId).toBe(harlowId);

    const after = await client.get('/api/auth/me');
    expect(after.body.activeTenant).toMatchObject({ id: harlowId, name: 'Harlow Ridge Gas', locationUnit: 'km' });
    expect(JSON.stringify(after.body.rules)).toContain(harlowId);
    expect(JSON.stringify(after.body.rules)).not.toContain(bramblecoteId);

    // The data follows: organisations now come from Harlow Ridge only.
    const orgs = await client.get('/api/organisations');
    expect(orgs.status).toBe(200);
    expect(orgs.body.items.every((o: { tenantId: string }) => o.tenantId === harlowId)).toBe(true);
  });

  it('when someone switches to a tenant they are not a member of, then 404 as if it did not exist', async () => {
    const client = await srv.signIn('lead@oxbow-repair.example');
    const res = await client.post('/api/auth/switch-tenant', { tenantId: harlowId });
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe('not_found');
    const unknown = await client.post('/api/auth/switch-tenant', { tenantId: '0b5e9c57-5a0e-4a43-9a4e-1f1f2d2b9c11' });
    expect(unknown.status).toBe(404);
    expect(unknown.body.error.message).toBe(res.body.error.message);
    const still = await client.get('/api/auth/me');
    expect(still.body.activeTenantId).toBe(bramblecoteId);
  });

  it('when the tenant id is not an id, then 400 with the field named', async () => {
    const client = await srv.signIn('lead@oxbow-repair.example');
    const res = await client.post('/api/auth/switch-tenant', { tenantId: 'harlowridge' });
    expect(res.status).toBe(400);
    expect(res.body.error.details).toEqual([{ path: 'tenantId', message: expect.any(String) }]);
  });

  it('when nobody is signed in, then switching answers 401', async () => {
    const client = await srv.anonymous();
    const res = await client.post('/api/auth/switch-tenant', { tenantId: harlowId });
    expect(res.status).toBe(401);
  });
});

describe('finding 3: sign-in limits that cannot lock the real person out', () => {
  // Three failures answered at once, then 250 ms, 500 ms, 1 s, 1 s … before each further failure is answered.
  const limits = { perIp: 30, perAccount: 3, windowMs: 10 * 60_000, failureDelay: { baseMs: 250, maxMs: 1_000 } };
  let limited: TestServer;
  beforeAll(async () => {
    limited = await startTestServer({ authLimits: limits });
  });
  afterAll(async () => {
    await limited?.close();
  });

  const attempt = async (email: string, password: string) => {
    const client = await limited.anonymous();
    const started = performance.now();
    const res = await client.post('/api/auth/sign-in', { email, password });
    return { res, ms: performance.now() - started };
  };

  it('when an account gets many wrong passwords, then each further failure is answered more slowly, but the right password signs in at once', async () => {
    for (let i = 0; i < 5; i++) expect((await attempt(users.authoriser, `wrong-${i}`)).res.status).toBe(401);
    // The sixth failure in a row waits the cap (1 s); a timer never fires early, so this cannot flake.
    const slowed = await attempt(users.authoriser, 'wrong-again');
    expect(slowed.res.status).toBe(401);
    expect(slowed.res.body).toEqual({ error: { code: 'unauthenticated', message: 'E-mail or password is incorrect.', details: [] } });
    expect(slowed.ms).toBeGreaterThanOrEqual(limits.failureDelay.maxMs - 5);

    // Not refused and not held back: the failures above decide nothing about a right password.
    const right = await attempt('Authoriser@Bramblecote.example', DEMO_PASSWORD);
    expect(right.res.status, JSON.stringify(right.res.body)).toBe(200);
    expect(right.ms).toBeLessThan(limits.failureDelay.maxMs);
  });

  it('when the right password has signed in, then the next mistake is answered at once again', async () => {
    const next = await attempt(users.authoriser, 'one-typo');
    expect(next.res.status).toBe(401);
    // Still counting, it would have waited the cap (1 s) like the sixth failure above.
    expect(next.ms).toBeLessThan(limits.failureDelay.maxMs - 5);
  });

  it('when one account is being slowed, then another account from the same address still signs in', async () => {
    expect((await attempt(users.auditor, DEMO_PASSWORD)).res.status).toBe(200);
  });

  it('when a person signs in successfully several times, then the successes count for nothing', async () => {
    for (let i = 0; i < 5; i++) expect((await attempt(users.control, DEMO_PASSWORD)).res.status, `sign-in ${i + 1}`).toBe(200);
  });

  it('when one network address keeps trying, then the hard per-IP limit still answers 429 in the error shape', async () => {
    let res = (await attempt(`nobody-0@fenwick-survey.example`, 'not the password')).res;
    for (let n = 1; n <= limits.perIp && res.status !== 429; n++) res = (await attempt(`nobody-${n}@fenwick-survey.example`, 'not the password')).res;
    expect(res.status).toBe(429);
    expect(res.body).toEqual({ error: { code: 'rate_limited', message: expect.stringMatching(/too many attempts from this network.*try again/i), details: [] } });
    expect(Number(res.headers['retry-after'])).toBeGreaterThan(0);
  });
});
