// Shift change on an isolation's lock, through the real API, for a site that locks per permit (lock by lock).
// Sources, named beside each check:
// - OSHA 29 CFR 1910.147(f)(4): "Specific procedures shall be utilized during shift or personnel changes to
//   ensure the continuity of lockout or tagout protection, including provision for the orderly transfer of
//   lockout or tagout device protection between off-going and oncoming employees".
// - OSHA 29 CFR 1910.147(e)(3): each lockout device is removed by the employee who applied it (after a
//   transfer: the oncoming employee, whose own lock it now is); (e)(3)(i)–(iii) the exception.
// - OSHA 29 CFR 1910.147(c)(5)(ii)(D): a lockout or tagout device shows who applied it, so the oncoming
//   person puts on their own lock and tag.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, sign, transition, users } from '../fixtures/permit-fixtures';
import { applyAndVerifyAll, draftWithPlan, expectOk, inStore, signInCrew, steps, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

const password = 'holdpoint-demo';

describe('shift change: a lock handed over to the oncoming person', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let techId: string;
  let tech2Id: string;

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    srv.deps.sequelize.query<T>(sql, { replacements: { tenantId: ids.tenantId, ...replacements }, type: QueryTypes.SELECT });
  const userId = async (email: string) => (await q<{ id: string }>(`SELECT id FROM users WHERE email = :email`, { email }))[0].id;

  /** An isolated permit and its locked valve step, applied by the technician Sam Ferrand. */
  async function lockedValve(title: string) {
    const id = await draftWithPlan(srv, crew, ids, { kinds: ['cold_work'], title });
    await toAccepted(crew, id);
    await applyAndVerifyAll(srv, crew, ids, id);
    const valve = (await steps(crew.tech, id)).find((s) => s.kind === 'block_valve')!;
    const [row] = await q<{ lock_id: string; tag_id: string }>(`SELECT lock_id, tag_id FROM isolation_steps WHERE id = :id`, { id: valve.id });
    return { id, stepId: valve.id, oldLockId: row.lock_id, oldTagId: row.tag_id };
  }

  const handOverBody = async (overrides: Record<string, unknown> = {}) => ({
    lockId: await inStore(srv, 'locks', ids.tenantId),
    tagId: await inStore(srv, 'tags', ids.tenantId),
    password,
    signedName: 'Sam Ferrand',
    oncoming: { email: users.tech2, password, signedName: 'Ana Lisgar' },
    ...overrides,
  });

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    techId = await userId(users.tech);
    tech2Id = await userId(users.tech2);
  });
  afterAll(() => srv?.close());

  it('issue 16 transfer-1 (OSHA 29 CFR 1910.147(f)(4)): when the holder hands over the lock, both signing, then the oncoming lock and tag go on as the old ones come off in one step, recorded and audited', async () => {
    const { id, stepId, oldLockId, oldTagId } = await lockedValve('Shift change lock by lock');
    const body = await handOverBody();
    const step = await expectOk(await crew.tech.post(`/api/permits/${id}/isolations/${stepId}/transfer`, body));
    expect(step).toMatchObject({ heldBy: tech2Id, heldByName: 'Ana Lisgar', appliedByName: 'Sam Ferrand', lockId: body.lockId, tagId: body.tagId, status: 'verified' });
    expect(step.handedOverAt).toBeTruthy();
    // The old lock and tag are back in the store, the new ones on the point and held by the oncoming person: never a moment with neither.
    const inventory = await q<{ id: string; state: string; holder_user_id: string | null }>(
      `SELECT id, state, holder_user_id FROM locks WHERE id IN (:locks) UNION ALL SELECT id, state, holder_user_id FROM tags WHERE id IN (:tags)`,
      { locks: [oldLockId, body.lockId], tags: [oldTagId, body.tagId] },
    );
    const byId = Object.fromEntries(inventory.map((r) => [r.id, r]));
    expect(byId[oldLockId]).toMatchObject({ state: 'in_store', holder_user_id: null });
    expect(byId[oldTagId]).toMatchObject({ state: 'in_store', holder_user_id: null });
    expect(byId[body.lockId]).toMatchObject({ state: 'applied', holder_user_id: tech2Id });
    expect(byId[body.tagId]).toMatchObject({ state: 'applied', holder_user_id: tech2Id });
    const [transfer] = await q<Record<string, unknown>>(
      `SELECT kind, from_user_id, to_user_id, old_lock_number IS NOT NULL AS had_old, from_signed_name, to_signed_name FROM lock_transfers WHERE step_id = :stepId`,
      { stepId },
    );
    expect(transfer).toEqual({ kind: 'lock', from_user_id: techId, to_user_id: tech2Id, had_old: true, from_signed_name: 'Sam Ferrand', to_signed_name: 'Ana Lisgar' });
    const events = await q<{ action: string; actor_name: string }>(`SELECT action, actor_name FROM audit_events WHERE entity_id = :stepId AND action = 'lock_handed_over'`, { stepId });
    expect(events).toEqual([{ action: 'lock_handed_over', actor_name: 'Sam Ferrand' }]);
    // Only the holder hands over again: the off-going technician no longer holds it.
    const again = await crew.tech.post(`/api/permits/${id}/isolations/${stepId}/transfer`, await handOverBody({ oncoming: { email: users.tech, password, signedName: 'Sam Ferrand' } }));
    expect(again.status).toBe(422);
    expect(again.body.error.message).toMatch(/Ana Lisgar holds the lock on TEST-BV-1, so only they hand it over/);
  });

  it('issue 16 transfer-2 (OSHA 29 CFR 1910.147(e)(3), (f)(4)): when a lock was handed over, then the oncoming holder takes it off and the off-going person only under the recorded exception', async () => {
    const { id, stepId } = await lockedValve('Shift change removal');
    await expectOk(await crew.tech.post(`/api/permits/${id}/isolations/${stepId}/transfer`, await handOverBody()));
    await expectOk(await transition(crew.lead, id, 'cancel', { reason: 'Job moved to next week.' }));
    // Take the plug and vent off first (reverse order of application), by the technician who put them on.
    for (const s of (await steps(crew.tech, id)).filter((x) => x.kind !== 'block_valve').reverse())
      await expectOk(await crew.tech.post(`/api/permits/${id}/isolations/${s.id}/remove`, s.kind === 'plug' ? { plugOutcome: 'removed' } : {}));
    const byApplier = await crew.tech.post(`/api/permits/${id}/isolations/${stepId}/remove`, {});
    expect(byApplier.status, JSON.stringify(byApplier.body)).toBe(422);
    expect(byApplier.body.error.message).toMatch(/Ana Lisgar put lock .* so only Ana Lisgar may take it off/);
    // The exception still serves anyone else: the authoriser records that the holder is away, naming the holder.
    const exception = await crew.authoriser.post(`/api/permits/${id}/isolations/${stepId}/removal-exception`, {
      absenceCheck: 'Not on the gate log; site radio unanswered.',
      contactAttempts: [{ how: 'Phoned her mobile', at: srv.clock.now().toISOString() }],
      informPlan: 'Told at the gate before her next shift.',
      ...sign(users.authoriser),
    });
    expect(exception.status, JSON.stringify(exception.body)).toBe(201);
    const [recorded] = await q<{ applier_user_id: string }>(`SELECT applier_user_id FROM lock_removal_exceptions WHERE step_id = :stepId`, { stepId });
    expect(recorded.applier_user_id).toBe(tech2Id);
    const byHolder = await crew.tech2.post(`/api/permits/${id}/isolations/${stepId}/remove`, {});
    expect(byHolder.status, JSON.stringify(byHolder.body)).toBe(200);
    expect(byHolder.body.status).toBe('removed');
  });

  it('issue 16 transfer-3 (OSHA 29 CFR 1910.147(f)(4)): when a signature is wrong, the new lock is missing, or the oncoming person is not qualified crew, then nothing changes and the lock stays on', async () => {
    const { id, stepId, oldLockId } = await lockedValve('Shift change refused');
    const url = `/api/permits/${id}/isolations/${stepId}/transfer`;
    const badOncoming = await crew.tech.post(url, await handOverBody({ oncoming: { email: users.tech2, password: 'not-her-password', signedName: 'Ana Lisgar' } }));
    expect(badOncoming.status).toBe(400);
    expect(badOncoming.body.error.details.map((d: { path: string }) => d.path)).toEqual(['oncoming.password']);
    const badOwn = await crew.tech.post(url, await handOverBody({ signedName: 'Someone Else' }));
    expect(badOwn.status).toBe(400);
    expect(badOwn.body.error.details.map((d: { path: string }) => d.path)).toEqual(['signedName']);
    const noLock = await crew.tech.post(url, await handOverBody({ lockId: undefined }));
    expect(noLock.status).toBe(400);
    expect(noLock.body.error.details.map((d: { path: string }) => d.path)).toEqual(['lockId']);
    const notCrew = await crew.tech.post(url, await handOverBody({ oncoming: { email: users.authoriser, ...sign(users.authoriser) } }));
    expect(notCrew.status).toBe(422);
    expect(notCrew.body.error.details[0].path).toBe('oncoming.email');
    const toSelf = await crew.tech.post(url, await handOverBody({ oncoming: { email: users.tech, password, signedName: 'Sam Ferrand' } }));
    expect(toSelf.status).toBe(422);
    const saved = await q<{ id: string; issued_on: string; expires_on: string }>(
      `SELECT id, issued_on::text, expires_on::text FROM qualifications WHERE kind = 'lockout_tagout' AND user_id = :id`,
      { id: tech2Id },
    );
    await srv.deps.sequelize.query(`UPDATE qualifications SET issued_on = CURRENT_DATE - 800, expires_on = CURRENT_DATE - 400 WHERE kind = 'lockout_tagout' AND user_id = :id`, {
      replacements: { id: tech2Id },
    });
    try {
      const unqualified = await crew.tech.post(url, await handOverBody());
      expect(unqualified.status).toBe(422);
      expect(unqualified.body.error.message).toMatch(/Ana Lisgar needs an in-date lockout tagout qualification/);
    } finally {
      for (const r of saved)
        await srv.deps.sequelize.query(`UPDATE qualifications SET issued_on = CAST(:issued AS date), expires_on = CAST(:expires AS date) WHERE id = :id`, {
          replacements: { id: r.id, issued: r.issued_on, expires: r.expires_on },
        });
    }
    const notHolder = await crew.tech2.post(url, await handOverBody({ oncoming: { email: users.tech, password, signedName: 'Sam Ferrand' }, signedName: 'Ana Lisgar' }));
    expect(notHolder.status).toBe(422);
    const [row] = await q<{ lock_id: string; held_by: string | null }>(`SELECT lock_id, held_by FROM isolation_steps WHERE id = :stepId`, { stepId });
    expect(row).toEqual({ lock_id: oldLockId, held_by: null });
    expect(await q(`SELECT 1 FROM lock_transfers WHERE step_id = :stepId`, { stepId })).toEqual([]);
    // The database itself refuses a change of holder with no signed transfer behind it.
    await expect(srv.deps.sequelize.query(`UPDATE isolation_steps SET held_by = :to WHERE id = :stepId`, { replacements: { to: tech2Id, stepId } })).rejects.toThrow(/signed transfer/);
  });
});
