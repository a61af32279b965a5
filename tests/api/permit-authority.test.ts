// Issue 17, "Authority": who may approve, acknowledge, resume, hand back and take over a permit.
// Source for each rule: HSE HSG250 (permit-to-work systems) as common practice — the issuer checks
// work someone else wrote, the control room confirms the line is back, work stopped by the issuing
// side restarts only on its word, and the permit is handed back by the person who holds it.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { hashPassword } from '../../server/src/lib/passwords';
import { down as authorityDown, up as authorityUp } from '../../server/src/db/migrations/0140-permit-authority';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, sign, transition, users } from '../fixtures/permit-fixtures';
import {
  applyAndVerifyAll, confirmChecklist, draftWithPlan, expectOk, reasonsOf, signInCrew, steps, tempDeadEnds, tempPlan, toAccepted, type Crew, type Ids,
} from '../fixtures/permit-journey';

interface ActionView {
  event: string;
  allowed: boolean;
  reasons: string[];
  needsReason: boolean;
}

describe('issue 17: permit authority (HSE HSG250, common practice)', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const actionsOf = async (client: ApiClient, id: string) => (await expectOk(await client.get(`/api/permits/${id}`))).actions as unknown as ActionView[];

  /** A passing test at the work area and inside the pipe on each side, written straight into gas_tests (the gas-test API belongs to another feature). */
  async function passingGasTests(permitId: string) {
    const [tester] = await q<{ id: string }>(`SELECT id FROM users WHERE email = :email`, { email: users.tech });
    for (const place of ['work_area', 'inside_pipe_upstream', 'inside_pipe_downstream'])
      await srv.deps.sequelize.query(
        `INSERT INTO gas_tests (tenant_id, permit_id, tester_user_id, place, tested_at, readings, verdict) VALUES (:t, :permitId, :tester, :place, :at, CAST(:readings AS jsonb), 'pass')`,
        { replacements: { t: ids.tenantId, permitId, tester: tester.id, place, at: srv.clock.now(), readings: JSON.stringify({ o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 }) } },
      );
  }

  /** A cold-work permit (no fire watch) taken live through the API: plan, approval, isolations, a passing gas test, the checklist. */
  async function livePermit() {
    const id = await draftWithPlan(srv, crew, ids, { kinds: ['cold_work'] });
    await toAccepted(crew, id);
    await applyAndVerifyAll(srv, crew, ids, id);
    for (const plug of (await steps(crew.tech, id)).filter((s) => s.kind === 'plug' && s.plugWarnings.length))
      await expectOk(await crew.authoriser.post(`/api/permits/${id}/isolations/${plug.id}/acknowledge`, { what: 'plug_warnings' }));
    await passingGasTests(id);
    await confirmChecklist(crew.lead, id, 'checklist');
    expect((await expectOk(await transition(crew.lead, id, 'start_work'))).state).toBe('live');
    return id;
  }

  /** A 15 %LEL reading at the work area through the gas-test API: Holdpoint suspends the live permit. */
  async function failingGasTest(permitId: string) {
    const [instrument] = await q<{ id: string }>(`SELECT id FROM instruments WHERE tenant_id = :t AND serial = 'FG4-20731'`, { t: ids.tenantId });
    await expectOk(await crew.authoriser.patch(`/api/instruments/${instrument.id}`, { lastBumpTestAt: srv.clock.now().toISOString() }));
    const failed = await expectOk(
      await crew.tech.post(`/api/permits/${permitId}/gas-tests`, { instrumentId: instrument.id, place: 'work_area', testedAt: srv.clock.now().toISOString(), readings: { o2Pct: 20.8, lelPct: 15, h2sPpm: 0, coPpm: 2 } }),
      201,
    );
    expect(failed.permitState).toBe('suspended');
  }

  /** A second contractor lead of the permit's contractor, with the given in-date qualifications. */
  async function anotherLead(email: string, name: string, qualifications: string[]) {
    const hash = await hashPassword('holdpoint-demo');
    const [u] = await q<{ id: string }>(`INSERT INTO users (email, name, password_hash) VALUES (:email, :name, :hash) RETURNING id`, { email, name, hash });
    await srv.deps.sequelize.query(`INSERT INTO memberships (tenant_id, organisation_id, user_id, role) VALUES (:t, :org, :u, 'contractor_lead')`, {
      replacements: { t: ids.tenantId, org: ids.oxbowId, u: u.id },
    });
    for (const kind of qualifications)
      await srv.deps.sequelize.query(`INSERT INTO qualifications (tenant_id, user_id, kind, issued_on, expires_on) VALUES (:t, :u, :kind, current_date - 400, current_date + 400)`, {
        replacements: { t: ids.tenantId, u: u.id, kind },
      });
    return { id: u.id, client: await srv.signIn(email) };
  }

  beforeAll(async () => {
    srv = await startTestServer({ env: { SESSION_IDLE_MINUTES: '600', SESSION_ABSOLUTE_HOURS: '48' } });
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
  });
  afterAll(() => srv?.close());

  describe('four eyes on content', () => {
    it('when an authoriser sends a permit back, edits it, re-sends it and approves it, then the approval is refused; another authoriser may approve', async () => {
      const id = await draftWithPlan(srv, crew, ids);
      await expectOk(await transition(crew.lead, id, 'submit'));
      await expectOk(await transition(crew.authoriser, id, 'reject', { reason: 'Scope too vague' }));
      const draft = await expectOk(await crew.authoriser.get(`/api/permits/${id}`));
      await expectOk(await crew.authoriser.patch(`/api/permits/${id}`, { version: draft.version, scope: 'Replace a 12 ft dented section of the 10-inch line' }));
      await expectOk(await transition(crew.lead, id, 'submit'));

      const approve = (await actionsOf(crew.authoriser, id)).find((a) => a.event === 'approve')!;
      expect(approve.allowed).toBe(false);
      expect(approve.reasons).toEqual(['You wrote or changed this permit or its isolation plan, so another authoriser must approve it (four-eyes rule).']);
      expect(reasonsOf(await transition(crew.authoriser, id, 'approve', sign(users.authoriser)))).toEqual([
        'You wrote or changed this permit or its isolation plan, so another authoriser must approve it (four-eyes rule).',
      ]);
      expect((await expectOk(await crew.lead.get(`/api/permits/${id}`))).state).toBe('requested');
      expect((await expectOk(await transition(crew.authoriser2, id, 'approve', sign(users.authoriser2)))).state).toBe('approved');
      const editors = await q<{ email: string }>(`SELECT u.email FROM permit_editors e JOIN users u ON u.id = e.user_id WHERE e.permit_id = :id ORDER BY u.email`, { id });
      expect(editors.map((e) => e.email)).toEqual([users.authoriser, users.lead].sort());
    });

    it('when an authoriser changed only the isolation plan of a sent-back permit, then they cannot approve it either', async () => {
      const id = await draftWithPlan(srv, crew, ids);
      await expectOk(await transition(crew.lead, id, 'submit'));
      await expectOk(await transition(crew.authoriser2, id, 'reject', { reason: 'Add the vent to the plan' }));
      const draft = await expectOk(await crew.authoriser2.get(`/api/permits/${id}`));
      await expectOk(await crew.authoriser2.put(`/api/permits/${id}/isolations`, { version: draft.version, steps: tempPlan, deadEnds: tempDeadEnds }));
      await expectOk(await transition(crew.lead, id, 'submit'));
      expect(reasonsOf(await transition(crew.authoriser2, id, 'approve', sign(users.authoriser2)))[0]).toMatch(/^You wrote or changed this permit or its isolation plan/);
      expect((await expectOk(await transition(crew.authoriser, id, 'approve', sign(users.authoriser)))).state).toBe('approved');
    });
  });

  describe('return to service is acknowledged by the control room only', () => {
    it('when an authoriser tries to acknowledge the return to service, then it is refused and not offered, and the permit cannot close until the control room does', async () => {
      const id = await livePermit();
      await expectOk(await transition(crew.lead, id, 'hand_back', sign(users.lead)));
      const applied = (await steps(crew.tech, id)) as unknown as { id: string; kind: string; appliedAt: string }[];
      for (const step of [...applied].sort((a, b) => +new Date(b.appliedAt) - +new Date(a.appliedAt))) {
        await expectOk(await crew.tech.post(`/api/permits/${id}/isolations/${step.id}/remove`, step.kind === 'plug' ? { plugOutcome: 'removed' } : {}));
        srv.clock.advanceMinutes(1);
      }
      await confirmChecklist(crew.authoriser, id, 'walkdown');
      await expectOk(await transition(crew.authoriser, id, 'return_to_service', sign(users.authoriser)));

      expect((await actionsOf(crew.authoriser, id)).map((a) => a.event)).not.toContain('acknowledge_return');
      const refused = await transition(crew.authoriser, id, 'acknowledge_return');
      expect(refused.status).toBe(403);
      expect(refused.body.error.code).toBe('forbidden');
      expect(reasonsOf(await transition(crew.authoriser, id, 'close'))).toEqual(['The control room has not acknowledged the return to service yet.']);
      expect((await q<{ control_room_ack_at: Date | null }>(`SELECT control_room_ack_at FROM permits WHERE id = :id`, { id }))[0].control_room_ack_at).toBeNull();

      await expectOk(await transition(crew.control, id, 'acknowledge_return'));
      expect((await expectOk(await transition(crew.authoriser, id, 'close'))).state).toBe('closed');
    });
  });

  describe('suspension authority', () => {
    it('when the control room suspends a live permit, then the lead cannot resume it; an authoriser resumes it only with a reason, kept in the audit trail', async () => {
      const id = await livePermit();
      const suspended = await expectOk(await transition(crew.control, id, 'suspend', { reason: 'Pressure surge on the line' }));
      expect(suspended).toMatchObject({ state: 'suspended', suspendedByKind: 'control_room', suspendedByName: 'Jo Hartnell', suspensionReason: 'Pressure surge on the line' });

      const leadResume = (await actionsOf(crew.lead, id)).find((a) => a.event === 'resume')!;
      expect(leadResume.allowed).toBe(false);
      expect(leadResume.reasons[0]).toBe('This permit was suspended by the control room: only an authoriser can re-validate it and let work resume.');
      expect(reasonsOf(await transition(crew.lead, id, 'resume'))[0]).toBe('This permit was suspended by the control room: only an authoriser can re-validate it and let work resume.');

      expect((await actionsOf(crew.authoriser, id)).find((a) => a.event === 'resume')!.needsReason).toBe(true);
      expect(reasonsOf(await transition(crew.authoriser, id, 'resume'))).toEqual(['Give a reason in words: what was checked before work resumes.']);
      const resumed = await expectOk(await transition(crew.authoriser, id, 'resume', { reason: 'Surge traced to a pump trip; line pressure steady, isolations checked' }));
      expect(resumed).toMatchObject({ state: 'live', suspendedByKind: null, suspensionReason: null });
      const [event] = await q<{ reason: string; actor_role: string; data: Record<string, unknown> }>(
        `SELECT reason, actor_role, data FROM audit_events WHERE permit_id = :id AND action = 'resume' ORDER BY seq DESC LIMIT 1`,
        { id },
      );
      expect(event).toEqual({
        reason: 'Surge traced to a pump trip; line pressure steady, isolations checked',
        actor_role: 'authoriser',
        data: { suspendedBy: 'control_room', revalidatedByAuthoriser: true },
      });
    });

    it('when a failing gas test suspends a live permit, then it is recorded as suspended by Holdpoint and, even after a passing test, only an authoriser resumes it', async () => {
      const id = await livePermit();
      await failingGasTest(id);
      const permit = await expectOk(await crew.lead.get(`/api/permits/${id}`));
      expect(permit).toMatchObject({ suspendedByKind: 'system', suspendedByName: null });
      srv.clock.advanceMinutes(1);
      await passingGasTests(id);
      expect(reasonsOf(await transition(crew.lead, id, 'resume'))).toEqual([
        'This permit was suspended by Holdpoint (a failed gas test or check, or time running out): only an authoriser can re-validate it and let work resume.',
      ]);
      expect((await expectOk(await transition(crew.authoriser, id, 'resume', { reason: 'Source of vapour found and sealed; retest clear' }))).state).toBe('live');
    });

    it('when an authoriser suspends a live permit, then the lead cannot resume it', async () => {
      const id = await livePermit();
      expect((await expectOk(await transition(crew.authoriser, id, 'suspend', { reason: 'Crew short of a watchman' }))).suspendedByKind).toBe('authoriser');
      expect(reasonsOf(await transition(crew.lead, id, 'resume'))[0]).toBe('This permit was suspended by an authoriser: only an authoriser can re-validate it and let work resume.');
    });

    it('when the lead suspends their own work, then the lead may resume it without an authoriser', async () => {
      const id = await livePermit();
      expect((await expectOk(await transition(crew.lead, id, 'suspend', { reason: 'Lunch break, crew off the pit' }))).suspendedByKind).toBe('lead');
      const resume = (await actionsOf(crew.lead, id)).find((a) => a.event === 'resume')!;
      expect(resume).toMatchObject({ allowed: true, needsReason: false });
      expect((await expectOk(await transition(crew.lead, id, 'resume'))).state).toBe('live');
    });
  });

  describe('hand-back and handover', () => {
    it('when the incoming lead holds no in-date qualification for the work, then the handover to them is refused naming it', async () => {
      const id = await livePermit();
      const unqualified = await anotherLead('day2.lead@oxbow-repair.example', 'Tamsin Hale', ['hot_work_holder']);
      const res = await crew.lead.post(`/api/permits/${id}/handovers`, { toUserId: unqualified.id, openPoints: 'Pit shored, cut not started.', ...sign(users.lead) });
      expect(res.status, JSON.stringify(res.body)).toBe(422);
      expect(res.body.error.details).toEqual([{ path: 'toUserId', message: 'This lead has no in-date qualification for: Cold-work permit holder.' }]);
      expect((await q<{ n: number }>(`SELECT count(*)::int AS n FROM permit_handovers WHERE permit_id = :id`, { id }))[0].n).toBe(0);
    });

    it('when a shift handover has been accepted, then the previous lead can no longer hand the permit back; the current holder can', async () => {
      const id = await livePermit();
      const night = await anotherLead('night2.lead@oxbow-repair.example', 'Ines Marwood', ['cold_work_holder']);
      const handover = await expectOk(await crew.lead.post(`/api/permits/${id}/handovers`, { toUserId: night.id, openPoints: 'Cut made; new spool to fit.', ...sign(users.lead) }), 201);
      await expectOk(await night.client.post(`/api/permits/${id}/handovers/${handover.id}/accept`, { password: 'holdpoint-demo', signedName: 'Ines Marwood' }));

      expect(reasonsOf(await transition(crew.lead, id, 'hand_back', sign(users.lead)))).toEqual([
        'Only the lead who holds this permit now can hand it back. After a shift handover, that is the incoming lead.',
      ]);
      expect((await actionsOf(crew.lead, id)).find((a) => a.event === 'hand_back')!.allowed).toBe(false);
      expect((await expectOk(await transition(night.client, id, 'hand_back', { password: 'holdpoint-demo', signedName: 'Ines Marwood' }))).state).toBe('work_complete');
    });
  });

  describe('signatures', () => {
    let id = '';
    beforeAll(async () => {
      id = await draftWithPlan(srv, crew, ids);
      await expectOk(await transition(crew.lead, id, 'submit'));
    });

    it('when the password is wrong, then the signature dialog hears that it is wrong, not that it is missing', async () => {
      const wrong = await transition(crew.authoriser, id, 'approve', { password: 'not-the-password', signedName: 'Priya Castellan' });
      expect(wrong.status).toBe(400);
      expect(wrong.body.error.details).toEqual([{ path: 'password', message: 'That password is wrong. Type the password you sign in with.' }]);
      const missing = await transition(crew.authoriser, id, 'approve', { signedName: 'Priya Castellan' });
      expect(missing.status).toBe(400);
      expect(missing.body.error.details).toEqual([{ path: 'password', message: 'Enter your password to sign.' }]);
    });

    it('when the typed name differs from the signer’s name in more than case and spacing, then it is refused', async () => {
      for (const typed of ['Priya Castelan', 'P. Castellan', 'Priya', 'Priya Castellan.', 'Priya-Castellan']) {
        const res = await transition(crew.authoriser, id, 'approve', { password: 'holdpoint-demo', signedName: typed });
        expect(res.status, typed).toBe(400);
        expect(res.body.error.details, typed).toEqual([{ path: 'signedName', message: 'Type your name as it is shown: "Priya Castellan". Capitals and spaces do not matter; the spelling does.' }]);
      }
      expect((await expectOk(await crew.lead.get(`/api/permits/${id}`))).state).toBe('requested');
    });

    it('when the typed name differs only in case and spacing, then the signature is accepted', async () => {
      const res = await transition(crew.authoriser, id, 'approve', { password: 'holdpoint-demo', signedName: '  priya   CASTEL LAN ' });
      expect((await expectOk(res)).state).toBe('approved');
      expect((await q<{ signed_name: string }>(`SELECT signed_name FROM permit_signatures WHERE permit_id = :id AND event = 'approve'`, { id }))[0].signed_name).toBe('Priya Castellan');
    });
  });
  // Last in this file: it takes the migration down and up again on this file's own copy of the database.
  describe('the migration on existing permits', () => {
    it('when the authority migration runs over permits already on file, then their editors and who suspended them are filled in from the record', async () => {
      const id = await livePermit();
      await expectOk(await transition(crew.control, id, 'suspend', { reason: 'Pressure surge on the line' }));
      const byGas = await livePermit();
      await failingGasTest(byGas);
      const context = { queryInterface: srv.deps.sequelize.getQueryInterface(), sequelize: srv.deps.sequelize };
      await authorityDown({ context });
      await authorityUp({ context });

      const [ours] = await q<{ suspended_by_kind: string; suspension_reason: string }>(`SELECT suspended_by_kind, suspension_reason FROM permits WHERE id = :id`, { id });
      expect(ours).toEqual({ suspended_by_kind: 'control_room', suspension_reason: 'Pressure surge on the line' });
      // Every suspended permit: the role of whoever suspended it, as the trail says; no person (a failing gas test) is Holdpoint itself.
      const suspended = await q<{ kind: string; role: string | null }>(
        `SELECT p.suspended_by_kind AS kind, (SELECT a.actor_role FROM audit_events a WHERE a.tenant_id = p.tenant_id AND a.permit_id = p.id AND a.to_state = 'suspended' ORDER BY a.seq DESC LIMIT 1) AS role
         FROM permits p WHERE p.state = 'suspended'`,
      );
      const expectedKind: Record<string, string> = { authoriser: 'authoriser', control_room: 'control_room', contractor_lead: 'lead' };
      expect(suspended.map((r) => r.kind)).toEqual(suspended.map((r) => (r.role ? expectedKind[r.role] : 'system')));
      expect(suspended.map((r) => r.kind)).toEqual(expect.arrayContaining(['authoriser', 'control_room', 'system']));
      const withoutRequester = await q<{ number: string }>(
        `SELECT p.number FROM permits p WHERE NOT EXISTS (SELECT 1 FROM permit_editors e WHERE e.tenant_id = p.tenant_id AND e.permit_id = p.id AND e.user_id = p.requester_user_id)`,
      );
      expect(withoutRequester).toEqual([]);
      const [{ n }] = await q<{ n: number }>(`SELECT count(*)::int AS n FROM permits WHERE state = 'suspended' AND suspended_by_kind IS NULL`);
      expect(n).toBe(0);
    });
  });
});
