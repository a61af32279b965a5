import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { permitStates, type PermitState } from '@shared/permit/states';
import { nextGasTestDue } from '@shared/permit/due-times';
import { stepActionRefusal, type StepActionName, type StepRecord } from '@shared/isolations/step-rules';
import type { StepStatus } from '@shared/types/isolations';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, insertGasTest, signInCrew, steps, type Crew, type Ids } from '../fixtures/permit-journey';

// Finding 1 (one source for every rule): the server refuses a step action exactly where the shared
// rule the screens use says it does not fit, and every place that shows the next gas test uses the
// one shared function with the injected clock.

describe('finding 1: the step and permit rules come from shared/', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let permitId = '';
  let ventId = '';
  const userIds: Record<string, string> = {};

  const sql = (query: string, replacements: Record<string, unknown> = {}) =>
    srv.deps.sequelize.query(query, { replacements: { tenantId: ids.tenantId, permitId, ...replacements } });

  /**
   * Puts the permit in `state` and the vent step back to `status`, applied by the first technician, nothing acknowledged.
   * A suspended permit has its suspension recorded, as the suspend event leaves it (who stopped the work, when and why);
   * any other state has none, as resume leaves it.
   */
  async function arrange(state: PermitState, status: StepStatus) {
    const suspended = state === 'suspended';
    await sql(
      `UPDATE permits SET state = :state, suspended_by_kind = :byKind, suspended_by_user_id = NULL, suspended_at = :at, suspension_reason = :reason
       WHERE tenant_id = :tenantId AND id = :permitId`,
      { state, byKind: suspended ? 'system' : null, at: suspended ? srv.clock.now() : null, reason: suspended ? 'A gas test failed at the work area.' : null },
    );
    const on = status !== 'planned';
    await sql(
      `UPDATE isolation_steps SET status = :status, remotely_operable = true,
         applied_by = :appliedBy, applied_at = :appliedAt, applied_seq = :appliedSeq, verified_by = :verifiedBy, verified_at = :verifiedAt,
         verification_method = :method, removed_by = :removedBy, removed_at = :removedAt,
         remote_ack_by = NULL, remote_ack_at = NULL, control_room_ack_applied_by = NULL, control_room_ack_applied_at = NULL,
         control_room_ack_removed_by = NULL, control_room_ack_removed_at = NULL
       WHERE tenant_id = :tenantId AND id = :stepId`,
      {
        stepId: ventId, status,
        appliedBy: on ? userIds.tech : null, appliedSeq: on ? 1 : null, appliedAt: on ? new Date(srv.clock.now().getTime() - 600_000) : null,
        verifiedBy: status === 'verified' || status === 'removed' ? userIds.tech2 : null, verifiedAt: status === 'verified' || status === 'removed' ? srv.clock.now() : null,
        method: status === 'verified' || status === 'removed' ? 'position_checked' : null,
        removedBy: status === 'removed' ? userIds.tech : null, removedAt: status === 'removed' ? srv.clock.now() : null,
      },
    );
  }

  const record = (status: StepStatus): StepRecord => ({
    kind: 'vent', status, remotelyOperable: true, remoteAckAt: null, controlRoomAckAppliedAt: null, controlRoomAckRemovedAt: null, plugWarnings: [], plugWarningsAckAt: null,
  });

  const act: Record<Exclude<StepActionName, 'acknowledgePlugWarnings'>, () => Promise<{ status: number; body: unknown }>> = {
    apply: () => crew.tech.post(`/api/permits/${permitId}/isolations/${ventId}/apply`, {}),
    verify: () => crew.tech2.post(`/api/permits/${permitId}/isolations/${ventId}/verify`, { method: 'position_checked' }),
    acknowledgeRemote: () => crew.control.post(`/api/permits/${permitId}/isolations/${ventId}/acknowledge`, { what: 'remote_inhibited' }),
    acknowledgeApplied: () => crew.control.post(`/api/permits/${permitId}/isolations/${ventId}/acknowledge`, { what: 'applied' }),
    acknowledgeRemoved: () => crew.control.post(`/api/permits/${permitId}/isolations/${ventId}/acknowledge`, { what: 'removed' }),
    remove: () => crew.tech.post(`/api/permits/${permitId}/isolations/${ventId}/remove`, {}),
  };

  beforeAll(async () => {
    srv = await startTestServer();
    ids = await demoIds(srv);
    crew = await signInCrew(srv);
    for (const [key, email] of [['tech', users.tech], ['tech2', users.tech2]] as const) {
      const [row] = await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM users WHERE email = :email`, { replacements: { email }, type: QueryTypes.SELECT });
      userIds[key] = row.id;
    }
    // A temporary vent first (no lock, no register point) and a valve that stays planned, so the plan is never complete.
    permitId = await draftWithPlan(srv, crew, ids, {}, crew.lead, [
      { tempLabel: 'RULES-VT-1', tempPosition: 22.1, kind: 'vent' },
      { tempLabel: 'RULES-BV-1', tempPosition: 22.0, kind: 'block_valve' },
    ]);
    ventId = (await steps(crew.tech, permitId)).find((s) => s.label === 'RULES-VT-1')!.id;
  }, 120_000);

  afterAll(async () => {
    await srv?.close();
  });

  it('finding 1: when a step action is tried in every permit state and step status, then the server accepts it exactly where the shared rule allows it', async () => {
    const disagreements: string[] = [];
    let tried = 0;
    for (const state of permitStates)
      for (const status of ['planned', 'applied', 'verified', 'removed'] as const)
        for (const [action, call] of Object.entries(act) as [keyof typeof act, () => Promise<{ status: number; body: unknown }>][]) {
          await arrange(state, status);
          const res = await call();
          tried++;
          const refusal = stepActionRefusal(action, record(status), state);
          const ok = res.status === 200;
          const refused = res.status === 409 || res.status === 422;
          if (refusal === null ? !ok : !refused) disagreements.push(`${action} on a ${status} step of a ${state} permit: rule says ${refusal ?? 'fits'}, server ${res.status} ${JSON.stringify(res.body)}`);
        }
    console.info(`finding 1: ${tried} step actions tried against the shared rule`);
    expect(disagreements).toEqual([]);
  }, 300_000);

  it('finding 1: when the control room acknowledges an applied isolation a second time, then it is refused and the first acknowledgement stands', async () => {
    await arrange('isolated', 'verified');
    await expectOk(await act.acknowledgeApplied());
    const [first] = await srv.deps.sequelize.query<{ at: Date }>(`SELECT control_room_ack_applied_at AS at FROM isolation_steps WHERE id = :id`, { replacements: { id: ventId }, type: QueryTypes.SELECT });
    srv.clock.advanceMinutes(5);
    const again = await act.acknowledgeApplied();
    expect(again.status, JSON.stringify(again.body)).toBe(409);
    expect((again.body as { error: { message: string } }).error.message).toBe('This has already been acknowledged; the first acknowledgement stands.');
    const [after] = await srv.deps.sequelize.query<{ at: Date }>(`SELECT control_room_ack_applied_at AS at FROM isolation_steps WHERE id = :id`, { replacements: { id: ventId }, type: QueryTypes.SELECT });
    expect(after.at).toEqual(first.at);
  });

  it('finding 1: when a plug with warnings is already out, then acknowledging its warnings is refused in plain words', async () => {
    await arrange('work_complete', 'removed');
    await sql(`UPDATE isolation_steps SET kind = 'plug', condition = 'plug_built', plug_diameter_in = 10, plug_warnings = CAST(:warnings AS jsonb) WHERE id = :stepId`, {
      stepId: ventId, warnings: JSON.stringify([{ code: 'plug_too_short', message: 'The plug is shorter than the rule asks.' }]),
    });
    try {
      const res = await crew.authoriser.post(`/api/permits/${permitId}/isolations/${ventId}/acknowledge`, { what: 'plug_warnings' });
      expect(res.status, JSON.stringify(res.body)).toBe(422);
      expect((res.body as { error: { message: string } }).error.message).toBe('This plug is already out; its warnings no longer need acknowledging.');
    } finally {
      await sql(`UPDATE isolation_steps SET kind = 'vent', condition = 'vent_open', plug_diameter_in = NULL, plug_warnings = '[]'::jsonb WHERE id = :stepId`, { stepId: ventId });
    }
  });

  it('finding 1: when a live permit has no passing gas test, then the permits list, the permit page and the board all say it is due at the clock\'s now', async () => {
    await arrange('live', 'verified');
    // Twenty minutes ahead of the database's own time: a rule that read the database clock would differ.
    srv.clock.advanceMinutes(20);
    const now = srv.clock.now();
    const seen = await dueEverywhere(crew.authoriser, permitId);
    expect(seen).toEqual({ list: now.toISOString(), page: now.toISOString(), board: now.toISOString() });

    const passedAt = new Date(now.getTime() - 7 * 60_000);
    await insertGasTest(srv, ids, permitId, 'pass', passedAt);
    // Written straight into the table, which no audit event marks: a minute on, the board is read afresh.
    srv.clock.advanceMinutes(1);
    const [{ interval }] = await srv.deps.sequelize.query<{ interval: number }>(`SELECT gas_test_interval_minutes AS interval FROM permits WHERE id = :id`, {
      replacements: { id: permitId }, type: QueryTypes.SELECT,
    });
    const due = nextGasTestDue('live', passedAt, interval, srv.clock.now())!.toISOString();
    expect(await dueEverywhere(crew.authoriser, permitId)).toEqual({ list: due, page: due, board: due });
  });

  async function dueEverywhere(client: ApiClient, id: string) {
    const page = await expectOk(await client.get(`/api/permits/${id}`));
    const list = await expectOk(await client.get(`/api/permits?q=${encodeURIComponent(page.number as string)}`));
    const board = await expectOk(await client.get('/api/board'));
    const listed = (list.items as { id: string; nextGasTestDue: string | null }[]).find((p) => p.id === id);
    const onBoard = (board.items as { stepId: string; nextGasTestDue: string | null }[]).find((i) => i.stepId === ventId);
    const iso = (v: string | null | undefined) => (v ? new Date(v).toISOString() : v);
    return { list: iso(listed?.nextGasTestDue), page: iso(page.nextGasTestDue as string | null), board: iso(onBoard?.nextGasTestDue) };
  }
});
