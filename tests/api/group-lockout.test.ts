// Group lockout per person, through the real API, for a site whose `groupLockout` setting is `per_person`.
// Sources, named beside each check:
// - OSHA 29 CFR 1910.147(f)(3)(ii)(D): "Each authorized employee shall affix a personal lockout or tagout
//   device to the group lockout device, group lockbox, or comparable mechanism when he or she begins work,
//   and shall remove those devices when he or she stops working on the machine or equipment being serviced
//   or maintained."
// - OSHA 29 CFR 1910.147(e)(3): each lockout device is removed by the employee who applied it; (e)(3)(i)–(iii)
//   the exception when that employee is not at the facility (personal locks on the box included).
// - OSHA 29 CFR 1910.147(f)(4): shift or personnel changes keep lockout protection continuous, with an
//   orderly transfer between off-going and oncoming employees.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { PermitLockbox } from '@shared/types/crew';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, sign, transition, users } from '../fixtures/permit-fixtures';
import { applyAndVerifyAll, confirmChecklist, draftWithPlan, expectOk, insertGasTest, reasonsOf, signInCrew, steps, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

const nobodyOn = 'Nobody has signed on to the lockbox: each person working puts a personal lock on it first.';

describe('group lockout per person: a personal lock each on the permit lockbox', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    srv.deps.sequelize.query<T>(sql, { replacements: { tenantId: ids.tenantId, ...replacements }, type: QueryTypes.SELECT });
  const setGroupLockout = (value: 'per_permit' | 'per_person') =>
    srv.deps.sequelize.query(`UPDATE tenants SET settings = coalesce(settings, '{}'::jsonb) || jsonb_build_object('groupLockout', CAST(:value AS text)) WHERE id = :tenantId`, {
      replacements: { tenantId: ids.tenantId, value },
    });
  const signOn = (who: ApiClient, id: string, personalLockNumber: string) => who.post(`/api/permits/${id}/crew/sign-on`, { personalLockNumber });
  const signOff = (who: ApiClient, id: string) => who.post(`/api/permits/${id}/crew/sign-off`, {});
  const lockboxOf = async (id: string) => (await expectOk(await crew.lead.get(`/api/permits/${id}`))).lockbox as PermitLockbox;

  /** A cold-work permit with its isolations signed in place, checklist confirmed and a passing gas test: ready to start but for the crew. */
  async function isolatedPermit(title: string) {
    const id = await draftWithPlan(srv, crew, ids, { kinds: ['cold_work'], title });
    await toAccepted(crew, id);
    await applyAndVerifyAll(srv, crew, ids, id);
    await confirmChecklist(crew.lead, id, 'checklist');
    await insertGasTest(srv, ids, id, 'pass');
    return id;
  }

  /** Every isolation of the permit off, in reverse order of application, by the technician who put them on. */
  async function removeAll(id: string) {
    const planned = (await steps(crew.tech, id)).reverse();
    const results = [];
    for (const s of planned) results.push(await crew.tech.post(`/api/permits/${id}/isolations/${s.id}/remove`, s.kind === 'plug' ? { plugOutcome: 'removed' } : {}));
    return results;
  }

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    await setGroupLockout('per_person');
  });
  afterAll(() => srv?.close());

  it('finding GL-1 (OSHA 29 CFR 1910.147(f)(3)(ii)(D)): when nobody has signed on to the lockbox, then work cannot start; once a person puts their personal lock on, it can', async () => {
    const id = await isolatedPermit('Group lockout start');
    expect(reasonsOf(await transition(crew.lead, id, 'start_work'))).toContain(nobodyOn);
    const box = await expectOk(await signOn(crew.tech, id, 'PL-101'));
    expect(box.crewOn).toEqual([expect.objectContaining({ name: 'Sam Ferrand', personalLockNumber: 'PL-101' })]);
    const started = await expectOk(await transition(crew.lead, id, 'start_work'));
    expect(started.state).toBe('live');
    // The permit answer shows the box: its label, the isolation keys inside and who is on it now.
    const lockbox = await lockboxOf(id);
    expect(lockbox.perPerson).toBe(true);
    expect(lockbox.label).toMatch(/^Lockbox /);
    expect(lockbox.keys.length).toBeGreaterThan(0);
    expect(lockbox.crewOn.map((c) => c.personalLockNumber)).toEqual(['PL-101']);
    const [event] = await q<{ action: string; actor_name: string }>(`SELECT action, actor_name FROM audit_events WHERE permit_id = :id AND action = 'crew_signed_on'`, { id });
    expect(event).toEqual({ action: 'crew_signed_on', actor_name: 'Sam Ferrand' });
  });

  it('finding GL-2 (OSHA 29 CFR 1910.147(f)(3)(ii)(D)): when the work is handed back while people are still on the box, then no isolation comes off, naming who; once each takes their own lock off, they do', async () => {
    const id = await isolatedPermit('Group lockout removal');
    await expectOk(await signOn(crew.tech, id, 'PL-201'));
    await expectOk(await signOn(crew.lead, id, 'PL-202'));
    await expectOk(await transition(crew.lead, id, 'start_work'));
    await expectOk(await transition(crew.lead, id, 'hand_back', sign(users.lead)));
    const [first] = await removeAll(id);
    expect(first.status, JSON.stringify(first.body)).toBe(422);
    expect(first.body.error.message).toContain('Sam Ferrand (personal lock PL-201)');
    expect(first.body.error.message).toContain('Rory Kilbride (personal lock PL-202)');
    await expectOk(await signOff(crew.tech, id));
    const stillLead = (await removeAll(id))[0];
    expect(stillLead.status).toBe(422);
    expect(stillLead.body.error.message).toContain('Rory Kilbride');
    expect(stillLead.body.error.message).not.toContain('Sam Ferrand');
    await expectOk(await signOff(crew.lead, id));
    for (const res of await removeAll(id)) expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect((await lockboxOf(id)).crewOn).toEqual([]);
    // Checked in the database: no isolation of a per-person permit came off while a personal lock was on its box.
    const openedWhileLocked = await q<{ n: number }>(
      `SELECT count(*)::int AS n FROM isolation_steps s JOIN permit_crew_members c ON c.tenant_id = s.tenant_id AND c.permit_id = s.permit_id
       WHERE s.tenant_id = :tenantId AND s.removed_at IS NOT NULL AND s.removed_at >= c.signed_on_at AND (c.signed_off_at IS NULL OR s.removed_at < c.signed_off_at)`,
    );
    expect(openedWhileLocked[0].n).toBe(0);
  });

  it('finding GL-3 (OSHA 29 CFR 1910.147(e)(3)): when someone who has no personal lock on the box signs off, then it is refused; only that person takes their own lock off', async () => {
    const id = await isolatedPermit('Group lockout sign-off');
    await expectOk(await signOn(crew.tech, id, 'PL-301'));
    const other = await signOff(crew.tech2, id);
    expect(other.status).toBe(422);
    expect(other.body.error.message).toMatch(/no personal lock on this lockbox/);
    expect((await lockboxOf(id)).crewOn.map((c) => c.name)).toEqual(['Sam Ferrand']);
    const [row] = await q<{ signed_off_at: Date | null }>(`SELECT signed_off_at FROM permit_crew_members WHERE permit_id = :id`, { id });
    expect(row.signed_off_at).toBeNull();
  });

  it('finding GL-4 (OSHA 29 CFR 1910.147(f)(3)(ii)(D)): when someone outside the contractor crew, someone without an in-date lockout qualification, a second lock of the same person or a lock number already on the box signs on, then it is refused', async () => {
    const id = await isolatedPermit('Group lockout who signs on');
    expect((await signOn(crew.authoriser, id, 'PL-401')).status).toBe(403);
    // A fresh session: the test clock has run past the idle timeout of the one opened at the start.
    expect((await signOn(await srv.signIn(users.control), id, 'PL-402')).status).toBe(403);
    await expectOk(await signOn(crew.tech, id, 'PL-403'));
    expect((await signOn(crew.tech, id, 'PL-404')).status).toBe(409);
    expect((await signOn(crew.tech2, id, 'pl-403 ')).status).toBe(409);
    await srv.deps.sequelize.query(
      `UPDATE qualifications SET issued_on = CURRENT_DATE - 800, expires_on = CURRENT_DATE - 400 WHERE tenant_id = :tenantId AND kind = 'lockout_tagout' AND user_id = (SELECT id FROM users WHERE email = :email)`,
      { replacements: { tenantId: ids.tenantId, email: users.tech2 } },
    );
    const unqualified = await signOn(crew.tech2, id, 'PL-405');
    expect(unqualified.status).toBe(422);
    expect(unqualified.body.error.message).toMatch(/in-date lockout tagout qualification/);
    const blank = await signOn(crew.lead, id, '   ');
    expect(blank.status).toBe(400);
    expect(blank.body.error.details[0].path).toBe('personalLockNumber');
    expect((await lockboxOf(id)).crewOn.map((c) => c.personalLockNumber)).toEqual(['PL-403']);
  });

  it('finding GL-5: when the permit is only accepted (isolations not signed in place), then nobody signs on yet', async () => {
    const id = await draftWithPlan(srv, crew, ids, { kinds: ['cold_work'], title: 'Group lockout too early' });
    await toAccepted(crew, id);
    const early = await signOn(crew.lead, id, 'PL-501');
    expect(early.status).toBe(422);
    expect(await q(`SELECT 1 FROM permit_lockboxes WHERE permit_id = :id`, { id })).toEqual([]);
  });

  it('finding GL-6: when the site locks per permit (the default), then work starts without personal locks and sign-on is refused in plain words', async () => {
    await setGroupLockout('per_permit');
    try {
      const id = await isolatedPermit('Group lockout per permit');
      const refused = await signOn(crew.lead, id, 'PL-601');
      expect(refused.status).toBe(422);
      expect(refused.body.error.message).toMatch(/one crew lock per permit/);
      expect((await lockboxOf(id)).perPerson).toBe(false);
      expect((await expectOk(await transition(crew.lead, id, 'start_work'))).state).toBe('live');
    } finally {
      await setGroupLockout('per_person');
    }
  });

  const userIdOf = async (email: string) => (await q<{ id: string }>(`SELECT id FROM users WHERE email = :email`, { email }))[0].id;
  const demoPassword = 'holdpoint-demo';

  /** A permit with work under way and the technician Sam Ferrand's personal lock on its box. */
  async function liveWithTech(title: string, lock: string) {
    const id = await isolatedPermit(title);
    await expectOk(await signOn(crew.tech, id, lock));
    await expectOk(await transition(crew.lead, id, 'start_work'));
    return id;
  }

  it('issue 16 GL-7 (OSHA 29 CFR 1910.147(f)(4)): when the off-going person hands over to the oncoming one, both signing, then one lock comes off as the other goes on, with no moment the box is empty', async () => {
    const id = await liveWithTech('Group lockout shift change', 'PL-701');
    // (The second technician's lockout qualification was let lapse above: the lead takes over.)
    const box = await expectOk(
      await crew.tech.post(`/api/permits/${id}/crew/hand-over`, {
        personalLockNumber: 'PL-702', password: demoPassword, signedName: 'Sam Ferrand', oncoming: { email: users.lead, ...sign(users.lead) },
      }),
    );
    expect(box.crewOn).toEqual([expect.objectContaining({ name: 'Rory Kilbride', personalLockNumber: 'PL-702' })]);
    const rows = await q<{ lock: string; on: Date; off: Date | null }>(
      `SELECT personal_lock_number AS lock, signed_on_at AS on, signed_off_at AS off FROM permit_crew_members WHERE permit_id = :id ORDER BY signed_on_at, personal_lock_number`,
      { id },
    );
    // The old lock's "off" is the new lock's "on": the box never stood empty while work was live.
    expect(rows.map((r) => r.lock)).toEqual(['PL-701', 'PL-702']);
    expect(rows[0].off?.getTime()).toBe(rows[1].on.getTime());
    const [transfer] = await q<Record<string, unknown>>(`SELECT kind, old_lock_number, new_lock_number, from_signed_name, to_signed_name FROM lock_transfers WHERE permit_id = :id`, { id });
    expect(transfer).toEqual({ kind: 'lockbox', old_lock_number: 'PL-701', new_lock_number: 'PL-702', from_signed_name: 'Sam Ferrand', to_signed_name: 'Rory Kilbride' });
    const [event] = await q<{ actor_name: string }>(`SELECT actor_name FROM audit_events WHERE permit_id = :id AND action = 'crew_lock_handed_over'`, { id });
    expect(event.actor_name).toBe('Sam Ferrand');
    // A wrong signature of the oncoming person changes nothing.
    const refused = await crew.lead.post(`/api/permits/${id}/crew/hand-over`, {
      personalLockNumber: 'PL-703', ...sign(users.lead), oncoming: { email: users.tech, password: 'wrong-password', signedName: 'Sam Ferrand' },
    });
    expect(refused.status).toBe(400);
    expect(refused.body.error.details.map((d: { path: string }) => d.path)).toEqual(['oncoming.password']);
    expect((await lockboxOf(id)).crewOn.map((c) => c.personalLockNumber)).toEqual(['PL-702']);
  });

  it('issue 16 GL-8 (OSHA 29 CFR 1910.147(f)(4)): when the last person on the box signs off while work is live, then it is refused, pointing to the handover; once the work is suspended they sign off, and work resumes only with a lock on the box again', async () => {
    const id = await liveWithTech('Group lockout last lock', 'PL-801');
    const gap = await signOff(crew.tech, id);
    expect(gap.status, JSON.stringify(gap.body)).toBe(422);
    expect(gap.body.error.message).toMatch(/last personal lock on the lockbox and work is still going on\. Hand over your lock/);
    expect((await lockboxOf(id)).crewOn.map((c) => c.personalLockNumber)).toEqual(['PL-801']);
    // With another person still on, the first may go.
    await expectOk(await signOn(crew.lead, id, 'PL-802'));
    await expectOk(await signOff(crew.tech, id));
    // Once the work is stopped (suspended), the last lock may come off; work then resumes only with a lock on the box again.
    await expectOk(await transition(crew.authoriser, id, 'suspend', { reason: 'Shift ends; nobody on the job overnight.' }));
    await expectOk(await signOff(crew.lead, id));
    expect(reasonsOf(await transition(crew.authoriser, id, 'resume', { reason: 'Checked the site before the morning shift.' }))).toContain(nobodyOn);
  });

  it('issue 16 GL-9 (OSHA 29 CFR 1910.147(e)(3)(i)-(iii)): when a crew member left with their personal lock on the box, then it comes off only after an authoriser records the exception, by a third person who signs, and the owner is mailed', async () => {
    const id = await isolatedPermit('Group lockout absent member');
    await expectOk(await signOn(crew.lead, id, 'PL-901'));
    const absentId = ids.leadUserId;
    const removeUrl = `/api/permits/${id}/crew/${absentId}/remove`;
    const early = await crew.tech.post(removeUrl, { password: demoPassword, signedName: 'Sam Ferrand' });
    expect(early.status).toBe(422);
    expect(early.body.error.message).toMatch(/Rory Kilbride put personal lock PL-901 on the lockbox, so only Rory Kilbride may take it off/);
    const exceptionBody = {
      absenceCheck: 'Not on the gate log; site radio unanswered.',
      contactAttempts: [{ how: 'Phoned his mobile', at: srv.clock.now().toISOString() }],
      informPlan: 'Told at the gate before his next shift.',
      ...sign(users.authoriser),
    };
    expect((await crew.tech.post(`/api/permits/${id}/crew/${absentId}/removal-exception`, { ...exceptionBody, password: demoPassword, signedName: 'Sam Ferrand' })).status).toBe(403);
    await expectOk(await crew.authoriser.post(`/api/permits/${id}/crew/${absentId}/removal-exception`, exceptionBody), 201);
    expect((await crew.authoriser.post(`/api/permits/${id}/crew/${absentId}/removal-exception`, exceptionBody)).status).toBe(409);
    const unsigned = await crew.tech.post(removeUrl, { password: 'wrong-password', signedName: 'Sam Ferrand' });
    expect(unsigned.status).toBe(400);
    const box = await expectOk(await crew.tech.post(removeUrl, { password: demoPassword, signedName: 'Sam Ferrand' }));
    expect(box.crewOn).toEqual([]);
    const [row] = await q<{ remover: string; signed_off_by: string }>(
      `SELECT e.remover_signed_name AS remover, c.signed_off_by::text FROM lock_removal_exceptions e JOIN permit_crew_members c ON c.id = e.crew_member_id WHERE c.permit_id = :id`,
      { id },
    );
    expect(row).toEqual({ remover: 'Sam Ferrand', signed_off_by: await userIdOf(users.tech) });
    const [mail] = await q<{ subject: string }>(`SELECT subject FROM mail_outbox WHERE subject LIKE 'Your personal lock PL-901%'`);
    expect(mail.subject).toMatch(/was taken off while you were away/);
    // The database refuses anyone signing off someone else's personal lock without such a record.
    await expectOk(await signOn(crew.lead, id, 'PL-902'));
    await expect(
      srv.deps.sequelize.query(`UPDATE permit_crew_members SET signed_off_at = now(), signed_off_by = :by WHERE permit_id = :id AND personal_lock_number = 'PL-902'`, {
        replacements: { id, by: await userIdOf(users.tech) },
      }),
    ).rejects.toThrow(/recorded exception/);
  });

  it('issue 16 GL-10 (OSHA 29 CFR 1910.147(e)(3)): when an authoriser records the exception for an absent crew member, then the permit’s lockbox says so for that person only, with who recorded it and when', async () => {
    const id = await isolatedPermit('Group lockout exception shown');
    await expectOk(await signOn(crew.lead, id, 'PL-911'));
    await expectOk(await signOn(crew.tech, id, 'PL-912'));
    expect((await lockboxOf(id)).crewOn.map((c) => c.exception)).toEqual([null, null]);
    const recordedAt = srv.clock.now().toISOString();
    const answer = await expectOk(
      await crew.authoriser.post(`/api/permits/${id}/crew/${ids.leadUserId}/removal-exception`, {
        absenceCheck: 'Not on the gate log.',
        contactAttempts: [{ how: 'Phoned his mobile', at: recordedAt }],
        informPlan: 'Told at the gate before his next shift.',
        ...sign(users.authoriser),
      }),
      201,
    );
    const expected = [
      { name: 'Rory Kilbride', personalLockNumber: 'PL-911', exception: { authoriserId: await userIdOf(users.authoriser), authoriserName: 'Priya Castellan', recordedAt } },
      { name: 'Sam Ferrand', personalLockNumber: 'PL-912', exception: null },
    ];
    expect(answer.crewOn).toMatchObject(expected);
    expect((await lockboxOf(id)).crewOn).toMatchObject(expected);
  });
});
