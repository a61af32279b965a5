// Issue 18, working without signal: a record kept in the device's outbox arrives later with the time it
// was made on site and an Idempotency-Key; the server keeps the time, marks it late, and applies it once.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, inStore, signInCrew, steps, tempPlan, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

type ErrorBody = { error: { code: string; message: string; details: { path: string; message: string }[] } };

describe('issue 18: records sent from the outbox keep their observed time and arrive once', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let permitId = '';
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const minutesFromNow = (m: number) => new Date(srv.clock.now().getTime() + m * 60_000).toISOString();
  const refused = (res: { status: number; body: unknown }, path: string, words: RegExp) => {
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    const { error } = res.body as ErrorBody;
    expect(error.message).toMatch(words);
    expect(error.details.map((d) => d.path)).toEqual([path]);
  };

  beforeAll(async () => {
    srv = await startTestServer({ env: { SESSION_IDLE_MINUTES: '600', SESSION_ABSOLUTE_HOURS: '48' } });
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    permitId = await draftWithPlan(srv, crew, ids, {}, crew.lead, tempPlan);
    await toAccepted(crew, permitId);
    srv.clock.advanceMinutes(5);
  });
  afterAll(() => srv?.close());

  it('when a verification made offline 20 minutes ago arrives, then it keeps that time and the audit trail says it was entered late; before the application or in the future it is refused and the step stays applied', async () => {
    const valve = (await steps(crew.tech, permitId)).find((s) => s.kind === 'block_valve')!;
    await expectOk(await crew.tech.post(`/api/permits/${permitId}/isolations/${valve.id}/apply`, { lockId: await inStore(srv, 'locks', ids.tenantId), tagId: await inStore(srv, 'tags', ids.tenantId) }));
    const appliedAt = srv.clock.now();
    srv.clock.advanceMinutes(30);
    const verify = (verifiedAt: string) => crew.tech2.post(`/api/permits/${permitId}/isolations/${valve.id}/verify`, { method: 'position_checked', verifiedAt });

    refused(await verify(new Date(appliedAt.getTime() - 2 * 60_000).toISOString()), 'verifiedAt', /before the isolation was applied/);
    refused(await verify(minutesFromNow(10)), 'verifiedAt', /in the future/);
    const [still] = await q<{ status: string; verified_at: Date | null }>(`SELECT status, verified_at FROM isolation_steps WHERE id = :id`, { id: valve.id });
    expect(still).toEqual({ status: 'applied', verified_at: null });

    const verifiedAt = minutesFromNow(-20);
    const step = await expectOk(await verify(verifiedAt));
    expect(new Date(step.verifiedAt as unknown as string).toISOString()).toBe(verifiedAt);
    const [event] = await q<{ data: Record<string, unknown> }>(`SELECT data FROM audit_events WHERE entity_id = :id AND action = 'isolation_verified'`, { id: valve.id });
    expect(event.data).toMatchObject({ enteredLate: true, verifiedAt });
  });

  it('when a queued check is sent again with the same Idempotency-Key (the first answer was lost), then one check is stored with its observed time and the repeat gets the first answer', async () => {
    const checkedAt = minutesFromNow(-10);
    const body = { kind: 'vent', checkedAt, vapourAwayFromWork: true, pressureBuilding: false };
    const send = () => crew.tech.post(`/api/permits/${permitId}/checks`, body).set('Idempotency-Key', 'outbox-test-check-1');
    const first = await send();
    expect(first.status, JSON.stringify(first.body)).toBe(201);
    const again = await send();
    expect(again.status).toBe(201);
    expect(again.headers['idempotent-replayed']).toBe('true');
    expect(again.body).toEqual(first.body);
    const rows = await q<{ checked_at: Date }>(`SELECT checked_at FROM permit_checks WHERE permit_id = :permitId AND kind = 'vent'`, { permitId });
    expect(rows.map((r) => new Date(r.checked_at).toISOString())).toEqual([checkedAt]);
  });
});
