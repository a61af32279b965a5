import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, users } from '../fixtures/permit-fixtures';

// The permits list the permit screens page through: who sees which rows, and the filters they send.
describe('listing permits', () => {
  let srv: TestServer;
  let lead: ApiClient, tech: ApiClient, authoriser: ApiClient, otherTenant: ApiClient;
  let ids: Awaited<ReturnType<typeof demoIds>>;
  let ours = { id: '', number: '' };
  let othersNumber = '';

  beforeAll(async () => {
    srv = await startTestServer();
    [lead, tech, authoriser, otherTenant] = await Promise.all([users.lead, users.tech, users.authoriser, users.otherTenant].map((u) => srv.signIn(u)));
    ids = await demoIds(srv);
    const created = await lead.post('/api/permits', permitBody(ids, srv.clock.now(), { title: 'Sleeve at the Tansy Hollow crossing' }));
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    ours = { id: created.body.id, number: created.body.number };
    // A second contractor of the same tenant, with a permit of its own made by the authoriser.
    const [org] = await srv.deps.sequelize.query<{ id: string }>(
      `INSERT INTO organisations (tenant_id, name, kind) VALUES (:tenantId, 'Fernbrake Pipe Services', 'contractor') RETURNING id`,
      { replacements: { tenantId: ids.tenantId }, type: QueryTypes.SELECT },
    );
    const theirs = await authoriser.post('/api/permits', permitBody(ids, srv.clock.now(), { kinds: ['cold_work'], title: 'Coupon change', contractorOrganisationId: org.id }));
    expect(theirs.status, JSON.stringify(theirs.body)).toBe(201);
    othersNumber = theirs.body.number;
  });
  afterAll(() => srv.close());

  it('when the contractor lead lists permits, then they get their organisation’s permits and not another contractor’s', async () => {
    const res = await lead.get('/api/permits');
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const numbers = res.body.items.map((p: { number: string }) => p.number);
    expect(numbers).toContain(ours.number);
    expect(numbers).not.toContain(othersNumber);
    expect(res.body).toMatchObject({ page: 1, pageSize: 25 });
  });

  it('when a contractor’s isolation technician lists permits, then the same organisation scope applies', async () => {
    const res = await tech.get('/api/permits');
    expect(res.status).toBe(200);
    const numbers = res.body.items.map((p: { number: string }) => p.number);
    expect(numbers).toContain(ours.number);
    expect(numbers).not.toContain(othersNumber);
  });

  it('when the authoriser searches by number and filters by state and kind, then only matching permits come back', async () => {
    const byNumber = await authoriser.get(`/api/permits?q=${ours.number}`);
    expect(byNumber.body.items.map((p: { id: string }) => p.id)).toEqual([ours.id]);
    const drafts = await authoriser.get('/api/permits?state=draft,requested&kind=cold_work');
    expect(drafts.status).toBe(200);
    expect(drafts.body.items.map((p: { number: string }) => p.number)).toEqual([othersNumber]);
    const none = await authoriser.get('/api/permits?state=closed');
    expect(none.body).toMatchObject({ items: [], total: 0 });
  });

  it('when another tenant’s authoriser lists permits, then none of this tenant’s appear', async () => {
    const res = await otherTenant.get(`/api/permits?q=${ours.number}`);
    expect(res.status).toBe(200);
    expect(res.body.total).toBe(0);
  });

  it('when the state filter names a state that does not exist, then it is a 400 naming the field', async () => {
    const res = await authoriser.get('/api/permits?state=flying');
    expect(res.status).toBe(400);
    expect(res.body.error.details[0].path).toMatch(/^state/);
  });
});
