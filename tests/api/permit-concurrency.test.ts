// Twenty signed approvals of one permit at the same moment, from two authorisers: the row lock and the
// version check must let exactly one through. Then fifty: mixed approvals, rejections and cancellations
// of one permit, and fifty technicians reaching for one lock.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, sign, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, steps, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

describe('concurrent approvals of one permit', () => {
  let srv: TestServer;
  let crew: Crew;
  let id = '';

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    id = await draftWithPlan(srv, crew, await demoIds(srv));
    await expectOk(await transition(crew.lead, id, 'submit'));
  });
  afterAll(() => srv.close());

  it('when 20 approvals with the same version arrive at once from two authorisers, then exactly one succeeds, 19 get 409, and one approve event is audited', async () => {
    const { version } = (await crew.authoriser.get(`/api/permits/${id}`)).body as { version: number };
    // Each request re-enters the password (an argon2 verify) before it reaches the row lock.
    const calls = Array.from({ length: 20 }, (_, i) => {
      const [client, email] = i % 2 === 0 ? [crew.authoriser, users.authoriser] : [crew.authoriser2, users.authoriser2];
      return client.post(`/api/permits/${id}/transitions`, { event: 'approve', version, ...sign(email) });
    });
    const results = await Promise.all(calls);
    const statuses = results.map((r) => r.status).sort();
    expect(statuses.filter((s) => s === 200), JSON.stringify(results.filter((r) => r.status !== 409 && r.status !== 200).map((r) => r.body))).toHaveLength(1);
    expect(statuses.filter((s) => s === 409)).toHaveLength(19);
    for (const r of results.filter((x) => x.status === 409)) {
      expect(r.body.error.code).toBe('conflict');
      expect(r.body.error.current).toEqual({ state: 'approved', version: version + 1 });
    }

    const events = await srv.deps.sequelize.query<{ action: string; actor_name: string }>(`SELECT action, actor_name FROM audit_events WHERE permit_id = :id AND action = 'approve'`, {
      replacements: { id },
      type: QueryTypes.SELECT,
    });
    expect(events).toHaveLength(1);
    const signatures = await srv.deps.sequelize.query(`SELECT 1 FROM permit_signatures WHERE permit_id = :id AND event = 'approve'`, { replacements: { id }, type: QueryTypes.SELECT });
    expect(signatures).toHaveLength(1);
    const permit = await expectOk(await crew.lead.get(`/api/permits/${id}`));
    expect(permit).toMatchObject({ state: 'approved', version: version + 1 });
    expect(permit.authoriserName).toBe(events[0].actor_name);
  });

  it('when the same thing happened, then the mail for it was queued once per recipient', async () => {
    const rows = await srv.deps.sequelize.query<{ to_address: string; n: number }>(
      `SELECT to_address, count(*)::int AS n FROM mail_outbox WHERE subject LIKE '% Approved:%' GROUP BY to_address`,
      { type: QueryTypes.SELECT },
    );
    expect(rows.length).toBeGreaterThan(0);
    for (const r of rows) expect(r.n, r.to_address).toBe(1);
  });

  it('when the chain is checked afterwards, then it verifies', async () => {
    const res = await crew.auditor.get('/api/audit/verify');
    expect(res.body).toMatchObject({ ok: true });
  });
});

describe('fifty conflicting actions at once', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
  });
  afterAll(() => srv.close());

  it('when 50 approvals, rejections and cancellations of one permit arrive at once with the same version, then one wins, 49 get 409, and the trail holds exactly that one transition', async () => {
    const id = await draftWithPlan(srv, crew, ids);
    await expectOk(await transition(crew.lead, id, 'submit'));
    const { version } = (await crew.authoriser.get(`/api/permits/${id}`)).body as { version: number };
    const reason = { reason: 'The method statement needs another look.' };
    // Every body is complete (signature, reason), so a refusal can only come from the race.
    const mix: [ApiClient, string, Record<string, unknown>][] = [
      [crew.authoriser, 'approve', sign(users.authoriser)],
      [crew.authoriser2, 'approve', sign(users.authoriser2)],
      [crew.authoriser2, 'reject', reason],
      [crew.lead, 'cancel', reason],
      [crew.authoriser, 'cancel', reason],
    ];
    const calls = Array.from({ length: 50 }, (_, i) => {
      const [client, event, extra] = mix[i % mix.length];
      return client.post(`/api/permits/${id}/transitions`, { event, version, ...extra }).then((res) => ({ event, res }));
    });
    const results = await Promise.all(calls);

    const odd = results.filter((r) => r.res.status !== 200 && r.res.status !== 409);
    expect(odd.map((r) => [r.res.status, r.res.body]), 'only 200 and 409').toEqual([]);
    const winners = results.filter((r) => r.res.status === 200);
    expect(winners).toHaveLength(1);
    const target = { approve: 'approved', reject: 'draft', cancel: 'cancelled' }[winners[0].event]!;
    const losers = results.filter((r) => r.res.status === 409);
    expect(losers).toHaveLength(49);
    for (const { res } of losers) {
      expect(res.body.error).toMatchObject({ code: 'conflict', message: expect.any(String), details: [], current: { state: target, version: version + 1 } });
    }

    const permit = await expectOk(await crew.lead.get(`/api/permits/${id}`));
    expect(permit).toMatchObject({ state: target, version: version + 1 });
    const events = await q<{ action: string; from_state: string; to_state: string }>(
      `SELECT action, from_state, to_state FROM audit_events WHERE permit_id = :id AND action IN ('approve', 'reject', 'cancel') ORDER BY seq`,
      { id },
    );
    expect(events).toEqual([{ action: winners[0].event, from_state: 'requested', to_state: target }]);
    const signatures = await q(`SELECT 1 FROM permit_signatures WHERE permit_id = :id`, { id });
    expect(signatures).toHaveLength(winners[0].event === 'approve' ? 1 : 0);
    console.log(`concurrency: 50 mixed approve/reject/cancel on one permit: 1 won (${winners[0].event}), ${losers.length} got 409`);
  });

  it('when 50 technicians put the same lock on 50 different block valves of five permits at once, then one lock goes on, 49 get 409, and the other tags stay in the store', async () => {
    // Five accepted permits of ten temporary block valves each: the lock row, not one permit's row, is what they fight over.
    const permits: string[] = [];
    for (let p = 0; p < 5; p++) {
      const plan = Array.from({ length: 10 }, (_, i) => ({ tempLabel: `RACE-BV-${p}-${i}`, tempPosition: 22 + p * 0.01 + i * 0.001, kind: 'block_valve' }));
      const id = await draftWithPlan(srv, crew, ids, { kinds: ['cold_work'], title: `Lock race ${p + 1}` }, crew.lead, plan);
      await toAccepted(crew, id);
      permits.push(id);
    }
    const stepsOf = await Promise.all(permits.map(async (id) => (await steps(crew.tech, id)).map((s) => ({ permitId: id, stepId: s.id }))));
    const targets = stepsOf.flat();
    expect(targets).toHaveLength(50);
    // A tag of its own for every step, so each apply stands or falls on the lock alone.
    const tagIds = await q<{ id: string }>(
      `INSERT INTO tags (tenant_id, number, state) SELECT :tenantId, 'RACE-T-' || n, 'in_store' FROM generate_series(1, 50) n RETURNING id`,
      { tenantId: ids.tenantId },
    );
    const [lock] = await q<{ id: string; number: string }>(`SELECT id, number FROM locks WHERE tenant_id = :tenantId AND state = 'in_store' ORDER BY number LIMIT 1`, { tenantId: ids.tenantId });

    const results = await Promise.all(
      // Each gives a reason for the order: most of these steps are not next in their plan, and the race is about the lock.
      targets.map((t, i) =>
        (i % 2 === 0 ? crew.tech : crew.tech2).post(`/api/permits/${t.permitId}/isolations/${t.stepId}/apply`, { lockId: lock.id, tagId: tagIds[i].id, outOfOrderReason: 'Lock race.' }),
      ),
    );

    expect(results.filter((r) => r.status !== 200 && r.status !== 409).map((r) => [r.status, r.body]), 'only 200 and 409').toEqual([]);
    expect(results.filter((r) => r.status === 200)).toHaveLength(1);
    const losers = results.filter((r) => r.status === 409);
    expect(losers).toHaveLength(49);
    for (const r of losers) expect(r.body.error).toMatchObject({ code: 'conflict', message: expect.stringMatching(/^(Lock .+ is already on|That lock or tag was just put on)/), details: [] });

    const onSteps = await q<{ id: string; tag_id: string }>(`SELECT id, tag_id FROM isolation_steps WHERE tenant_id = :tenantId AND lock_id = :lock AND status IN ('applied', 'verified')`, {
      tenantId: ids.tenantId,
      lock: lock.id,
    });
    expect(onSteps).toHaveLength(1);
    const winnerIndex = results.findIndex((r) => r.status === 200);
    expect(onSteps[0]).toEqual({ id: targets[winnerIndex].stepId, tag_id: tagIds[winnerIndex].id });
    expect((await q<{ state: string }>(`SELECT state FROM locks WHERE id = :id`, { id: lock.id }))[0].state).toBe('applied');
    const tagStates = await q<{ state: string; n: number }>(`SELECT state, count(*)::int AS n FROM tags WHERE number LIKE 'RACE-T-%' GROUP BY state ORDER BY state`);
    expect(tagStates).toEqual([{ state: 'applied', n: 1 }, { state: 'in_store', n: 49 }]);
    const planned = await q<{ n: number }>(`SELECT count(*)::int AS n FROM isolation_steps WHERE permit_id IN (:permits) AND status = 'planned'`, { permits });
    expect(planned[0].n).toBe(49);
    const events = await q(`SELECT 1 FROM audit_events WHERE permit_id IN (:permits) AND action = 'isolation_applied'`, { permits });
    expect(events).toHaveLength(1);
    console.log(`concurrency: 50 applies of lock ${lock.number} on 50 block valves: 1 went on, ${losers.length} got 409`);
  });

  it('when the chain is checked after both races, then it verifies', async () => {
    expect((await crew.auditor.get('/api/audit/verify')).body).toMatchObject({ ok: true });
  });
});
