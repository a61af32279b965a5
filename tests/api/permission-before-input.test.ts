// Finding H4: the caller's right is checked before their input is read, so someone without the right
// learns nothing about how a route checks its input: 403 (or, on a record they may not even read, 404),
// never 400.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { users } from '../fixtures/permit-fixtures';

type Who = 'admin' | 'authoriser' | 'auditor' | 'tech' | 'control';
type Ids = Record<'pipeline' | 'point' | 'lock' | 'tag' | 'membership', string>;
interface Case {
  method: 'get' | 'post' | 'patch' | 'delete';
  /** `{pipeline}` and the like stand for a record of the caller's tenant. */
  path: string;
  body?: unknown;
  /** Someone whose role never allows this. */
  refused: Who;
  /** What they get: 403, or 404 for a record they may not read. */
  refusedWith?: 403 | 404;
  /** Someone whose role allows it: their bad input is still a 400. */
  allowed: Who;
}

const anyId = '6b1f1f8e-2c1a-4f55-9a4e-0c8f2b7d9a11';
const unknownField = { notAField: 'x' };

const cases: Case[] = [
  { method: 'post', path: '/api/organisations', body: unknownField, refused: 'tech', allowed: 'admin' },
  { method: 'get', path: '/api/users?notAField=1', refused: 'tech', allowed: 'admin' },
  { method: 'patch', path: '/api/memberships/{membership}', body: { role: 'emperor' }, refused: 'authoriser', allowed: 'admin' },
  { method: 'patch', path: '/api/memberships/{membership}', body: { role: 'emperor' }, refused: 'tech', refusedWith: 404, allowed: 'admin' },
  { method: 'patch', path: '/api/memberships/not-an-id', body: { role: 'auditor' }, refused: 'authoriser', refusedWith: 404, allowed: 'admin' },
  { method: 'delete', path: '/api/memberships/not-an-id', refused: 'auditor', refusedWith: 404, allowed: 'admin' },
  { method: 'get', path: '/api/qualifications?userId=not-an-id', refused: 'tech', allowed: 'auditor' },
  { method: 'post', path: '/api/qualifications', body: unknownField, refused: 'authoriser', allowed: 'admin' },
  { method: 'post', path: '/api/invitations', body: { email: 'not an address' }, refused: 'authoriser', allowed: 'admin' },
  { method: 'post', path: '/api/pipelines', body: unknownField, refused: 'tech', allowed: 'authoriser' },
  { method: 'patch', path: '/api/pipelines/{pipeline}', body: unknownField, refused: 'auditor', allowed: 'authoriser' },
  { method: 'patch', path: `/api/pipelines/${anyId}`, body: unknownField, refused: 'tech', refusedWith: 404, allowed: 'authoriser' },
  { method: 'patch', path: '/api/pipelines/not-an-id', body: {}, refused: 'control', refusedWith: 404, allowed: 'admin' },
  { method: 'post', path: '/api/isolation-points', body: unknownField, refused: 'tech', allowed: 'authoriser' },
  { method: 'patch', path: '/api/isolation-points/{point}', body: unknownField, refused: 'control', allowed: 'admin' },
  { method: 'post', path: '/api/locks', body: unknownField, refused: 'tech', allowed: 'authoriser' },
  { method: 'patch', path: '/api/locks/{lock}', body: unknownField, refused: 'auditor', allowed: 'authoriser' },
  { method: 'post', path: '/api/tags', body: unknownField, refused: 'control', allowed: 'admin' },
  { method: 'patch', path: '/api/tags/{tag}', body: unknownField, refused: 'tech', allowed: 'admin' },
  { method: 'post', path: '/api/imports/assets', body: unknownField, refused: 'tech', allowed: 'authoriser' },
  { method: 'post', path: '/api/imports/assets?dryRun=perhaps', body: { csv: '' }, refused: 'auditor', allowed: 'admin' },
  { method: 'get', path: '/api/audit/events?notAField=1', refused: 'control', allowed: 'auditor' },
  { method: 'get', path: '/api/audit/export?format=xml', refused: 'tech', allowed: 'auditor' },
  { method: 'post', path: '/api/audit/chain-checks', body: unknownField, refused: 'control', allowed: 'authoriser' },
  { method: 'post', path: '/api/audit/checkpoints', body: unknownField, refused: 'tech', allowed: 'admin' },
];

describe('finding H4: the right is checked before the input', () => {
  let srv: TestServer;
  const clients = new Map<Who, ApiClient>();
  let ids: Ids;
  beforeAll(async () => {
    srv = await startTestServer();
    const one = async (sql: string) => (await srv.deps.sequelize.query<{ id: string }>(sql, { type: QueryTypes.SELECT }))[0].id;
    const tenant = `(SELECT id FROM tenants WHERE slug = 'bramblecote')`;
    ids = {
      pipeline: await one(`SELECT id FROM pipelines WHERE code = 'BM-10'`),
      point: await one(`SELECT id FROM isolation_points WHERE tenant_id = ${tenant} ORDER BY tag_code LIMIT 1`),
      lock: await one(`SELECT id FROM locks WHERE tenant_id = ${tenant} ORDER BY id LIMIT 1`),
      tag: await one(`SELECT id FROM tags WHERE tenant_id = ${tenant} ORDER BY id LIMIT 1`),
      membership: await one(`SELECT m.id FROM memberships m JOIN users u ON u.id = m.user_id WHERE u.email = '${users.tech2}' LIMIT 1`),
    };
    for (const who of ['admin', 'authoriser', 'auditor', 'tech', 'control'] as const) clients.set(who, await srv.signIn(users[who]));
  });
  afterAll(() => srv?.close());

  const send = (who: Who, c: Case) => {
    const client = clients.get(who)!;
    const path = c.path.replace(/\{(\w+)\}/, (_m, key: keyof Ids) => ids[key]);
    return c.method === 'get' || c.method === 'delete' ? client[c.method](path) : client[c.method](path, c.body);
  };

  it.each(cases)('finding H4: when $refused, whose role does not allow $method $path, sends bad input, then it is refused for the role (403, 404 for a record they may not read), and for $allowed the same input is 400', async (c) => {
    const refused = await send(c.refused, c);
    expect(refused.status, JSON.stringify(refused.body)).toBe(c.refusedWith ?? 403);
    if (refused.status === 403) expect(refused.body.error).toMatchObject({ code: 'forbidden', message: expect.stringMatching(/^Your role does not allow you to /), details: [] });
    else expect(refused.body.error).toMatchObject({ code: 'not_found', details: [] });

    const allowed = await send(c.allowed, c);
    expect(allowed.status, JSON.stringify(allowed.body)).toBe(400);
    expect(allowed.body.error.code).toBe('validation_failed');
  });
});
