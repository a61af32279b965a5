// Finding 5: the asset register's routes only parse and respond; its services check rights and open the
// one transaction. Parsing now comes before the rights check, so a body that is not even an object must
// be a 400 for everyone, and a reader's well-formed change must still be refused by the service.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds } from '../fixtures/permit-fixtures';

describe('asset register routes over their services', () => {
  let srv: TestServer;
  let admin: ApiClient;
  let auditor: ApiClient;
  let ids: Awaited<ReturnType<typeof demoIds>>;

  const count = async (table: string) =>
    (await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM ${table} WHERE tenant_id = :t`, { replacements: { t: ids.tenantId }, type: QueryTypes.SELECT }))[0].n;
  const counts = async () => ({ pipelines: await count('pipelines'), points: await count('isolation_points'), locks: await count('locks'), events: await count('audit_events') });

  beforeAll(async () => {
    srv = await startTestServer();
    ids = await demoIds(srv);
    admin = await srv.signIn('admin@bramblecote.example');
    auditor = await srv.signIn('auditor@bramblecote.example');
  });
  afterAll(() => srv.close());

  it('finding 5: when a body that is not an object (null, a list, a number) is sent to add a pipeline or a point, then the admin gets 400 in the error shape, a reader is refused for the role first (finding H4: 403; null and numbers are refused as JSON for everyone, 400), and nothing is written', async () => {
    const before = await counts();
    for (const client of [admin, auditor])
      for (const path of ['/api/pipelines', '/api/isolation-points', '/api/locks'])
        for (const body of [null, [], 7]) {
          const res = await client.agent.post(path).set('x-csrf-token', client.csrf).set('Content-Type', 'application/json').send(JSON.stringify(body));
          // The JSON reader takes only objects and lists, before anyone's role is looked at.
          const reachesRoute = Array.isArray(body);
          const [status, code] = client === auditor && reachesRoute ? [403, 'forbidden'] : [400, 'validation_failed'];
          expect(res.status, `${path} ${JSON.stringify(body)} → ${JSON.stringify(res.body)}`).toBe(status);
          expect(res.body.error).toMatchObject({ code });
          expect(Array.isArray(res.body.error.details)).toBe(true);
        }
    expect(await counts()).toEqual(before);
  });

  it('finding 5: when a reader sends a well-formed new pipeline, point, lock or change, then the service refuses it (403) and nothing is written', async () => {
    const before = await counts();
    const refused = [
      await auditor.post('/api/pipelines', { code: 'AUD-1', name: 'Auditor line', product: 'natural_gas', nps: 12, schedule: 'STD', mopPsig: 720, startPosition: 0, endPosition: 40 }),
      await auditor.post('/api/isolation-points', { pipelineId: ids.pipelineId, tagCode: 'AUD-V1', kind: 'vent', position: 1 }),
      await auditor.post('/api/locks', { number: 'AUD1' }),
      await auditor.patch(`/api/pipelines/${ids.pipelineId}`, { name: 'Renamed by an auditor' }),
      await auditor.patch(`/api/locks/${ids.locks[0].id}`, { notes: 'Auditor note' }),
      await auditor.post('/api/imports/assets?dryRun=true', { csv: 'record,code\n' }),
    ];
    for (const res of refused) {
      expect(res.status, JSON.stringify(res.body)).toBe(403);
      expect(res.body.error).toMatchObject({ code: 'forbidden' });
    }
    expect(await counts()).toEqual(before);
  });

  it('finding 5: when an admin adds a pipeline and changes it, then each write and its one audit event commit together', async () => {
    const before = await counts();
    const created = await admin.post('/api/pipelines', { code: 'LAY-1', name: 'Layering line', product: 'natural_gas', nps: 12, schedule: 'STD', mopPsig: 720, startPosition: 0, endPosition: 40 });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const changed = await admin.patch(`/api/pipelines/${created.body.id}`, { name: 'Layering line, renamed' });
    expect(changed.status, JSON.stringify(changed.body)).toBe(200);
    expect(changed.body.name).toBe('Layering line, renamed');
    expect(await counts()).toEqual({ ...before, pipelines: before.pipelines + 1, events: before.events + 2 });
    const refusedChange = await admin.patch(`/api/pipelines/${created.body.id}`, { endPosition: -5 });
    expect(refusedChange.status).toBe(400);
    expect(await counts()).toEqual({ ...before, pipelines: before.pipelines + 1, events: before.events + 2 });
  });
});
