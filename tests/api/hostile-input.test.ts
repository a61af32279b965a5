import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { randomUUID } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, transition, users } from '../fixtures/permit-fixtures';
import { applyAndVerifyAll, confirmChecklist, draftWithPlan, expectOk, signInCrew, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';
import { readAnswer, registeredApiRoutes } from '../fixtures/registered-routes';
import { onePixelPng } from '../fixtures/matrix-samples';

const watched = ['permits', 'isolation_steps', 'pipelines', 'isolation_points', 'locks', 'tags', 'organisations', 'memberships', 'qualifications', 'attachments', 'gas_tests', 'audit_events'];

// ---- the shapes the probe reported, and their relatives -------------------------------------------

/** Dates outside what PostgreSQL and JavaScript agree on, and malformed ones. */
const badDates = [
  '0000-01-01T00:00:00Z', '0000-12-31T23:59:59.999Z', '0001-01-01T00:00:00+14:00', '10000-01-01T00:00:00Z', '+010000-01-01T00:00:00Z', '-000001-01-01T00:00:00Z',
  '9999-12-31T23:59:59-12:00', '0000-01-01', '10000-01-01', '2026-02-30', '2026-13-01T00:00:00Z', '2026-06-01T25:00:00Z',
];
/** Text JSON can carry and PostgreSQL cannot store as sent: lone surrogates (sent as JSON escapes) and NUL. */
const loneSurrogate = fc
  .tuple(fc.string({ maxLength: 6 }), fc.integer({ min: 0xd800, max: 0xdfff }), fc.string({ maxLength: 6 }))
  .map(([a, s, b]) => `${a}${String.fromCharCode(s)}${b}`);
const invalidText = fc.oneof(loneSurrogate, fc.constantFrom('probe \ud800 text', '\udfff', '\ude00\ud83d', 'nul \u0000 byte', '\u0000'));

/** Nesting built in a loop, so the test itself never recurses. */
function nested(depth: number, leaf: unknown = 1): unknown {
  let v = leaf;
  for (let i = 0; i < depth; i++) v = i % 2 ? [v] : { a: v };
  return v;
}
const deep = fc.constantFrom(nested(1_000), nested(1_000, 'x'), nested(40), nested(3_000));

const hostileValue = fc.oneof(
  fc.constantFrom(...badDates),
  invalidText,
  deep,
  fc.constantFrom<unknown>(1e308, -1e308, -0, 2 ** 63, Number.MIN_VALUE, '1e400', '', ' ', null, [], {}, true, 'x'.repeat(5_000)),
);

// Bodies meant to break parsers and validators: wrong types, deep nesting, odd unicode, pollution keys.
const hostile = fc.oneof(
  fc.jsonValue({ maxDepth: 4 }),
  fc.dictionary(fc.string({ maxLength: 12 }), fc.jsonValue({ maxDepth: 2 }), { maxKeys: 8 }),
  fc.dictionary(fc.oneof(fc.string({ maxLength: 8 }), loneSurrogate), hostileValue, { minKeys: 1, maxKeys: 4 }),
  deep,
  fc.constantFrom<unknown>(
    JSON.parse('{"__proto__": {"isAdmin": true, "polluted": 1}}'),
    JSON.parse('{"constructor": {"prototype": {"polluted": 1}}}'),
    { event: 'approve', version: 1, password: 'x'.repeat(300) },
    { title: '\u0000\u202e\ud83d\ude00'.repeat(50), kinds: ['hot_work'] },
    { readings: { o2Pct: 'NaN', lelPct: -1e308 } },
    { steps: Array.from({ length: 500 }, () => ({ kind: 'plug' })) },
    JSON.parse(`${'['.repeat(200)}${']'.repeat(200)}`),
    { email: 'a@b.example\r\nBcc: victim@else.example', role: 'tenant_admin' },
    { validFrom: '0000-01-01T00:00:00Z', validTo: '0000-01-02T00:00:00Z' },
    { validFrom: '2026-06-01T07:00:00Z' },
    { validTo: '10000-01-01T00:00:00Z' },
    { issuedOn: '0000-01-01', expiresOn: '10000-01-01' },
    { fromPosition: 5 },
    { reason: 'probe \ud800 text', event: 'reject', version: 1 },
  ),
);

/**
 * A valid body with one thing wrong: a field set to a hostile value, a date out of range, half of a
 * range left out, a field name with a lone surrogate, or an unknown field. Near-valid bodies get past
 * the first checks, where a bad value would otherwise reach the database.
 */
function nearValid(seed: Record<string, unknown>, dateFields: string[], pairs: Array<[string, string]>) {
  const keys = Object.keys(seed);
  const without = (k: string) => Object.fromEntries(Object.entries(seed).filter(([key]) => key !== k));
  const options = [
    fc.tuple(fc.constantFrom(...keys), hostileValue).map(([k, v]) => ({ ...seed, [k]: v })),
    fc.tuple(fc.constantFrom(...keys), invalidText).map(([k, v]) => ({ ...seed, [k]: v })),
    loneSurrogate.map((k) => ({ ...seed, [k]: 1 })),
    fc.constantFrom('colour', 'tenantId', 'state', '__proto__').map((k) => ({ ...seed, [k]: 'x' })),
  ];
  if (dateFields.length) options.push(fc.tuple(fc.constantFrom(...dateFields), fc.constantFrom(...badDates)).map(([k, v]) => ({ ...seed, [k]: v })));
  if (dateFields.length > 1) options.push(fc.constantFrom(...badDates).map((v) => ({ ...seed, ...Object.fromEntries(dateFields.map((k) => [k, v])) })));
  for (const [a, b] of pairs) options.push(fc.constantFrom(without(a), without(b)));
  return fc.oneof(...options);
}

/** Query strings that break parsers: dates out of range, one-sided ranges, NUL, broken UTF-8, repeats, unknown keys. */
const hostileQueries = [
  'from=0000-01-01', 'to=10000-01-01', 'from=2026-01-01', 'to=2026-12-31&from=0000-12-31', 'fromPosition=5', 'toPosition=5', 'fromPosition=9&toPosition=1',
  'q=%00', 'q=a%00b', 'q=%ED%A0%80', 'q=%F0%9F', 'page=1e308', 'pageSize=-1', 'page=1&page=2', 'dir=%00', 'sort=%ED%B0%80', 'state=,,', 'state=draft,%00',
  'pipelineId=%00', 'colour=teal', '__proto__[x]=1', 'dryRun=%00', 'includeRetired=maybe', 'diameterIn=0x10&waterFraction=%00', 'nps=1e400&schedule=%00',
  'idIn=-1&lengthFt=NaN', `kind=${'k'.repeat(5_000)}`,
];

interface Tally {
  sent: number;
  serverErrors: number;
  problems: string[];
}

describe('hostile and broken input on every route', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let admin: ApiClient;
  let clients: ApiClient[];
  let draftId = '';
  let isolatedId = '';
  let requestedId = '';
  let instrumentId = '';
  let stepId = '';
  const overall: Tally = { sent: 0, serverErrors: 0, problems: [] };

  const counts = async () => {
    const out: Record<string, number> = {};
    for (const t of watched) {
      const [exists] = await srv.deps.sequelize.query<{ ok: boolean }>(`SELECT to_regclass('${t}') IS NOT NULL AS ok`, { type: QueryTypes.SELECT });
      if (exists.ok) out[t] = (await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM ${t}`, { type: QueryTypes.SELECT }))[0].n;
    }
    return out;
  };

  /** Counts an answer; anything 500 or above, outside the error shape, or leaking internals is a problem. */
  function judge(tally: Tally, label: string, res: { status: number; body: unknown; text?: string }) {
    tally.sent++;
    overall.sent++;
    const body = res.body as { error?: { code?: unknown; message?: unknown; details?: unknown } } | null;
    if (res.status >= 500) {
      tally.serverErrors++;
      overall.serverErrors++;
      tally.problems.push(`${label} → ${res.status} ${JSON.stringify(res.body).slice(0, 160)}`);
    } else if (res.status >= 400 && !(body?.error && typeof body.error.code === 'string' && typeof body.error.message === 'string' && Array.isArray(body.error.details)))
      tally.problems.push(`${label} → ${res.status} without the error shape`);
    const text = res.text ?? (typeof res.body === 'string' ? res.body : JSON.stringify(res.body ?? ''));
    if (/\bat [\w.]+ \(|SELECT |INSERT INTO|sequelize|violates|syntax error/i.test(text)) tally.problems.push(`${label} leaks internals: ${text.slice(0, 120)}`);
  }
  const report = (what: string, tally: Tally) => {
    console.log(`hostile input, ${what}: ${tally.sent} requests sent, ${tally.serverErrors} answers ≥ 500, ${tally.problems.length} problems`);
    overall.problems.push(...tally.problems);
  };
  const fresh = (): Tally => ({ sent: 0, serverErrors: 0, problems: [] });
  const versionOf = async (id: string) => (await crew.lead.get(`/api/permits/${id}`)).body.version as number;
  /** Sends the JSON exactly as written, so lone surrogates arrive as escapes and keys such as __proto__ stay. */
  const sendJson = (client: ApiClient, method: string, url: string, body: unknown, key?: string) => {
    let req = client.agent[method.toLowerCase() as 'post' | 'put' | 'patch' | 'delete'](url).set('x-csrf-token', client.csrf).set('content-type', 'application/json');
    if (key) req = req.set('Idempotency-Key', key);
    return req.send(JSON.stringify(body) ?? 'null');
  };
  const withIds = (path: string, permitId: string) =>
    path.replace(':id', permitId).replace(':stepId', stepId).replace(/:[A-Za-z]+/g, () => randomUUID());

  beforeAll(async () => {
    // The run calls the rate-limited auth routes many times; the limits have their own test.
    srv = await startTestServer({ authLimits: { perIp: 100_000, perAccount: 100_000, windowMs: 60_000 }, env: { SESSION_IDLE_MINUTES: '600', SESSION_ABSOLUTE_HOURS: '48' } });
    ids = await demoIds(srv);
    crew = await signInCrew(srv);
    admin = await srv.signIn(users.admin);
    clients = [admin, crew.authoriser, crew.lead, crew.tech];
    draftId = await draftWithPlan(srv, crew, ids);
    requestedId = await draftWithPlan(srv, crew, ids, { fromPosition: 22.0, toPosition: 22.2, title: 'Sent for approval' });
    await expectOk(await transition(crew.lead, requestedId, 'submit'));
    const instrument = await expectOk(
      await crew.authoriser.post('/api/instruments', { model: 'Hostile-input monitor', serial: 'HI-0001', lastBumpTestAt: srv.clock.now().toISOString(), calibrationDueOn: new Date(srv.clock.now().getTime() + 90 * 86_400_000).toISOString().slice(0, 10) }),
      201,
    );
    instrumentId = instrument.id;
    isolatedId = await draftWithPlan(srv, crew, ids, { title: 'Isolated for gas tests' });
    await toAccepted(crew, isolatedId);
    await applyAndVerifyAll(srv, crew, ids, isolatedId);
    await confirmChecklist(crew.lead, isolatedId, 'checklist');
    expect((await crew.lead.get(`/api/permits/${isolatedId}`)).body.state).toBe('isolated');
    const [step] = await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM isolation_steps WHERE permit_id = :id ORDER BY seq LIMIT 1`, { replacements: { id: draftId }, type: QueryTypes.SELECT });
    stepId = step.id;
  }, 180_000);
  afterAll(async () => {
    console.log(`hostile input, all tests: ${overall.sent} requests sent, ${overall.serverErrors} answers ≥ 500`);
    await srv?.close();
  });

  it('finding 6: when the probe’s shapes are sent one by one, then each is a 400 naming the field, in the error shape', async () => {
    const tally = fresh();
    const now = srv.clock.now();
    const named = async (label: string, res: { status: number; body: { error?: { details?: Array<{ path: string }> } } }, path: string) => {
      judge(tally, label, res);
      expect(res.status, `${label}: ${JSON.stringify(res.body)}`).toBe(400);
      // The field itself, or a place inside it (a list item, a nested value).
      expect(res.body.error!.details!.some((d) => d.path === path || d.path.startsWith(`${path}.`)), `${label}: ${JSON.stringify(res.body)}`).toBe(true);
    };
    await named('permit in year 0000', await crew.lead.post('/api/permits', permitBody(ids, now, { validFrom: '0000-01-01T00:00:00Z', validTo: '0000-01-02T00:00:00Z' })), 'validFrom');
    await named('permit to year 10000', await crew.lead.post('/api/permits', permitBody(ids, now, { validTo: '10000-01-01T00:00:00Z' })), 'validTo');
    await named('permit title with a lone surrogate', await crew.lead.post('/api/permits', permitBody(ids, now, { title: 'probe \ud800 text' })), 'title');
    await named('permit PPE item with a lone surrogate', await crew.lead.post('/api/permits', permitBody(ids, now, { ppe: ['Gloves', 'probe \udc00'] })), 'ppe.1');
    const version = await versionOf(draftId);
    await named('edit: a start after the stored end', await crew.lead.patch(`/api/permits/${draftId}`, { version, validFrom: new Date(now.getTime() + 100 * 3600_000).toISOString() }), 'validFrom');
    await named('edit: an end in year 0000', await crew.lead.patch(`/api/permits/${draftId}`, { version, validTo: '0000-06-01T00:00:00Z' }), 'validTo');
    await named('list from year 0000', await crew.lead.get('/api/permits?from=0000-01-01'), 'from');
    await named('list to year 10000', await crew.lead.get('/api/permits?to=10000-01-01'), 'to');
    await named('monitor due in year 0000', await crew.authoriser.post('/api/instruments', { model: 'X', serial: 'Y-0', calibrationDueOn: '0000-01-01' }), 'calibrationDueOn');
    await named('monitor bumped in year 0000', await crew.authoriser.post('/api/instruments', { model: 'X', serial: 'Y-1', calibrationDueOn: '2027-01-01', lastBumpTestAt: '0000-01-01T00:00:00Z' }), 'lastBumpTestAt');
    await named('monitor model with a lone surrogate', await crew.authoriser.post('/api/instruments', { model: '\udfff', serial: 'Y-2', calibrationDueOn: '2027-01-01' }), 'model');
    await named('send back with a lone surrogate', await transition(crew.authoriser, requestedId, 'reject', { reason: 'probe \ud800 text' }), 'reason');
    await named('gas test in year 0000', await crew.tech.post(`/api/permits/${isolatedId}/gas-tests`, { instrumentId, place: 'work_area', testedAt: '0000-01-01T00:00:00Z', readings: { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 } }), 'testedAt');
    const deepReason = await sendJson(crew.authoriser, 'POST', `/api/permits/${requestedId}/transitions`, { event: 'reject', version: await versionOf(requestedId), reason: nested(1_000) }, 'deep-reason');
    await named('1,000 levels with an Idempotency-Key', deepReason, 'reason');
    expect(deepReason.body.error.message).toBe('The request is nested too deeply.');
    report('the reported shapes', tally);
    expect(tally.serverErrors).toBe(0);
  });

  it('finding 6: when generated bodies hit every state-changing route as several roles, then never a 500, always the error shape, nothing written', async () => {
    const tally = fresh();
    const before = await counts();
    const routes = registeredApiRoutes(srv).filter((r) => /^(POST|PUT|PATCH|DELETE) /.test(r) && !r.includes('/auth/sign-out'));
    fc.configureGlobal({ seed: 20261202 });
    for (const route of routes) {
      const [method, path] = route.split(' ');
      const url = withIds(path, draftId).replace(stepId, randomUUID());
      for (const [i, body] of fc.sample(hostile, 12).entries()) {
        const client = clients[(tally.sent + i) % clients.length];
        // Every third request carries an Idempotency-Key: the key's hash of the body must survive it too.
        const res = method === 'DELETE' ? await client.delete(url) : await sendJson(client, method, url, body, i % 3 === 0 ? `gen-${tally.sent}` : undefined);
        judge(tally, `${route} with ${JSON.stringify(body)?.slice(0, 80)}`, res);
        // An action that takes no input (verify the audit chain, sign a checkpoint) may accept an empty object;
        // any body with something in it must be refused.
        const empty = typeof body === 'object' && body !== null && !Array.isArray(body) && Reflect.ownKeys(body).length === 0;
        if (res.status < 300 && method !== 'DELETE' && !empty) tally.problems.push(`${route} → ${res.status}: a generated body was accepted (${JSON.stringify(body)?.slice(0, 80)})`);
      }
    }
    // An oversized body is refused before it is parsed.
    const huge = await crew.lead.post(`/api/permits`, { title: 'x'.repeat(200_000) });
    judge(tally, 'oversized body', huge);
    expect(huge.status).toBe(413);
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
    expect(({} as Record<string, unknown>).isAdmin).toBeUndefined();
    report(`generated bodies over ${routes.length} routes`, tally);
    expect(tally.problems).toEqual([]);
    expect(tally.serverErrors).toBe(0);
    expect(await counts()).toEqual(before);
  }, 300_000);

  it('finding 6: when valid bodies carry one hostile field (years 0 and 10000, half a range, broken text, deep nesting), then never a 500', async () => {
    const tally = fresh();
    const now = srv.clock.now().getTime();
    const iso = (minutes: number) => new Date(now + minutes * 60_000).toISOString();
    const day = (days: number) => new Date(now + days * 86_400_000).toISOString().slice(0, 10);
    const [pipeline] = await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM pipelines WHERE id = :id`, { replacements: { id: ids.pipelineId }, type: QueryTypes.SELECT });
    type Seed = { client: ApiClient; method: string; url: string | (() => Promise<string>); body: (() => Promise<Record<string, unknown>>) | Record<string, unknown>; dates?: string[]; pairs?: Array<[string, string]> };
    const seeds: Record<string, Seed> = {
      'permit create': { client: crew.lead, method: 'POST', url: '/api/permits', body: permitBody(ids, srv.clock.now()), dates: ['validFrom', 'validTo'], pairs: [['validFrom', 'validTo'], ['fromPosition', 'toPosition']] },
      'permit edit': {
        client: crew.lead, method: 'PATCH', url: `/api/permits/${draftId}`,
        body: async () => ({ version: await versionOf(draftId), title: 'Edited', validFrom: iso(-1), validTo: iso(600), fromPosition: 22.0, toPosition: 22.2 }),
        dates: ['validFrom', 'validTo'], pairs: [['validFrom', 'validTo'], ['fromPosition', 'toPosition']],
      },
      'permit edit, one end of the window': { client: crew.lead, method: 'PATCH', url: `/api/permits/${draftId}`, body: async () => ({ version: await versionOf(draftId), validFrom: iso(6_000) }), dates: ['validFrom'] },
      'send back': { client: crew.authoriser, method: 'POST', url: `/api/permits/${requestedId}/transitions`, body: async () => ({ event: 'reject', version: await versionOf(requestedId), reason: 'Add the drains' }) },
      're-validate': { client: crew.authoriser, method: 'POST', url: `/api/permits/${isolatedId}/transitions`, body: async () => ({ event: 'revalidate', version: await versionOf(isolatedId), validTo: iso(600) }), dates: ['validTo'] },
      'gas test': {
        client: crew.tech, method: 'POST', url: `/api/permits/${isolatedId}/gas-tests`,
        body: { instrumentId, place: 'work_area', testedAt: iso(0), readings: { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 }, notes: 'clear' }, dates: ['testedAt'],
      },
      'gas log import': { client: crew.tech, method: 'POST', url: `/api/permits/${isolatedId}/gas-tests/import`, body: { csv: 'time,o2,lel,h2s,co\n0000-01-01T00:00:00Z,20.9,0,0,1\n', instrumentId, place: 'work_area', dryRun: true } },
      'timed check': { client: crew.tech, method: 'POST', url: `/api/permits/${isolatedId}/checks`, body: { kind: 'vent', checkedAt: iso(0), vapourAwayFromWork: true, pressureBuilding: false, notes: 'ok' }, dates: ['checkedAt'] },
      'gas limits': { client: crew.lead, method: 'PUT', url: `/api/permits/${isolatedId}/gas-limits`, body: { o2: { min: 19.5, max: 23 }, lel: { max: 5 } }, pairs: [['o2', 'lel']] },
      instrument: { client: crew.authoriser, method: 'POST', url: '/api/instruments', body: { model: 'M', serial: `S-${randomUUID().slice(0, 8)}`, lastBumpTestAt: iso(-5), lastCalibratedOn: day(-30), calibrationDueOn: day(60) }, dates: ['lastBumpTestAt', 'lastCalibratedOn', 'calibrationDueOn'], pairs: [['lastCalibratedOn', 'calibrationDueOn']] },
      'instrument edit': { client: crew.authoriser, method: 'PATCH', url: `/api/instruments/${instrumentId}`, body: { lastBumpTestAt: iso(0), calibrationDueOn: day(90) }, dates: ['lastBumpTestAt', 'calibrationDueOn'] },
      qualification: { client: admin, method: 'POST', url: '/api/qualifications', body: { userId: ids.leadUserId, kind: 'excavation', reference: 'Q-1', issuedOn: day(-10), expiresOn: day(300) }, dates: ['issuedOn', 'expiresOn'], pairs: [['issuedOn', 'expiresOn']] },
      pipeline: { client: admin, method: 'POST', url: '/api/pipelines', body: { code: 'HI-1', name: 'Hostile line', product: 'natural_gas', nps: 12, schedule: 'STD', mopPsig: 720, startPosition: 0, endPosition: 40, notes: 'n' }, pairs: [['startPosition', 'endPosition']] },
      point: { client: admin, method: 'POST', url: '/api/isolation-points', body: { pipelineId: pipeline.id, tagCode: 'HI-V1', kind: 'vent', position: 17.1, description: 'd' } },
      lock: { client: admin, method: 'POST', url: '/api/locks', body: { number: 'HIL1', notes: 'n' } },
      organisation: { client: admin, method: 'POST', url: '/api/organisations', body: { name: 'Hostile Ltd', kind: 'contractor' } },
      plan: {
        client: crew.lead, method: 'PUT', url: `/api/permits/${draftId}/isolations`,
        body: async () => ({ version: await versionOf(draftId), steps: [{ tempLabel: 'HI-BV', tempPosition: 22.0, kind: 'block_valve' }] }),
      },
      'step apply': { client: crew.tech, method: 'POST', url: `/api/permits/${draftId}/isolations/${randomUUID()}/apply`, body: { appliedAt: iso(0), asBuilt: { bentoniteLb: 31, waterLb: 31, lengthIn: 15, builtAt: iso(0) } }, dates: ['appliedAt'] },
      atmosphere: { client: crew.lead, method: 'POST', url: '/api/calc/atmosphere', body: { readings: { o2Pct: 20.9, lelPct: 0 }, hotWork: true } },
      'sign-in': { client: await srv.anonymous(), method: 'POST', url: '/api/auth/sign-in', body: { email: 'nobody@river.example', password: 'not-the-password' } },
    };
    fc.configureGlobal({ seed: 20261203 });
    for (const [name, seed] of Object.entries(seeds)) {
      const base = typeof seed.body === 'function' ? await seed.body() : seed.body;
      for (const [i, body] of fc.sample(nearValid(base, seed.dates ?? [], seed.pairs ?? []), 30).entries()) {
        // A version read just before, so an edit is judged on its fields, not refused as stale.
        if ('version' in body && typeof seed.body === 'function') body.version = ((await seed.body()) as { version?: number }).version ?? body.version;
        const url = typeof seed.url === 'function' ? await seed.url() : seed.url;
        const res = await sendJson(seed.client, seed.method, url, body, i % 2 ? `near-${name}-${i}` : undefined);
        judge(tally, `${name} with ${JSON.stringify(body).slice(0, 100)}`, res);
      }
    }
    report(`near-valid bodies over ${Object.keys(seeds).length} inputs`, tally);
    expect(tally.problems).toEqual([]);
    expect(tally.serverErrors).toBe(0);
    // Nothing half-stored: whatever was accepted, the audit trail still verifies.
    expect((await crew.auditor.get('/api/audit/verify')).body).toMatchObject({ ok: true, breaks: [] });
  }, 300_000);

  it('finding 6: when every route is called with hostile query strings, then never a 500', async () => {
    const tally = fresh();
    const routes = registeredApiRoutes(srv).filter((r) => !r.includes('/auth/sign-out'));
    for (const route of routes) {
      const [method, path] = route.split(' ');
      for (const [i, query] of hostileQueries.entries()) {
        const client = clients[i % clients.length];
        const url = `${withIds(path, i % 2 ? isolatedId : draftId)}?${query}`;
        const req = client.agent[method.toLowerCase() as 'get' | 'post' | 'put' | 'patch' | 'delete'](url).set('x-csrf-token', client.csrf);
        const res = await readAnswer((method === 'GET' || method === 'DELETE' ? req : req.set('content-type', 'application/json').send('{}')) as unknown as Parameters<typeof readAnswer>[0]);
        judge(tally, `${method} ${url.slice(0, 120)}`, res);
      }
    }
    report(`hostile query strings over ${routes.length} routes`, tally);
    expect(tally.problems).toEqual([]);
    expect(tally.serverErrors).toBe(0);
  }, 300_000);

  it('finding 6: when uploads and CSV bodies carry hostile files, fields and names, on upload routes and every other state-changing route, then never a 500', async () => {
    const tally = fresh();
    const brokenUtf8 = Buffer.from([0x61, 0xed, 0xa0, 0x80, 0x62, 0xff, 0xfe, 0x00, 0x63]);
    const csvs = [
      'record_type,pipeline_code,name,position\nsite,BM-10,Yard \u0000 one,1\n',
      Buffer.concat([Buffer.from('record_type,pipeline_code,name,position\nsite,BM-10,'), brokenUtf8, Buffer.from(',1\n')]),
      'time,o2,lel,h2s,co\n0000-01-01T00:00:00Z,20.9,0,0,1\n10000-01-01T00:00:00Z,20.9,0,0,1\n',
      Buffer.from('\ufeffrecord_type,pipeline_code\n', 'utf16le'),
      'a'.repeat(70_000),
    ];
    type Part = { fields: Record<string, string | Buffer>; files: Array<{ field: string; bytes: Buffer; name: string }> };
    const parts: Part[] = [
      { fields: { entityType: 'permit\u0000' }, files: [{ field: 'file', bytes: onePixelPng, name: 'valve.png' }] },
      { fields: { entityType: 'isolation_step', entityId: brokenUtf8 }, files: [{ field: 'file', bytes: onePixelPng, name: 'valve.png' }] },
      { fields: { entityType: 'gas_test', entityId: '0000-01-01T00:00:00Z' }, files: [{ field: 'file', bytes: onePixelPng, name: 'valve.png' }] },
      { fields: { colour: 'teal', ['__proto__']: 'x' }, files: [{ field: 'file', bytes: onePixelPng, name: 'valve.png' }] },
      { fields: {}, files: [{ field: 'file', bytes: onePixelPng, name: 'nul\u0000name.png' }] },
      { fields: {}, files: [{ field: 'file', bytes: onePixelPng, name: brokenUtf8.toString('latin1') }] },
      { fields: {}, files: [{ field: 'file', bytes: Buffer.alloc(0), name: 'empty.png' }] },
      { fields: {}, files: [{ field: 'photo', bytes: onePixelPng, name: 'valve.png' }] },
      { fields: {}, files: [{ field: 'file', bytes: onePixelPng, name: 'a.png' }, { field: 'file', bytes: onePixelPng, name: 'b.png' }] },
      { fields: { entityType: 'x'.repeat(5_000) }, files: [] },
      ...csvs.map((csv) => ({ fields: {}, files: [{ field: 'file', bytes: Buffer.isBuffer(csv) ? csv : Buffer.from(csv), name: 'register.csv' }] })),
    ];
    const routes = registeredApiRoutes(srv).filter((r) => /^(POST|PUT|PATCH) /.test(r) && !r.includes('/auth/sign-out'));
    const uploadRoutes = routes.filter((r) => /attachments|imports|gas-tests\/import/.test(r));
    for (const route of routes) {
      const [method, path] = route.split(' ');
      // Every part on the upload routes; a few on the others, whose body is never read as a form.
      const mine = uploadRoutes.includes(route) ? parts : parts.slice(0, 3);
      for (const [i, part] of mine.entries()) {
        const client = uploadRoutes.includes(route) && route.includes('imports') ? admin : crew.lead;
        let req = client.agent[method.toLowerCase() as 'post' | 'put' | 'patch'](withIds(path, i % 2 ? isolatedId : draftId)).set('x-csrf-token', client.csrf);
        if (i % 2) req = req.set('Idempotency-Key', `upload-${tally.sent}`);
        for (const [k, v] of Object.entries(part.fields)) req = req.field(k, v as string);
        for (const f of part.files) req = req.attach(f.field, f.bytes, { filename: f.name, contentType: 'application/octet-stream' });
        judge(tally, `${route} multipart ${JSON.stringify(part.fields).slice(0, 60)}`, await req);
      }
      const csvBodies = uploadRoutes.includes(route) ? csvs : csvs.slice(0, 2);
      for (const [i, csv] of csvBodies.entries()) {
        const client = route.includes('imports') ? admin : crew.tech;
        const query = route.includes('gas-tests/import') ? `?instrumentId=${instrumentId}&place=work_area&dryRun=true&time=time` : '?dryRun=true';
        let req = client.agent[method.toLowerCase() as 'post' | 'put' | 'patch'](`${withIds(path, isolatedId)}${query}`).set('x-csrf-token', client.csrf).set('content-type', 'text/csv');
        if (i % 2) req = req.set('Idempotency-Key', `csv-${tally.sent}`);
        judge(tally, `${route} text/csv #${i}`, await req.send(csv));
      }
    }
    report(`multipart and CSV bodies over ${routes.length} routes`, tally);
    expect(tally.problems).toEqual([]);
    expect(tally.serverErrors).toBe(0);
    expect((await crew.auditor.get('/api/audit/verify')).body).toMatchObject({ ok: true });
    console.log(`hostile input, so far: ${overall.sent} requests sent, ${overall.serverErrors} answers ≥ 500`);
    expect(overall.serverErrors).toBe(0);
  }, 300_000);
});
