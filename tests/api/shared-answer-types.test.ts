// Finding 2: each answer of the API is declared once in shared/types and the server answers exactly that;
// the list pages read their address with the server's own query schemas, so what they send is accepted.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { QueryTypes } from 'sequelize';
import type { QueryFunctionContext } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import { permitsQuerySchema } from '@shared/schemas/permit.schema';
import { usersQuerySchema } from '@shared/schemas/auth.schema';
import { inventoryQuerySchema, pipelinesQuerySchema } from '@shared/schemas/assets.schema';
import { boardQuerySchema } from '@shared/schemas/isolation.schema';
import type { MembershipRow, OrganisationRow, QualificationRow, UserRow } from '@shared/types/admin';
import type { AttachmentSummary } from '@shared/types/attachments';
import type { MeResponse } from '@shared/types/auth';
import type { Board, BoardItem } from '@shared/types/board';
import type { MudPlugResponse, PipeSizesResponse } from '@shared/types/calc';
import type { GasTestRow, InstrumentList, InstrumentRow } from '@shared/types/gas-tests';
import type { IsolationPlan, IsolationStep, PlanProposal } from '@shared/types/isolations';
import type { PermitAction, PermitDetail, PermitSignature, PermitSummary, PermitTimelineEvent } from '@shared/types/permits';
import type { CheckRow, DueTimeView, HandoverRow, PermitRegime } from '@shared/types/timed-checks';
import { readListQuery } from '@client/lib/list-query';
import { getPermitsQueryOptions } from '@client/features/permits/api/get-permits';
import { getUsersQueryOptions } from '@client/features/admin/api/admin-queries';
import { getPipelinesQueryOptions } from '@client/features/assets/api/pipelines';
import { getInventoryQueryOptions } from '@client/features/assets/api/inventory';
import { getBoardQueryOptions } from '@client/features/isolations/api/get-board';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, users } from '../fixtures/permit-fixtures';
import { applyAndVerifySteps, draftWithPlan, insertGasTest, signInCrew, toAccepted } from '../fixtures/permit-journey';

/**
 * The fields a shared type declares, listed once more here: the type checker refuses a list that
 * misses one or adds one, so the list is the type, and the answer is compared with it.
 */
const fieldsOf = <T>(fields: { [K in keyof Required<T>]: true }) => Object.keys(fields).sort();
const keysOf = (value: unknown) => Object.keys(value as object).sort();

const page = fieldsOf<Page<unknown>>({ items: true, total: true, page: true, pageSize: true });

let srv: TestServer;
let admin: ApiClient, authoriser: ApiClient;
let permitId = '';

// One accepted permit with its isolations on (signed twice, on the board), a gas test, a check, a handover and a file; and one draft.
beforeAll(async () => {
  srv = await startTestServer();
  const crew = await signInCrew(srv);
  const ids = await demoIds(srv);
  ({ authoriser } = crew);
  admin = await srv.signIn(users.admin);
  permitId = await draftWithPlan(srv, crew, ids);
  await toAccepted(crew, permitId);
  await applyAndVerifySteps(srv, crew, ids, permitId);
  await insertGasTest(srv, ids, permitId, 'pass');
  await draftWithPlan(srv, crew, ids, { title: 'Coating repair at the crossing' });
  // Rows of features this test does not exercise, written as the owner.
  const db = srv.deps.sequelize;
  const [tech] = await db.query<{ id: string }>(`SELECT id FROM users WHERE email = :email`, { replacements: { email: users.tech }, type: QueryTypes.SELECT });
  const r = { tenantId: ids.tenantId, permitId, lead: ids.leadUserId, tech: tech.id };
  await db.query(
    `INSERT INTO permit_checks (tenant_id, permit_id, kind, checked_at, ok, observation, recorded_by) VALUES (:tenantId, :permitId, 'plug', now(), true, '{"face":"intact"}', :tech)`,
    { replacements: r },
  );
  await db.query(
    `INSERT INTO permit_handovers (tenant_id, permit_id, from_user_id, to_user_id, open_points, readings_summary, from_signed_name, from_signed_at)
     VALUES (:tenantId, :permitId, :lead, :tech, 'Plug faces to watch.', '["No gas test due."]', 'Rory Kilbride', now())`,
    { replacements: r },
  );
  await db.query(
    `INSERT INTO attachments (tenant_id, permit_id, entity_type, entity_id, original_name, stored_name, content_type, size_bytes, sha256, uploaded_by)
     VALUES (:tenantId, :permitId, 'permit', :permitId, 'plug.png', gen_random_uuid()::text, 'image/png', 68, repeat('0', 64), :tech)`,
    { replacements: r },
  );
});
afterAll(() => srv?.close());

async function ok(client: ApiClient, path: string) {
  const res = await client.get(path);
  expect(res.status, `${path}: ${JSON.stringify(res.body)}`).toBe(200);
  return res.body;
}

describe('finding 2: the server answers exactly the shapes declared in shared/types', () => {
  it('when the permit list and a permit are read, then they have exactly the fields of PermitSummary and PermitDetail', async () => {
    const list = await ok(authoriser, '/api/permits');
    expect(keysOf(list)).toEqual(page);
    expect(keysOf(list.items[0])).toEqual(
      fieldsOf<PermitSummary>({
        id: true, number: true, state: true, version: true, kinds: true, title: true, pipelineId: true, pipelineName: true, fromPosition: true, toPosition: true,
        validFrom: true, validTo: true, contractorOrganisationId: true, contractorName: true, updatedAt: true, nextGasTestDue: true,
      }),
    );
    const permit = await ok(authoriser, `/api/permits/${permitId}`);
    expect(keysOf(permit)).toEqual(
      fieldsOf<PermitDetail>({
        id: true, tenantId: true, number: true, state: true, version: true, kinds: true, title: true, scope: true, pipelineId: true, pipelineName: true,
        fromPosition: true, toPosition: true, jobReference: true, methodStatement: true, hazards: true, ppe: true, checklist: true, walkdown: true,
        validFrom: true, validTo: true, contractorOrganisationId: true, contractorName: true, contractorLeadUserId: true, contractorLeadName: true,
        requesterUserId: true, requesterName: true, authoriserUserId: true, authoriserName: true, holderUserId: true, holderName: true,
        fireWatchMinutes: true, fireWatchPerson: true, gasTestWindowMinutes: true, gasTestIntervalMinutes: true, hotWorkEndedAt: true, controlRoomAckAt: true,
        rejectionReason: true, stateBeforeExpiry: true, expiredFlag: true, createdAt: true, updatedAt: true, actions: true, timeline: true, signatures: true, nextGasTestDue: true,
        lockbox: true, workOverlaps: true, workOverlapsMore: true, suspendedByKind: true, suspendedByName: true, suspendedAt: true, suspensionReason: true,
      }),
    );
    expect(keysOf(permit.timeline[0])).toEqual(
      fieldsOf<PermitTimelineEvent>({ seq: true, action: true, fromState: true, toState: true, actorName: true, actorRole: true, reason: true, data: true, occurredAt: true, entityType: true }),
    );
    expect(keysOf(permit.signatures[0])).toEqual(fieldsOf<PermitSignature>({ event: true, signedName: true, passwordConfirmed: true, signedAt: true, email: true }));
    expect(keysOf(permit.actions[0])).toEqual(fieldsOf<PermitAction>({ event: true, label: true, allowed: true, reasons: true, needsSignature: true, needsReason: true }));
  });

  it('when the isolation plan, a proposal and the board are read, then they have exactly the fields of IsolationStep, PlanProposal, Board and BoardItem', async () => {
    const plan = await ok(authoriser, `/api/permits/${permitId}/isolations`);
    expect(keysOf(plan)).toEqual(fieldsOf<IsolationPlan>({ items: true, readiness: true, conflicts: true, shared: true }));
    expect(keysOf(plan.items[0])).toEqual(
      fieldsOf<IsolationStep>({
        id: true, permitId: true, seq: true, pointId: true, label: true, position: true, kind: true, condition: true, status: true, remotelyOperable: true,
        lockId: true, lockNumber: true, tagId: true, tagNumber: true, appliedBy: true, appliedByName: true, appliedAt: true, appliedEnteredLate: true,
        photoAttachmentId: true, remoteAckAt: true, remoteAckByName: true, verifiedBy: true, verifiedByName: true, verifiedAt: true, verificationMethod: true,
        verificationReading: true, verificationUnit: true, verificationNotes: true, removedByName: true, removedAt: true, removalNote: true,
        controlRoomAckAppliedAt: true, controlRoomAckRemovedAt: true, plugDiameterIn: true, plugAsBuilt: true, plugWarnings: true, plugWarningsAckAt: true,
        lineStopAsBuilt: true, appliedSeq: true, appliedOutOfOrderReason: true, exceptionRecordedAt: true, exceptionAuthoriserId: true, exceptionAuthoriserName: true, removedUnderException: true,
        heldBy: true, heldByName: true, handedOverAt: true,
      }),
    );
    const proposal = await ok(authoriser, `/api/permits/${permitId}/isolations/proposal?fromPosition=17.29&toPosition=17.31`);
    expect(keysOf(proposal)).toEqual(fieldsOf<PlanProposal>({ steps: true, warnings: true, insideDiameterIn: true }));
    const board = await ok(authoriser, '/api/board');
    expect(keysOf(board)).toEqual(fieldsOf<Board>({ items: true, total: true, generatedAt: true }));
    expect(keysOf(board.items[0])).toEqual(
      fieldsOf<BoardItem>({
        stepId: true, status: true, pipelineId: true, pipelineName: true, pointId: true, label: true, position: true, kind: true, condition: true,
        lockNumber: true, tagNumber: true, appliedAt: true, appliedByName: true, verifiedAt: true, verifiedByName: true, remotelyOperable: true,
        remoteAckAt: true, controlRoomAckAppliedAt: true, plugBuiltAt: true, permit: true, permits: true, nextGasTestDue: true,
      }),
    );
  });

  it('when the gas tests, checks, handovers, regime, instruments and attachments of the permit are read, then each has exactly its declared fields', async () => {
    const tests = await ok(authoriser, `/api/permits/${permitId}/gas-tests`);
    expect(keysOf(tests.items[0])).toEqual(
      fieldsOf<GasTestRow>({
        id: true, permitId: true, testedAt: true, place: true, placeNote: true, purpose: true, readings: true, verdict: true, assessment: true,
        testerName: true, instrument: true, source: true, seriesId: true, notes: true, enteredLate: true,
      }),
    );
    const checks = await ok(authoriser, `/api/permits/${permitId}/checks`);
    expect(keysOf(checks.items[0])).toEqual(
      fieldsOf<CheckRow>({
        id: true, kind: true, checkedAt: true, ok: true, observation: true, actionTaken: true, notes: true, isolationStepId: true, stepLabel: true, recordedByName: true, enteredLate: true,
      }),
    );
    const handovers = await ok(authoriser, `/api/permits/${permitId}/handovers`);
    expect(keysOf(handovers.items[0])).toEqual(
      fieldsOf<HandoverRow>({ id: true, status: true, fromUserId: true, fromName: true, toUserId: true, toName: true, openPoints: true, readingsSummary: true, fromSignedAt: true, acceptedAt: true }),
    );
    const regime = await ok(authoriser, `/api/permits/${permitId}/regime`);
    expect(keysOf(regime)).toEqual(
      fieldsOf<PermitRegime>({
        limits: true, hotWork: true, permitRequest: true, permitId: true, state: true, holder: true, gasTestWindowMinutes: true, gasTestIntervalMinutes: true,
        fireWatchMinutes: true, fireWatchEndsAt: true, tests: true, due: true, nextDue: true, requireDailyBumpTest: true, timeZone: true, stopWork: true,
      }),
    );
    expect(keysOf(regime.due[0])).toEqual(fieldsOf<DueTimeView>({ kind: true, label: true, dueAt: true, overdue: true, minutesOverdue: true, intervalMinutes: true }));
    const instruments = await ok(authoriser, '/api/instruments');
    expect(keysOf(instruments)).toEqual(fieldsOf<InstrumentList>({ items: true, total: true, page: true, pageSize: true, requireDailyBumpTest: true }));
    expect(keysOf(instruments.items[0])).toEqual(
      fieldsOf<InstrumentRow>({ id: true, tenantId: true, model: true, serial: true, lastBumpTestAt: true, lastCalibratedOn: true, calibrationDueOn: true, retiredAt: true }),
    );
    const files = await ok(authoriser, `/api/permits/${permitId}/attachments`);
    expect(keysOf(files.items[0])).toEqual(
      fieldsOf<AttachmentSummary>({
        id: true, permitId: true, entityType: true, entityId: true, originalName: true, contentType: true, sizeBytes: true, sha256: true,
        uploadedBy: true, uploadedByName: true, createdAt: true, downloadUrl: true, inline: true,
      }),
    );
  });

  it('when the administration lists, a role change, the signed-in person and the calculator are read, then each has exactly its declared fields', async () => {
    const orgs = await ok(admin, '/api/organisations');
    expect(keysOf(orgs.items[0])).toEqual(fieldsOf<OrganisationRow>({ id: true, tenantId: true, name: true, kind: true, members: true }));
    const people = await ok(admin, '/api/users');
    expect(keysOf(people.items[0])).toEqual(
      fieldsOf<UserRow>({ membershipId: true, userId: true, name: true, email: true, role: true, organisationId: true, organisationName: true, organisationKind: true }),
    );
    const qualifications = await ok(admin, '/api/qualifications');
    expect(keysOf(qualifications.items[0])).toEqual(
      fieldsOf<QualificationRow>({ id: true, tenantId: true, userId: true, userName: true, kind: true, reference: true, issuedOn: true, expiresOn: true }),
    );
    // The role it already has: nothing changes, and the answer is the membership.
    const tech = (people.items as UserRow[]).find((u) => u.role === 'isolation_technician')!;
    const same = await admin.patch(`/api/memberships/${tech.membershipId}`, { role: tech.role });
    expect(same.status, JSON.stringify(same.body)).toBe(200);
    expect(keysOf(same.body)).toEqual(fieldsOf<MembershipRow>({ id: true, tenantId: true, userId: true, organisationId: true, role: true }));
    const me = await ok(admin, '/api/auth/me');
    expect(keysOf(me)).toEqual(fieldsOf<MeResponse>({ user: true, memberships: true, activeTenantId: true, activeTenant: true, rules: true }));
    const plug = await ok(admin, '/api/calc/mud-plug?diameterIn=10&waterFraction=0.55');
    const { caution, basis, ...figures } = plug as MudPlugResponse;
    expect([caution, basis].every(Boolean)).toBe(true);
    expect(Object.keys(figures).length).toBeGreaterThan(0);
    const sizes = await ok(admin, '/api/calc/pipe-sizes');
    expect(keysOf(sizes)).toEqual(fieldsOf<PipeSizesResponse>({ source: true, schedules: true }));
  });
});

describe('finding 2: a list page sends the server only what its query schema accepts', () => {
  beforeAll(() => {
    const agent = admin.agent;
    // The client's query functions speak to relative /api paths with the browser's cookie: route them to the test server as the tenant admin.
    vi.stubGlobal('fetch', async (path: string) => {
      const res = await agent.get(path).set('accept', 'application/json');
      return new Response(res.text, { status: res.status, headers: { 'content-type': 'application/json' } });
    });
  });
  afterAll(() => {
    vi.unstubAllGlobals();
  });

  const context = {} as QueryFunctionContext<never>;
  const address = (s: string) => new URLSearchParams(s);

  it('when the people page is opened at an address with an unknown role, sort and direction, then the list still loads (the server refuses those values with 400)', async () => {
    const refused = await admin.get('/api/users?role=wizard&sort=colour');
    expect(refused.status).toBe(400);
    const query = readListQuery(usersQuerySchema, address('role=wizard&sort=colour&dir=sideways&page=0'));
    const answer = await getUsersQueryOptions(query).queryFn!(context);
    expect(answer.page).toBe(1);
    expect(answer.items.length).toBeGreaterThan(0);
  });

  it('when the permits, pipelines, locks and board pages are opened at hand-edited addresses, then each list loads with what was good in the address', async () => {
    const permits = await getPermitsQueryOptions(readListQuery(permitsQuerySchema, address('state=accepted,flying&sort=colour&pipelineId=BM-10&utm_source=mail'))).queryFn!(context);
    expect(permits.items.map((p) => p.id)).toEqual([permitId]);
    const pipelines = await getPipelinesQueryOptions(readListQuery(pipelinesQuerySchema, address('product=lava&page=-3&q=BM'))).queryFn!(context);
    expect(pipelines.items.length).toBeGreaterThan(0);
    const locks = await getInventoryQueryOptions('lock', readListQuery(inventoryQuerySchema, address('state=melted&holderUserId=me'))).queryFn!(context);
    expect(locks.total).toBeGreaterThan(0);
    const board = await getBoardQueryOptions(readListQuery(boardQuerySchema, address('permitState=draft&pipelineId=BM-10'))).queryFn!(context);
    // The steps of the accepted permit, whatever the bad filters asked for.
    expect(board.total).toBeGreaterThan(0);
  });
});
