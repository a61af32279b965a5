import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { randomUUID } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, signInCrew } from '../fixtures/permit-journey';
import { registeredApiRoutes } from '../fixtures/registered-routes';

const watched = ['permits', 'isolation_steps', 'pipelines', 'isolation_points', 'locks', 'tags', 'organisations', 'memberships', 'qualifications', 'attachments', 'gas_tests', 'audit_events'];

// Bodies meant to break parsers and validators: wrong types, deep nesting, odd unicode, pollution keys.
const hostile = fc.oneof(
  fc.jsonValue({ maxDepth: 4 }),
  fc.dictionary(fc.string({ maxLength: 12 }), fc.jsonValue({ maxDepth: 2 }), { maxKeys: 8 }),
  fc.constantFrom<unknown>(
    JSON.parse('{"__proto__": {"isAdmin": true, "polluted": 1}}'),
    JSON.parse('{"constructor": {"prototype": {"polluted": 1}}}'),
    { event: 'approve', version: 1, password: 'x'.repeat(300) },
    { title: '\u0000\u202e\ud83d\ude00'.repeat(50), kinds: ['hot_work'] },
    { readings: { o2Pct: 'NaN', lelPct: -1e308 } },
    { steps: Array.from({ length: 500 }, () => ({ kind: 'plug' })) },
    JSON.parse(`${'['.repeat(200)}${']'.repeat(200)}`),
    { email: 'a@b.example\r\nBcc: victim@else.example', role: 'tenant_admin' },
  ),
);

describe('hostile and broken input on every JSON endpoint', () => {
  let srv: TestServer;
  let clients: ApiClient[];
  let permitId = '';

  const counts = async () => {
    const out: Record<string, number> = {};
    for (const t of watched) {
      const [exists] = await srv.deps.sequelize.query<{ ok: boolean }>(`SELECT to_regclass('${t}') IS NOT NULL AS ok`, { type: QueryTypes.SELECT });
      if (exists.ok) out[t] = (await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM ${t}`, { type: QueryTypes.SELECT }))[0].n;
    }
    return out;
  };

  beforeAll(async () => {
    srv = await startTestServer();
    const ids = await demoIds(srv);
    const crew = await signInCrew(srv);
    permitId = await draftWithPlan(srv, crew, ids);
    clients = [await srv.signIn(users.admin), await srv.signIn(users.authoriser), await srv.signIn(users.lead), await srv.signIn(users.tech)];
  }, 120_000);
  afterAll(() => srv.close());

  it('when generated bodies hit every state-changing route as several roles, then never a 500, always the error shape, nothing written', async () => {
    const before = await counts();
    const routes = registeredApiRoutes(srv).filter((r) => /^(POST|PUT|PATCH|DELETE) /.test(r) && !r.includes('/auth/sign-out'));
    let cases = 0;
    const problems: string[] = [];
    fc.configureGlobal({ seed: 20261202 });
    for (const route of routes) {
      const [method, path] = route.split(' ');
      const url = path.replace(':id', permitId).replace(/:[A-Za-z]+/g, () => randomUUID());
      for (const [i, body] of fc.sample(hostile, 10).entries()) {
        const client = clients[(cases + i) % clients.length];
        const m = method.toLowerCase() as 'post' | 'put' | 'patch' | 'delete';
        const res = m === 'delete' ? await client.delete(url) : await client[m](url, body as object);
        cases++;
        if (res.status >= 500) problems.push(`${route} → ${res.status} for ${JSON.stringify(body).slice(0, 80)}`);
        else if (res.status >= 400 && !(res.body?.error?.code && typeof res.body.error.message === 'string' && Array.isArray(res.body.error.details)))
          problems.push(`${route} → ${res.status} without the error shape`);
        else if (res.status < 300 && m !== 'delete') problems.push(`${route} → ${res.status}: a generated body was accepted`);
        const text = res.text ?? '';
        if (/\bat [\w.]+ \(|SELECT |INSERT INTO|sequelize/i.test(text)) problems.push(`${route} leaks internals: ${text.slice(0, 120)}`);
      }
    }
    // An oversized body is refused before it is parsed.
    const huge = await clients[0].post(`/api/permits`, { title: 'x'.repeat(200_000) });
    cases++;
    expect(huge.status).toBe(413);
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
    expect(({} as Record<string, unknown>).isAdmin).toBeUndefined();
    console.log(`hostile input: ${cases} generated requests over ${routes.length} routes; problems: ${problems.length}`);
    expect(problems).toEqual([]);
    expect(await counts()).toEqual(before);
  }, 300_000);
});
