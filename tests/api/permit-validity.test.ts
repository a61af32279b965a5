// How long a permit may be valid: the tenant's longest permit (maxPermitHours, 72 by default) bounds
// the window at request, at every edit, on the way to approval and at re-validation.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { runScheduler } from '../../server/src/modules/gas-tests/scheduler';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, transition } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

const HOUR = 3_600_000;

describe('finding 5: the validity window is bounded by the tenant’s longest permit', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const at = (hoursFromNow: number) => new Date(srv.clock.now().getTime() + hoursFromNow * HOUR).toISOString();
  const setMaxHours = (hours: number | null) =>
    srv.deps.sequelize.query(
      hours === null ? `UPDATE tenants SET settings = settings - 'maxPermitHours' WHERE id = :t` : `UPDATE tenants SET settings = settings || jsonb_build_object('maxPermitHours', :hours) WHERE id = :t`,
      { replacements: { t: ids.tenantId, hours } },
    );
  const expect422 = (res: { status: number; body: { error: { code: string; message: string; details: { path: string }[] } } }, max: string) => {
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    expect(res.body.error.code).toBe('unprocessable');
    expect(res.body.error.message).toContain(max);
    expect(res.body.error.details.map((d) => d.path)).toEqual(['validTo']);
  };

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
  });
  afterAll(() => srv?.close());

  it('when a permit is requested for longer than 72 hours, then 422 names the maximum and nothing is written', async () => {
    const [{ n: before }] = await q<{ n: number }>(`SELECT count(*)::int AS n FROM permits`);
    const res = await crew.lead.post('/api/permits', permitBody(ids, srv.clock.now(), { validTo: at(73) }));
    expect422(res, 'at most 72 hours');
    const [{ n: after }] = await q<{ n: number }>(`SELECT count(*)::int AS n FROM permits`);
    expect(after).toBe(before);
    expect((await crew.lead.post('/api/permits', permitBody(ids, srv.clock.now(), { validTo: at(71) }))).status).toBe(201);
  });

  it('when a draft is edited to run for longer than 72 hours, then 422 names the maximum and the draft is unchanged', async () => {
    const id = await draftWithPlan(srv, crew, ids);
    const draft = await expectOk(await crew.lead.get(`/api/permits/${id}`));
    const res = await crew.lead.patch(`/api/permits/${id}`, { version: draft.version, validTo: '2199-01-01T00:00:00Z' });
    expect422(res, 'at most 72 hours');
    const after = await expectOk(await crew.lead.get(`/api/permits/${id}`));
    expect([after.version, after.validTo]).toEqual([draft.version, draft.validTo]);
  });

  it('when the tenant shortens its longest permit after a 12-hour permit was requested, then the approval is refused naming the new maximum', async () => {
    const id = await draftWithPlan(srv, crew, ids);
    await expectOk(await transition(crew.lead, id, 'submit'));
    try {
      await setMaxHours(8);
      expect422(await transition(crew.authoriser, id, 'approve', { password: 'holdpoint-demo', signedName: 'Priya Castellan' }), 'at most 8 hours');
      expect((await expectOk(await crew.lead.get(`/api/permits/${id}`))).state).toBe('requested');
    } finally {
      await setMaxHours(null);
    }
  });

  it('when an expired permit is re-validated to 2199 or past 72 hours from now, then 422 names the maximum; within it the permit is back in force', async () => {
    const id = await draftWithPlan(srv, crew, ids, { validTo: at(0.3) });
    await toAccepted(crew, id);
    srv.clock.advanceMinutes(21);
    await runScheduler(srv.appDeps);
    const expired = await expectOk(await crew.lead.get(`/api/permits/${id}`));
    expect(expired.state).toBe('expired');

    expect422(await transition(crew.authoriser, id, 'revalidate', { validTo: '2199-12-31T00:00:00Z' }), 'at most 72 hours');
    expect422(await transition(crew.authoriser, id, 'revalidate', { validTo: at(72 + 1 / 60) }), 'at most 72 hours');
    const still = await expectOk(await crew.lead.get(`/api/permits/${id}`));
    expect([still.state, still.version, still.validTo]).toEqual(['expired', expired.version, expired.validTo]);

    const validTo = at(72);
    const back = await expectOk(await transition(crew.authoriser, id, 'revalidate', { validTo }));
    expect(back.state).toBe('accepted');
    expect(new Date(back.validTo as string).toISOString()).toBe(validTo);
    const [event] = await q<{ data: { validTo: string } }>(`SELECT data FROM audit_events WHERE entity_id = :id AND action = 'revalidate'`, { id });
    expect(event.data.validTo).toBe(validTo);
  });
});
