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

  describe('finding 11: a key on an upload covers the file', () => {
    const pdf = (note: string) => Buffer.from(`%PDF-1.4\n% ${note}\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n`, 'latin1');
    const upload = (permitId: string, bytes: Buffer, key: string) =>
      lead.agent.post(`/api/permits/${permitId}/attachments`).set('x-csrf-token', lead.csrf).set('Idempotency-Key', key).attach('file', bytes, { filename: 'isolation-sheet.pdf', contentType: 'application/pdf' });
    const attachments = async (permitId: string) =>
      (await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM attachments WHERE permit_id = :permitId`, { replacements: { permitId }, type: QueryTypes.SELECT }))[0].n;
    let permitId = '';

    beforeAll(async () => {
      const created = await lead.post('/api/permits', permitBody(ids, srv.clock.now(), { title: 'Permit with files' }));
      expect(created.status).toBe(201);
      permitId = created.body.id;
    });

    it('when the same file is sent again with the same key, then it is stored once and the first answer is replayed', async () => {
      const first = await upload(permitId, pdf('sheet one'), 'upload-0001');
      expect(first.status, JSON.stringify(first.body)).toBe(201);
      await new Promise((r) => setTimeout(r, 200));
      const again = await upload(permitId, pdf('sheet one'), 'upload-0001');
      expect(again.status).toBe(201);
      expect(again.headers['idempotent-replayed']).toBe('true');
      expect(again.body.id).toBe(first.body.id);
      expect(await attachments(permitId)).toBe(1);
    });

    it('when another file comes with the same key, then 422 and nothing more is stored', async () => {
      const other = await upload(permitId, pdf('a different sheet'), 'upload-0001');
      expect(other.status).toBe(422);
      expect(other.body.error).toEqual({ code: 'unprocessable', message: 'This Idempotency-Key was already used for a different request.', details: [] });
      expect(other.headers['idempotent-replayed']).toBeUndefined();
      expect(await attachments(permitId)).toBe(1);
    });

    it('when the same file comes with the key to another permit, then 422', async () => {
      const elsewhere = await lead.post('/api/permits', permitBody(ids, srv.clock.now(), { title: 'Another permit with files' }));
      expect((await upload(elsewhere.body.id, pdf('sheet one'), 'upload-0001')).status).toBe(422);
      expect(await attachments(elsewhere.body.id)).toBe(0);
    });

    it('when a CSV body is sent again with the same key but other text, then 422', async () => {
      const admin = await srv.signIn(users.admin);
      const csvImport = (text: string) =>
        admin.agent.post('/api/imports/assets?dryRun=true').set('x-csrf-token', admin.csrf).set('Idempotency-Key', 'csv-0001').set('content-type', 'text/csv').send(text);
      const header = 'record_type,pipeline_code,name,position\n';
      const first = await csvImport(`${header}site,BM-10,Cedar Run Yard,1\n`);
      expect(first.status, JSON.stringify(first.body)).toBeLessThan(500);
      await new Promise((r) => setTimeout(r, 200));
      const same = await csvImport(`${header}site,BM-10,Cedar Run Yard,1\n`);
      expect(same.headers['idempotent-replayed']).toBe('true');
      expect((await csvImport(`${header}site,BM-10,Another Yard,2\n`)).status).toBe(422);
    });
  });

  it('finding 6: when deeply nested JSON comes with a key, then 400 in the error shape and the key stays free for a proper request', async () => {
    let deep: unknown = 1;
    for (let i = 0; i < 1_000; i++) deep = { a: deep };
    const res = await lead.post('/api/permits', deep).set('Idempotency-Key', 'deep-0001');
    expect(res.status).toBe(400);
    expect(res.body.error).toMatchObject({ code: 'validation_failed', message: 'The request is nested too deeply.' });
    // 3,000 levels inside a field: hashing it for the key used to overflow the stack (a 500).
    let deeper: unknown = 1;
    for (let i = 0; i < 3_000; i++) deeper = { a: deeper };
    const inField = await lead.post('/api/permits', permitBody(ids, srv.clock.now(), { scope: deeper })).set('Idempotency-Key', 'deep-0001');
    expect(inField.status).toBe(400);
    expect(inField.body.error.details).toEqual([{ path: `scope${'.a'.repeat(31)}`, message: 'Nested more than 32 levels deep.' }]);
    const proper = await lead.post('/api/permits', permitBody(ids, srv.clock.now(), { title: 'After a nested body' })).set('Idempotency-Key', 'deep-0001');
    expect(proper.status).toBe(201);
  });

  it('when the key is malformed, then 400 in the error shape', async () => {
    const res = await lead.post('/api/permits', {}).set('Idempotency-Key', 'x'.repeat(101));
    expect(res.status).toBe(400);
    expect(res.body.error.details[0].path).toBe('Idempotency-Key');
  });
});
