// Who takes a lock off and in which order isolations go on and come off, through the real API.
// Sources, named beside each check:
// - OSHA 29 CFR 1910.147(e)(3): "Each lockout or tagout device shall be removed from each energy isolating
//   device by the employee who applied the device", except under (e)(3)(i)–(iii) when that person is not at
//   the facility: verified absent, all reasonable efforts to reach them, told before they resume work there.
// - OSHA 29 CFR 1910.147(c)(7)–(8) (as recalled; the text was not read here): lockout is done by trained,
//   authorized employees; here an in-date lockout/tagout qualification, for taking isolations off as for
//   putting them on.
// - HSE HSG253 (common practice): isolations go on in the planned order and come off in the reverse order
//   of application, under the control of the permit.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, inStore, signInCrew, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

interface Step {
  id: string;
  seq: number;
  label: string;
  kind: string;
  status: string;
  appliedBy: string | null;
  appliedSeq: number | null;
  appliedOutOfOrderReason: string | null;
  removedByName: string | null;
  exceptionRecordedAt: string | null;
  exceptionAuthoriserName: string | null;
  removedUnderException: boolean;
}

type Who = 'tech' | 'tech2';
const names = { tech: 'Sam Ferrand', tech2: 'Ana Lisgar', authoriser: 'Priya Castellan' };
const signed = (name: string) => ({ password: 'holdpoint-demo', signedName: name });

describe('lockout you can trust: removal by the applier, exceptions, order of application', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  const userId: Record<string, string> = {};

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    srv.deps.sequelize.query<T>(sql, { replacements: { tenantId: ids.tenantId, ...replacements }, type: QueryTypes.SELECT });
  const plan = async (id: string) => (await expectOk(await crew.auditor.get(`/api/permits/${id}/isolations`))).items as unknown as Step[];

  async function apply(id: string, step: Step, who: Who, extra: Record<string, unknown> = {}) {
    const body: Record<string, unknown> = { ...extra };
    if (step.kind === 'block_valve') Object.assign(body, { lockId: await inStore(srv, 'locks', ids.tenantId), tagId: await inStore(srv, 'tags', ids.tenantId) });
    if (step.kind === 'plug') body.asBuilt = { bentoniteLb: 31, waterLb: 31, lengthIn: 15.5 };
    return crew[who].post(`/api/permits/${id}/isolations/${step.id}/apply`, body);
  }
  const remove = (id: string, step: Step, who: Who | 'authoriser', body: Record<string, unknown> = {}) =>
    crew[who].post(`/api/permits/${id}/isolations/${step.id}/remove`, step.kind === 'plug' ? { plugOutcome: 'removed', ...body } : body);

  /**
   * An accepted permit with the test plan (block valve, vent, plug), each step put on in plan order by
   * the person named, all in the same minute (the clock does not move), then cancelled: the isolations are due to come off.
   */
  async function cancelledWithStepsOn(title: string, appliers: [Who, Who, Who]) {
    const id = await draftWithPlan(srv, crew, ids, { kinds: ['cold_work'], title });
    await toAccepted(crew, id);
    const steps = await plan(id);
    for (const [i, step] of steps.entries()) await expectOk(await apply(id, step, appliers[i]));
    await expectOk(await transition(crew.lead, id, 'cancel', { reason: 'Stopped for the test.' }));
    return { id, steps: await plan(id) };
  }

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    for (const u of await q<{ id: string; email: string }>(`SELECT id, email FROM users WHERE email IN (:emails)`, { emails: [users.tech, users.tech2, users.authoriser] })) userId[u.email] = u.id;
  });
  afterAll(() => srv?.close());

  it('finding I-1 (OSHA 29 CFR 1910.147(e)(3)): when a technician takes off a lock another technician put on, then it is refused naming its owner; a vent without a lock or tag is not personal', async () => {
    const { id, steps } = await cancelledWithStepsOn('Lock owner check', ['tech2', 'tech2', 'tech']);
    const [valve, vent, plug] = steps;
    expect(valve.appliedBy).toBe(userId[users.tech2]);
    await expectOk(await remove(id, plug, 'tech'));
    // The vent carries no lock or tag of anyone's: a qualified technician may take it off.
    await expectOk(await remove(id, vent, 'tech'));

    const refused = await remove(id, valve, 'tech');
    expect(refused.status, JSON.stringify(refused.body)).toBe(422);
    expect(refused.body.error.code).toBe('unprocessable');
    expect(refused.body.error.message).toContain(`${names.tech2} put lock`);
    expect(refused.body.error.message).toMatch(/only Ana Lisgar may take it off.*an authoriser must first record the exception/);
    expect((await plan(id))[0].status).not.toBe('removed');

    // The applier takes their own lock off without more ado.
    const own = await remove(id, valve, 'tech2');
    expect(own.status, JSON.stringify(own.body)).toBe(200);
    expect(own.body).toMatchObject({ status: 'removed', removedByName: names.tech2, removedUnderException: false });
  });

  it('finding I-1 (OSHA 29 CFR 1910.147(e)(3)(i)–(iii)): when the authoriser records the owner away, tried and to be told, then another technician signs the removal, the record names all four people and the owner is mailed', async () => {
    const { id, steps } = await cancelledWithStepsOn('Exception procedure', ['tech2', 'tech', 'tech']);
    const [valve, vent, plug] = steps;
    await expectOk(await remove(id, plug, 'tech'));
    await expectOk(await remove(id, vent, 'tech'));
    const [lock] = await q<{ number: string }>(`SELECT l.number FROM locks l JOIN isolation_steps s ON s.lock_id = l.id WHERE s.id = :id`, { id: valve.id });

    // Half an hour after the lock went on, the authoriser has tried to reach its owner twice.
    srv.clock.advanceMinutes(30);
    const now = srv.clock.now().getTime();
    const record = {
      absenceCheck: 'Not on the gate log since 14:00; site radio call unanswered.',
      contactAttempts: [
        { how: 'Phoned her mobile, no answer', at: new Date(now - 60_000).toISOString() },
        { how: 'Text message and a call to her supervisor', at: new Date(now).toISOString() },
      ],
      informPlan: 'Her supervisor tells her at the gate before her next shift.',
    };
    const url = `/api/permits/${id}/isolations/${valve.id}/removal-exception`;

    // Only an authoriser records it (a technician hears 403).
    expect((await crew.tech.post(url, { ...record, ...signed(names.tech) })).status).toBe(403);
    // Each of the three must be there; the times must be real.
    const missing = await crew.authoriser.post(url, { ...signed(names.authoriser), absenceCheck: ' ', contactAttempts: [] });
    expect(missing.status).toBe(400);
    expect(missing.body.error.details.map((d: { path: string }) => d.path).sort()).toEqual(['absenceCheck', 'contactAttempts', 'informPlan']);
    const future = await crew.authoriser.post(url, { ...record, contactAttempts: [{ how: 'Phoned', at: new Date(now + 3_600_000).toISOString() }], ...signed(names.authoriser) });
    expect(future.status).toBe(422);
    expect(future.body.error.details).toEqual([{ path: 'contactAttempts.0.at', message: expect.stringContaining('is in the future') }]);
    const unsigned = await crew.authoriser.post(url, { ...record, password: 'not my password', signedName: names.authoriser });
    expect(unsigned.status).toBe(400);
    expect(unsigned.body.error.details.map((d: { path: string }) => d.path)).toEqual(['password']);

    const recorded = await crew.authoriser.post(url, { ...record, ...signed(names.authoriser) });
    expect(recorded.status, JSON.stringify(recorded.body)).toBe(201);
    expect(recorded.body).toMatchObject({ id: valve.id, status: 'applied', exceptionAuthoriserName: names.authoriser, exceptionRecordedAt: expect.any(String) });
    const again = await crew.authoriser.post(url, { ...record, ...signed(names.authoriser) });
    expect(again.status).toBe(409);
    expect(again.body.error.message).toContain('already recorded');

    // The authoriser does not take it off themselves; the remover signs with password and typed name.
    expect((await remove(id, valve, 'authoriser', signed(names.authoriser))).status).toBe(403);
    const noSignature = await remove(id, valve, 'tech');
    expect(noSignature.status).toBe(400);
    expect(noSignature.body.error.details.map((d: { path: string }) => d.path).sort()).toEqual(['password', 'signedName']);
    expect((await plan(id))[0].status).toBe('applied');

    const removed = await remove(id, valve, 'tech', signed(names.tech));
    expect(removed.status, JSON.stringify(removed.body)).toBe(200);
    expect(removed.body).toMatchObject({ status: 'removed', removedByName: names.tech, removedUnderException: true });
    expect((await q<{ state: string }>(`SELECT state FROM locks WHERE tenant_id = :tenantId AND number = :n`, { n: lock.number }))[0].state).toBe('in_store');

    // The record links the step, the applier, the authoriser, the remover and the efforts.
    const [row] = await q<Record<string, unknown>>(
      `SELECT step_id, applier_user_id, authoriser_user_id, remover_user_id, remover_signed_name, absence_check, contact_attempts, inform_plan, removed_at
       FROM lock_removal_exceptions WHERE tenant_id = :tenantId AND step_id = :id`,
      { id: valve.id },
    );
    expect(row).toMatchObject({
      step_id: valve.id, applier_user_id: userId[users.tech2], authoriser_user_id: userId[users.authoriser], remover_user_id: userId[users.tech], remover_signed_name: names.tech,
      absence_check: record.absenceCheck, contact_attempts: record.contactAttempts, inform_plan: record.informPlan, removed_at: expect.any(Date),
    });

    // Both acts are in the audit trail, and the chain still verifies.
    const events = await q<{ action: string; actor_name: string; actor_role: string; data: Record<string, unknown> }>(
      `SELECT action, actor_name, actor_role, data FROM audit_events WHERE tenant_id = :tenantId AND entity_id = :id AND action IN ('removal_exception_recorded', 'isolation_removed') ORDER BY seq`,
      { id: valve.id },
    );
    expect(events).toMatchObject([
      { action: 'removal_exception_recorded', actor_name: names.authoriser, actor_role: 'authoriser', data: { applier: { name: names.tech2 }, absenceCheck: record.absenceCheck, contactAttempts: record.contactAttempts, informPlan: record.informPlan } },
      { action: 'isolation_removed', actor_name: names.tech, data: { underException: { applier: names.tech2, authoriser: names.authoriser } } },
    ]);
    expect((await crew.auditor.get('/api/audit/verify')).body).toMatchObject({ ok: true });

    // The owner hears that their lock is off, and whom to see before they start again.
    const mail = await q<{ subject: string; text_body: string }>(`SELECT subject, text_body FROM mail_outbox WHERE to_address = :to AND subject LIKE '%while you were away%'`, { to: users.tech2 });
    expect(mail).toHaveLength(1);
    expect(mail[0].subject).toContain('TEST-BV-1');
    expect(mail[0].text_body).toContain(`lock ${lock.number}`);
    expect(mail[0].text_body).toContain(`by ${names.tech}`);
    expect(mail[0].text_body).toContain(`speak to ${names.authoriser}`);
    expect(mail[0].text_body).toContain('Phoned her mobile, no answer');
  });

  it('finding I-2 (OSHA 29 CFR 1910.147(c)(7)–(8), authorized employees): when a technician whose lockout/tagout qualification has run out takes an isolation off, then it is refused until it is in date', async () => {
    const { id, steps } = await cancelledWithStepsOn('Qualification to remove', ['tech', 'tech', 'tech']);
    const plug = steps[2];
    const expire = (days: number) =>
      srv.deps.sequelize.query(`UPDATE qualifications SET expires_on = CURRENT_DATE + :days WHERE tenant_id = :tenantId AND user_id = :userId AND kind = 'lockout_tagout' RETURNING id`, {
        replacements: { tenantId: ids.tenantId, userId: userId[users.tech], days },
        type: QueryTypes.SELECT,
      });
    await expire(-2);
    try {
      const refused = await remove(id, plug, 'tech');
      expect(refused.status, JSON.stringify(refused.body)).toBe(422);
      expect(refused.body.error.message).toBe('You need an in-date lockout tagout qualification to remove isolations.');
      expect((await plan(id))[2].status).toBe('applied');
    } finally {
      await expire(200);
    }
    expect((await remove(id, plug, 'tech')).status).toBe(200);
  });

  it('finding I-3 (HSE HSG253): when three isolations are applied in the same minute, then they come off in the reverse of the order they went on, by the counter, not in any order', async () => {
    const { id, steps } = await cancelledWithStepsOn('Same minute', ['tech', 'tech', 'tech']);
    const [valve, vent, plug] = steps;
    expect(steps.map((s) => s.appliedSeq)).toEqual([1, 2, 3]);
    const first = await remove(id, valve, 'tech');
    expect(first.status, JSON.stringify(first.body)).toBe(422);
    expect(first.body.error.message).toBe('Remove in reverse order of application: first TEST-PL-1, TEST-VT-1. Give a reason to do otherwise.');
    const middle = await remove(id, vent, 'tech');
    expect(middle.status).toBe(422);
    expect(middle.body.error.message).toContain('first TEST-PL-1.');
    for (const step of [plug, vent, valve]) expect((await remove(id, step, 'tech')).status).toBe(200);
  });

  it('finding I-4 (HSE HSG253): when a step is applied before an earlier step of the plan, then it is refused unless a reason is given, and the reason is kept on the step and in the audit event', async () => {
    const id = await draftWithPlan(srv, crew, ids, { kinds: ['cold_work'], title: 'Plan order' });
    await toAccepted(crew, id);
    const [valve, vent, plug] = await plan(id);
    const refused = await apply(id, vent, 'tech');
    expect(refused.status, JSON.stringify(refused.body)).toBe(422);
    expect(refused.body.error.message).toBe("Apply the isolations in the plan's order: first TEST-BV-1. Give a reason to do otherwise.");
    expect(refused.body.error.details.map((d: { path: string }) => d.path)).toEqual(['outOfOrderReason']);
    expect((await plan(id))[1].status).toBe('planned');

    const reason = 'Vent opened first to bleed the trapped pressure before closing the valve.';
    const applied = await apply(id, vent, 'tech', { outOfOrderReason: reason });
    expect(applied.status, JSON.stringify(applied.body)).toBe(200);
    expect(applied.body).toMatchObject({ appliedSeq: 1, appliedOutOfOrderReason: reason });
    const [event] = await q<{ reason: string; data: { outOfPlanOrder?: { before: string[] } } }>(
      `SELECT reason, data FROM audit_events WHERE tenant_id = :tenantId AND entity_id = :id AND action = 'isolation_applied'`,
      { id: vent.id },
    );
    expect(event).toMatchObject({ reason, data: { outOfPlanOrder: { before: ['TEST-BV-1'] } } });

    // In order again: no reason asked, none kept.
    const next = await apply(id, valve, 'tech', { outOfOrderReason: 'Not needed.' });
    expect(next.status, JSON.stringify(next.body)).toBe(200);
    expect(next.body).toMatchObject({ appliedSeq: 2, appliedOutOfOrderReason: null });
    expect((await apply(id, plug, 'tech')).status).toBe(200);
  });
});
