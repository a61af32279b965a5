import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import type { Response } from 'supertest';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { readAnswer, registeredApiRoutes } from '../fixtures/registered-routes';

let srv: TestServer;
let admin: ApiClient;
let adminId: string;
let operatorOrgId: string;
let membershipId: string;

/** Every error answer has the one shape; a 400 names the fields it refuses. */
function expectErrorShape(res: Response, status: number, code: string) {
  expect(res.status, JSON.stringify(res.body)).toBe(status);
  expect(res.body).toEqual({ error: { code, message: expect.any(String), details: expect.any(Array) } });
  for (const d of res.body.error.details) expect(d).toEqual({ path: expect.any(String), message: expect.any(String) });
}
const pathsOf = (res: Response) => res.body.error.details.map((d: { path: string }) => d.path).sort();

/** A raw JSON string, exactly as written, so keys such as __proto__ reach the server untouched. */
const rawJson = (client: ApiClient, method: 'post' | 'patch', path: string, text: string, contentType = 'application/json') =>
  client.agent[method](path).set('x-csrf-token', client.csrf).set('content-type', contentType).send(text);

beforeAll(async () => {
  // The junk run sends many calls to the rate-limited auth routes; the limits have their own test.
  srv = await startTestServer({ authLimits: { perIp: 100_000, perAccount: 100_000, windowMs: 60_000 } });
  admin = await srv.signIn('admin@bramblecote.example');
  const me = (await admin.get('/api/auth/me')).body;
  adminId = me.user.id;
  operatorOrgId = me.memberships[0].organisationId;
  const [m] = await srv.deps.sequelize.query<{ id: string }>(
    `SELECT m.id FROM memberships m JOIN users u ON u.id = m.user_id WHERE u.email = 'tech2@oxbow-repair.example'`,
    { type: QueryTypes.SELECT },
  );
  membershipId = m.id;
});
afterAll(async () => {
  await srv?.close();
});

describe('missing fields and wrong types', () => {
  it('when an organisation is sent with no fields, then 400 naming name and kind', async () => {
    const res = await admin.post('/api/organisations', {});
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['kind', 'name']);
  });

  it('when the fields have the wrong types, then 400 naming each field', async () => {
    const res = await admin.post('/api/organisations', { name: 42, kind: true });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['kind', 'name']);
  });

  it('when an invitation has a bad e-mail, a bad organisation id and an unknown role, then 400 naming all three', async () => {
    const res = await admin.post('/api/invitations', { email: 'not-an-email', organisationId: 'acme', role: 'superuser' });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['email', 'organisationId', 'role']);
  });

  it('when an e-mail carries a line break and a second header, then 400 on email (no header injection)', async () => {
    const res = await admin.post('/api/invitations', { email: 'a@river.example\r\nBcc: b@river.example', organisationId: operatorOrgId, role: 'auditor' });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['email']);
  });

  it('when a qualification has words for dates, then 400 naming the fields', async () => {
    const res = await admin.post('/api/qualifications', { userId: 'someone', kind: 'wizard', issuedOn: 'yesterday', expiresOn: 20270101 });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['expiresOn', 'issuedOn', 'kind', 'userId']);
  });

  it('when a qualification expires before it was issued, then 400 on expiresOn', async () => {
    const res = await admin.post('/api/qualifications', { userId: adminId, kind: 'excavation', issuedOn: '2026-05-01', expiresOn: '2026-04-30' });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['expiresOn']);
  });

  it('when a qualification date is 30 February, then 400 on that date', async () => {
    const res = await admin.post('/api/qualifications', { userId: adminId, kind: 'excavation', issuedOn: '2025-02-30', expiresOn: '2026-01-01' });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['issuedOn']);
  });

  it('when a qualification date is in year 0000, then 400 on that date (not a database error)', async () => {
    const res = await admin.post('/api/qualifications', { userId: adminId, kind: 'excavation', issuedOn: '0000-01-01', expiresOn: '2026-01-01' });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['issuedOn']);
  });

  it('when a qualification reference holds control characters, then 400 on reference and nothing is stored', async () => {
    const res = await admin.post('/api/qualifications', { userId: adminId, kind: 'excavation', reference: 'CERT\u0000-1', issuedOn: '2025-01-01', expiresOn: '2026-01-01' });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['reference']);
  });

  it('when a membership id in the path is not an id, then 400 naming id', async () => {
    const res = await admin.patch('/api/memberships/not-an-id', { role: 'auditor' });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['id']);
  });

  it('when a role change names no role, then 400 on role and the role is unchanged', async () => {
    const res = await admin.patch(`/api/memberships/${membershipId}`, { role: 42 });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['role']);
    const [row] = await srv.deps.sequelize.query<{ role: string }>(`SELECT role FROM memberships WHERE id = :id`, { replacements: { id: membershipId }, type: QueryTypes.SELECT });
    expect(row.role).toBe('isolation_technician');
  });

  it('when list paging is out of range or the sort column is unknown, then 400 naming each query field', async () => {
    const res = await admin.get('/api/users?page=0&pageSize=1000&sort=password&dir=sideways');
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['dir', 'page', 'pageSize', 'sort']);
  });

  it('when a query field is given twice, then 400 rather than a guess', async () => {
    const res = await admin.get('/api/qualifications?page=1&page=2');
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['page']);
  });

  it('when sign-in gets numbers for e-mail and password, then 400 naming both', async () => {
    const res = await (await srv.anonymous()).post('/api/auth/sign-in', { email: 5, password: 5 });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['email', 'password']);
  });

  it('when a new password is short or common, then 400 on password', async () => {
    const visitor = await srv.anonymous();
    const short = await visitor.post('/api/auth/accept-invitation', { token: 'x'.repeat(43), name: 'Short', password: 'short' });
    expectErrorShape(short, 400, 'validation_failed');
    expect(pathsOf(short)).toEqual(['password']);
    const common = await visitor.post('/api/auth/reset-password', { token: 'x'.repeat(43), password: 'Password1234' });
    expectErrorShape(common, 400, 'validation_failed');
    expect(pathsOf(common)).toEqual(['password']);
  });
});

describe('malformed bodies', () => {
  it('when a JSON body is larger than 100 kB, then 413 payload_too_large', async () => {
    const res = await admin.post('/api/organisations', { name: 'Big', kind: 'contractor', padding: 'x'.repeat(101 * 1024) });
    expectErrorShape(res, 413, 'payload_too_large');
  });

  it('when the JSON is broken, then 400 saying so', async () => {
    const res = await rawJson(admin, 'post', '/api/organisations', '{"name": "Broken", "kind": ');
    expectErrorShape(res, 400, 'validation_failed');
    expect(res.body.error.message).toMatch(/not valid JSON/);
  });

  it('when the body is a JSON array, a bare string or null, then 400 in the error shape', async () => {
    for (const text of ['[1,2,3]', '"hello"', 'null']) {
      const res = await rawJson(admin, 'post', '/api/organisations', text);
      expectErrorShape(res, 400, 'validation_failed');
    }
  });

  it('when the body is plain text or a form instead of JSON, then 400 in the error shape', async () => {
    expectErrorShape(await rawJson(admin, 'post', '/api/organisations', 'name=Plain&kind=contractor', 'text/plain'), 400, 'validation_failed');
    expectErrorShape(await rawJson(admin, 'post', '/api/organisations', 'name=Form&kind=contractor', 'application/x-www-form-urlencoded'), 400, 'validation_failed');
  });

  it('when the JSON declares a character set other than UTF-8, then 415', async () => {
    const res = await rawJson(admin, 'post', '/api/organisations', '{}', 'application/json; charset=latin1');
    expectErrorShape(res, 415, 'unsupported_media_type');
  });

  it('when the JSON is nested very deeply, then 400, not a crash', async () => {
    const res = await rawJson(admin, 'post', '/api/organisations', `${'['.repeat(20_000)}${']'.repeat(20_000)}`);
    expectErrorShape(res, 400, 'validation_failed');
  });
});

describe('unknown keys and prototype keys', () => {
  const organisations = async () => (await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM organisations`, { type: QueryTypes.SELECT }))[0].n;

  it('finding 13: when a body has keys the API does not know, then 400 naming each of them and nothing is stored', async () => {
    const before = await organisations();
    const res = await admin.post('/api/organisations', { name: 'Extra Keys Ltd', kind: 'contractor', colour: 'teal', tenantId: '0b5e9c57-5a0e-4a43-9a4e-1f1f2d2b9c11', id: 'mine' });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['colour', 'id', 'tenantId']);
    expect(res.body.error.details[0].message).toBe('This field is not accepted here; leave it out.');
    expect(await organisations()).toBe(before);
  });

  it('finding 13: when a query string has a parameter the list does not know, then 400 naming it', async () => {
    const res = await admin.get('/api/users?page=1&colour=teal');
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['colour']);
  });

  it('finding 13: when the client builds its list and search queries, then every one of them is accepted', async () => {
    const [pipeline] = await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM pipelines WHERE tenant_id = (SELECT tenant_id FROM organisations WHERE id = :org) LIMIT 1`, {
      replacements: { org: operatorOrgId },
      type: QueryTypes.SELECT,
    });
    // The query strings the client's query functions send (client/src/features/*/api), each parameter they can set.
    const urls = [
      `/api/users?page=1&q=a&role=auditor&sort=email&dir=desc&organisationId=${operatorOrgId}&pageSize=200`,
      '/api/organisations?page=1&pageSize=100',
      '/api/qualifications?page=1&pageSize=50',
      `/api/permits?page=1&pageSize=25&state=draft,requested&pipelineId=${pipeline.id}&contractorOrganisationId=${operatorOrgId}&kind=hot_work&from=2026-01-01&to=2026-12-31&q=valve&sort=number&dir=asc`,
      '/api/pipelines?page=1&pageSize=25&q=BM&product=crude_oil',
      '/api/locks?page=1&pageSize=25&state=in_store&q=L',
      '/api/tags?state=in_store&q=T&pageSize=200',
      `/api/isolation-points?pipelineId=${pipeline.id}&pageSize=200`,
      `/api/board?pipelineId=${pipeline.id}&permitState=live`,
      '/api/instruments?pageSize=200&includeRetired=true',
      '/api/calc/mud-plug?diameterIn=10&waterFraction=0.5',
      '/api/calc/pipe?nps=10&schedule=40',
      '/api/calc/line-fill?idIn=10&lengthFt=100',
      `/api/exports/assets.csv?pipelineId=${pipeline.id}`,
      '/api/audit/events?page=1&pageSize=25',
    ];
    for (const url of urls) expect((await readAnswer(admin.agent.get(url) as unknown as Parameters<typeof readAnswer>[0])).status, url).toBe(200);
  });

  it('finding 13: when a body carries __proto__ and constructor.prototype keys, then 400 naming them and nothing is polluted', async () => {
    const res = await rawJson(admin, 'post', '/api/organisations', '{"name":"Proto Ltd","kind":"contractor","__proto__":{"polluted":"yes","role":"tenant_admin"},"constructor":{"prototype":{"polluted2":"yes"}}}');
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['__proto__', 'constructor']);
    const probe = {} as Record<string, unknown>;
    expect(probe.polluted).toBeUndefined();
    expect(probe.polluted2).toBeUndefined();
    expect(probe.role).toBeUndefined();
    expect(Object.prototype).not.toHaveProperty('polluted');
  });

  it('finding 13: when a required field is smuggled in through __proto__, then it does not count and __proto__ is named', async () => {
    const res = await rawJson(admin, 'post', '/api/organisations', '{"name":"Smuggled Kind Ltd","__proto__":{"kind":"operator"}}');
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['__proto__', 'kind']);
  });

  it('finding 13: when a query string carries __proto__ keys, then 400 and nothing is polluted', async () => {
    const res = await admin.get('/api/users?__proto__[polluted3]=1&constructor[prototype][polluted4]=1');
    expectErrorShape(res, 400, 'validation_failed');
    expect(({} as Record<string, unknown>).polluted3).toBeUndefined();
    expect(({} as Record<string, unknown>).polluted4).toBeUndefined();
  });
});

describe('finding 1: text PostgreSQL cannot store as sent', () => {
  it('when a field holds a lone surrogate or a NUL, then 400 naming the field and nothing is stored', async () => {
    const before = (await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM organisations`, { type: QueryTypes.SELECT }))[0].n;
    // JSON escapes: a lone surrogate written as a character would be sent as U+FFFD.
    for (const name of ['probe \\ud800 text', 'probe \\u0000 text']) {
      const res = await rawJson(admin, 'post', '/api/organisations', `{"name":"${name}","kind":"contractor"}`);
      expectErrorShape(res, 400, 'validation_failed');
      expect(res.body.error.details).toEqual([{ path: 'name', message: 'Contains a broken or hidden character that cannot be saved. Type this text again.' }]);
    }
    const invite = await rawJson(admin, 'post', '/api/invitations', `{"email":"a@river.example","organisationId":"${operatorOrgId}","role":"auditor","extra":{"list":["ok","\\udfff"]}}`);
    expectErrorShape(invite, 400, 'validation_failed');
    expect(pathsOf(invite)).toEqual(['extra.list.1']);
    const after = (await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM organisations`, { type: QueryTypes.SELECT }))[0].n;
    expect(after).toBe(before);
  });

  it('when a field name holds a lone surrogate, then 400 and the answer shows it replaced, so it can be stored', async () => {
    const res = await rawJson(admin, 'post', '/api/organisations', '{"name":"Key Ltd","kind":"contractor","\\ud800":1}');
    expectErrorShape(res, 400, 'validation_failed');
    expect(res.body.error.details).toEqual([{ path: '\ufffd', message: 'This field name has a broken or hidden character.' }]);
  });

  it('when a query parameter holds a NUL, then 400 naming it', async () => {
    const res = await admin.get('/api/users?q=a%00b');
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['q']);
  });

  it('when a sign-in password holds a NUL, then 400 (not a database error)', async () => {
    const res = await (await srv.anonymous()).post('/api/auth/sign-in', { email: 'admin@bramblecote.example', password: 'holdpoint-demo\u0000' });
    expectErrorShape(res, 400, 'validation_failed');
    expect(pathsOf(res)).toEqual(['password']);
  });
});

describe('finding 12: answers are not kept by caches', () => {
  it('when a signed-in user reads, changes or fails, then every API answer says Cache-Control: no-store', async () => {
    const answers = {
      me: await admin.get('/api/auth/me'),
      users: await admin.get('/api/users'),
      organisations: await admin.get('/api/organisations?page=1'),
      refused: await admin.post('/api/organisations', {}),
      'no such route': await admin.get('/api/no-such-route'),
      'not signed in': await (await srv.anonymous()).get('/api/users'),
    };
    for (const [label, res] of Object.entries(answers)) expect(res.headers['cache-control'], label).toBe('no-store');
  });

  it('when the board is read again with its ETag, then 304 and the board keeps its revalidation header', async () => {
    const first = await admin.get('/api/board');
    expect(first.status).toBe(200);
    expect(first.headers['cache-control']).toBe('private, no-cache');
    const again = await admin.get('/api/board').set('if-none-match', first.headers.etag);
    expect(again.status).toBe(304);
    expect(again.headers['cache-control']).toBe('private, no-cache');
  });
});

describe('never a 500', () => {
  // Junk of every JSON kind, sent to every registered API route as the tenant admin (who may call the most).
  const junk: Array<{ label: string; text: string }> = [
    { label: 'empty object', text: '{}' },
    { label: 'array', text: '[{"a":1}]' },
    { label: 'number', text: '12' },
    { label: 'wrong types', text: '{"id":1,"name":[],"email":{},"role":null,"tenantId":true,"page":-1,"kind":9e999}' },
    { label: 'huge numbers', text: '{"page":1e308,"pageSize":-1e308,"value":123456789012345678901234567890}' },
    { label: 'control characters', text: '{"name":"\\u0000\\u0007","email":"\\u0000@x.example","q":"\\u0000"}' },
    { label: 'broken JSON', text: '{"a":' },
  ];

  it('when any API route gets junk bodies, a junk id or a junk query, then it answers below 500 in the error shape', async () => {
    const routes = registeredApiRoutes(srv);
    expect(routes.length).toBeGreaterThan(10);
    const failures: string[] = [];
    let calls = 0;
    for (const route of routes) {
      const [method, path] = route.split(' ');
      for (const id of ['not-an-id', '0b5e9c57-5a0e-4a43-9a4e-1f1f2d2b9c11']) {
        const url = `${path.replace(/:[A-Za-z_]+/g, id)}?page=-1&pageSize=x&q=%00&sort[]=1`;
        const bodies = method === 'GET' || method === 'DELETE' ? [null] : junk;
        for (const b of bodies) {
          // Sign-out would end the admin's session for the rest of the run.
          const client = path === '/api/auth/sign-out' ? await srv.signIn('admin@bramblecote.example') : admin;
          const req = client.agent[method.toLowerCase() as 'get' | 'post' | 'put' | 'patch' | 'delete'](url).set('x-csrf-token', client.csrf);
          const res = await readAnswer((b ? req.set('content-type', 'application/json').send(b.text) : req) as unknown as Parameters<typeof readAnswer>[0]);
          calls++;
          const label = `${method} ${url}${b ? ` with ${b.label}` : ''}`;
          const error = typeof res.body === 'object' ? (res.body?.error as { code?: unknown; details?: unknown } | undefined) : undefined;
          if (res.status >= 500) failures.push(`${label} → ${res.status} ${JSON.stringify(res.body).slice(0, 200)}`);
          else if (res.status >= 400 && !(error && typeof error.code === 'string' && Array.isArray(error.details))) failures.push(`${label} → ${res.status} outside the error shape`);
        }
      }
    }
    console.log(`bad input: ${calls} junk calls to ${routes.length} routes`);
    expect(failures, failures.join('\n')).toEqual([]);
  }, 180_000);
});
