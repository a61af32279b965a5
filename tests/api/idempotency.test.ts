import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, users } from '../fixtures/permit-fixtures';

describe('Idempotency-Key on state-changing requests', () => {
  let srv: TestServer;
  let lead: ApiClient;
  let ids: Awaited<ReturnType<typeof demoIds>>;
  const count = async () =>
    (await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM permits WHERE title = 'Idempotent request'`, { type: QueryTypes.SELECT }))[0].n;

  beforeAll(async () => {
    srv = await startTestServer();
    lead = await srv.signIn(users.lead);
    ids = await demoIds(srv);
  });
  afterAll(() => srv.close());

  it('when a request is retried with the same key, then it is applied once and the first answer is replayed', async () => {
    const body = permitBody(ids, srv.clock.now(), { title: 'Idempotent request' });
    const first = await lead.post('/api/permits', body).set('Idempotency-Key', 'tap-0001');
    expect(first.status).toBe(201);
    await new Promise((r) => setTimeout(r, 200));
    const second = await lead.post('/api/permits', body).set('Idempotency-Key', 'tap-0001');
    expect(second.status).toBe(201);
    expect(second.headers['idempotent-replayed']).toBe('true');
    expect(second.body.id).toBe(first.body.id);
    expect(await count()).toBe(1);
  });

  it('when the same key comes with a different request, then it is refused and nothing is written', async () => {
    const res = await lead.post('/api/permits', permitBody(ids, srv.clock.now(), { title: 'Idempotent request', scope: 'changed' })).set('Idempotency-Key', 'tap-0001');
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('unprocessable');
    expect(await count()).toBe(1);
  });

  it('when the key is malformed, then 400 in the error shape', async () => {
    const res = await lead.post('/api/permits', {}).set('Idempotency-Key', 'x'.repeat(101));
    expect(res.status).toBe(400);
    expect(res.body.error.details[0].path).toBe('Idempotency-Key');
  });
});
