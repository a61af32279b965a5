// Isolation certificates and long-term isolations, through the real API. Sources beside each check:
// HSE HSG253 "The safe isolation of plant and equipment" (an isolation certificate cross-referenced by
// the permit to work; long-term isolations inspected at intervals) and HSE HSG250 "Guidance on
// permit-to-work systems" (the permit cross-references the isolation certificate; an isolation may be
// kept beyond one permit). Where the text was not read the test says "common practice".
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { certificateGaps } from '@shared/permit/state-machine';
import type { IsolationCertificate, IsolationCertificateSummary } from '@shared/types/certificates';
import type { Page } from '@shared/schemas/common.schema';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, sign, transition, users } from '../fixtures/permit-fixtures';
import {
  applyAndVerifySteps, confirmChecklist, expectOk, insertGasTest, proveAndSign, reasonsOf, signInCrew, steps, toAccepted, type Crew, type Ids, type PlanStepBody,
} from '../fixtures/permit-journey';
import { markOverdueRechecks } from '../../server/src/modules/certificates/recheck-scheduler';

/** Isolating devices on both sides of the work and a vent between them: the section the certificate covers runs 22.0 to 22.3. */
const plan: PlanStepBody[] = [
  { tempLabel: 'IC-BV-UP', tempPosition: 22.0, kind: 'block_valve' },
  { tempLabel: 'IC-VT-1', tempPosition: 22.1, kind: 'vent' },
  { tempLabel: 'IC-BV-DN', tempPosition: 22.3, kind: 'block_valve' },
];

describe('isolation certificates and long-term isolations', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    srv.deps.sequelize.query<T>(sql, { replacements: { tenantId: ids.tenantId, ...replacements }, type: QueryTypes.SELECT });
  const cert = async (id: string, who = crew.control) => (await expectOk(await who.get(`/api/certificates/${id}`))) as unknown as IsolationCertificate;
  /** The message of a 422 refusal. */
  const refusal = (res: { status: number; body: { error?: { code: string; message: string } } }) => {
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    return res.body.error!.message;
  };
  /** Moves the clock; everyone signs in again, as their sessions idle out meanwhile. */
  const advance = async (minutes: number) => {
    srv.clock.advanceMinutes(minutes);
    crew = await signInCrew(srv);
  };
  const stateOf = async (id: string) => (await expectOk(await crew.lead.get(`/api/permits/${id}`))).state;
  const numberOf = async (id: string) => (await expectOk(await crew.lead.get(`/api/permits/${id}`))).number as unknown as string;
  const certOfPermit = async (permitId: string) => {
    const page = (await expectOk(await crew.control.get(`/api/certificates?permitId=${permitId}`))) as unknown as Page<IsolationCertificateSummary>;
    return page.items[0];
  };

  /** A cold-work draft on BM-10 over the range; with the plan when given (then its own isolations), else relying on a certificate. */
  async function draft(title: string, range: [number, number], withPlan: boolean, pipelineId = ids.pipelineId) {
    const created = await expectOk(
      await crew.lead.post('/api/permits', permitBody(ids, srv.clock.now(), { kinds: ['cold_work'], title, fromPosition: range[0], toPosition: range[1], pipelineId })),
      201,
    );
    if (withPlan) await expectOk(await crew.lead.put(`/api/permits/${created.id}/isolations`, { version: created.version, steps: plan }));
    return created.id;
  }

  /** A permit that made its own isolations, signed in place: it holds the certificate it issued. */
  async function issuer(title: string) {
    const id = await draft(title, [22.05, 22.25], true);
    await toAccepted(crew, id);
    await applyAndVerifySteps(srv, crew, ids, id);
    await proveAndSign(srv, crew, id);
    return id;
  }

  async function startWork(id: string) {
    await insertGasTest(srv, ids, id, 'pass');
    await confirmChecklist(crew.lead, id, 'checklist');
    return transition(crew.lead, id, 'start_work');
  }

  /** Hand back (unless done), walk down, return to service (authoriser), the control room acknowledges, close. */
  async function finish(id: string, handBack = true) {
    if (handBack) await expectOk(await transition(crew.lead, id, 'hand_back', sign(users.lead)));
    await confirmChecklist(crew.authoriser, id, 'walkdown');
    return transition(crew.authoriser, id, 'return_to_service', sign(users.authoriser));
  }

  async function closeAfterReturn(id: string) {
    await expectOk(await transition(crew.control, id, 'acknowledge_return'));
    await expectOk(await transition(crew.authoriser, id, 'close'));
  }

  /** The technician takes the permit's isolations off in reverse order of application. */
  async function removeAll(id: string) {
    for (const s of (await steps(crew.tech, id)).filter((x) => x.status !== 'removed').reverse())
      await expectOk(await crew.tech.post(`/api/permits/${id}/isolations/${s.id}/remove`, {}));
  }

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
  });
  afterAll(async () => srv?.close());

  let first = '';
  let second = '';
  let certId = '';

  it('when the authoriser signs the isolations in place on a permit that made its own isolations, then an isolation certificate is issued for its proved devices in the same step (HSE HSG253, HSG250, common practice)', async () => {
    const before = await q<{ n: number }>(`SELECT count(*)::int AS n FROM isolation_certificates WHERE tenant_id = :tenantId`);
    first = await issuer('Certificate test: first permit isolates');
    const c = await certOfPermit(first);
    expect(c.number).toMatch(new RegExp(`^IC-${srv.clock.now().getUTCFullYear()}-\\d{4}$`));
    certId = c.id;
    const full = await cert(certId);
    expect(full.state).toBe('live');
    expect(full.pipelineId).toBe(ids.pipelineId);
    expect([full.fromPosition, full.toPosition]).toEqual([22.0, 22.3]);
    expect(full.devicesInPlace).toBe(2);
    expect(full.steps.map((s) => [s.label, s.isolatingDevice])).toEqual([['IC-BV-UP', true], ['IC-VT-1', false], ['IC-BV-DN', true]]);
    expect(full.proving?.result).toBe('proved');
    expect(full.issuedSignedName).toBe('Priya Castellan');
    expect(full.permits.map((p) => [p.permitId, p.issuedFor, p.releasedAt])).toEqual([[first, true, null]]);
    const after = await q<{ n: number }>(`SELECT count(*)::int AS n FROM isolation_certificates WHERE tenant_id = :tenantId`);
    expect(after[0].n).toBe(before[0].n + 1);
    // The issue is in the audit trail with the permit's own signature.
    const events = await q<{ action: string }>(`SELECT action FROM audit_events WHERE tenant_id = :tenantId AND entity_id = :id ORDER BY seq`, { id: certId });
    expect(events.map((e) => e.action)).toEqual(['certificate_issued']);
    expect((await startWork(first)).status).toBe(200);
  });

  it('when a permit of another pipeline, or one whose work runs outside the section, asks to rely on the certificate, then it is refused in plain words (HSE HSG250, common practice)', async () => {
    const [bm16] = await q<{ id: string }>(`SELECT id FROM pipelines WHERE tenant_id = :tenantId AND code = 'BM-16'`);
    const otherLine = await draft('Certificate test: another line', [22.1, 22.2], false, bm16.id);
    const refusedLine = reasonsOf(await crew.lead.post(`/api/permits/${otherLine}/certificate`, { certificateId: certId }));
    expect(refusedLine[0]).toMatch(/^IC-\d{4}-\d{4} isolates BM-10 Cedar Run Lateral, but this permit’s work is on BM-16 Haskins Creek Trunk\. Choose a certificate of the same pipeline\.$/);
    const outside = await draft('Certificate test: beyond the section', [22.2, 22.4], false);
    const refusedRange = reasonsOf(await crew.lead.post(`/api/permits/${outside}/certificate`, { certificateId: certId }));
    expect(refusedRange[0]).toMatch(/covers 22 to 22\.3 mi, but this permit’s work runs from 22\.2 to 22\.4 mi\. Choose a certificate whose section covers all of the work, or isolate for this permit\.$/);
    // Bad input is a 400 naming the field, never a 500.
    const bad = await crew.lead.post(`/api/permits/${outside}/certificate`, { certificateId: 'not-an-id' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].path).toBe('certificateId');
    // A person who may not change the permit (the control room) is refused.
    expect((await crew.control.post(`/api/permits/${outside}/certificate`, { certificateId: certId })).status).toBe(403);
  });

  it('when a later permit inside the section relies on the live certificate, then its readiness counts the certificate’s proved devices, the authoriser still signs and no new certificate is issued (HSE HSG250, common practice)', async () => {
    second = await draft('Certificate test: second permit relies', [22.1, 22.2], false);
    const linked = await expectOk(await crew.lead.post(`/api/permits/${second}/certificate`, { certificateId: certId }));
    expect(linked.number).toBe((await cert(certId)).number);
    // Linked twice: refused, the first stands.
    expect((await crew.lead.post(`/api/permits/${second}/certificate`, { certificateId: certId })).status).toBe(409);
    await toAccepted(crew, second);
    const readiness = (await expectOk(await crew.tech2.get(`/api/permits/${second}/isolations`))).readiness as unknown as { devices: number; proving: { state: string } };
    expect(readiness.devices).toBe(2);
    expect(readiness.proving.state).toBe('proved');
    const count = async () => (await q<{ n: number }>(`SELECT count(*)::int AS n FROM isolation_certificates WHERE tenant_id = :tenantId`))[0].n;
    const before = await count();
    await expectOk(await transition(crew.authoriser, second, 'confirm_isolated', sign(users.authoriser)));
    expect(await count()).toBe(before);
    expect((await startWork(second)).status).toBe(200);
    expect((await cert(certId)).permitsRelying).toBe(2);
    // Once planning is over a permit cannot switch certificates.
    expect(refusal(await crew.lead.post(`/api/permits/${second}/certificate`, { certificateId: certId }))).toMatch(/only while it is planned/);
  });

  it('when the first permit takes off an isolation the certificate still needs for the second, then it is refused naming that permit (HSE HSG253, common practice)', async () => {
    await expectOk(await transition(crew.lead, first, 'hand_back', sign(users.lead)));
    const last = (await steps(crew.tech, first)).at(-1)!;
    const refused = refusal(await crew.tech.post(`/api/permits/${first}/isolations/${last.id}/remove`, {}));
    const [secondNo, certNo] = [await numberOf(second), (await cert(certId)).number];
    expect(refused).toBe(`${secondNo} still works under ${certNo}: this isolation stays on until no permit relies on the certificate.`);
    // Nor may the certificate be returned while a permit relies on it.
    const ret = reasonsOf(await crew.authoriser.post(`/api/certificates/${certId}/return`, {}));
    expect(ret[0]).toBe(`${[await numberOf(first), secondNo].sort().join(', ')} still work under ${certNo}.`);
  });

  it('when the certificate is marked long-term, then the permits hand their isolations to it and finish without taking them off; the control room still acknowledges each return to service (HSE HSG253, HSG250, common practice)', async () => {
    // Only an authoriser marks it; a reason in words is required.
    expect((await crew.tech.post(`/api/certificates/${certId}/long-term`, { reason: 'Line stays shut for the winter.' })).status).toBe(403);
    const noReason = await crew.authoriser.post(`/api/certificates/${certId}/long-term`, { reason: '' });
    expect(noReason.status).toBe(400);
    const marked = (await expectOk(await crew.authoriser.post(`/api/certificates/${certId}/long-term`, { reason: 'Line stays shut until the new valve arrives.' }))) as unknown as IsolationCertificate;
    expect(marked.longTerm).toBe(true);
    expect(marked.recheckHours).toBe(168);
    expect(new Date(marked.nextRecheckDue!).getTime()).toBe(srv.clock.now().getTime() + 168 * 3600_000);
    // The first permit returns to service with its isolations still on, held by the certificate.
    expect(await stateOf(first)).toBe('work_complete');
    await confirmChecklist(crew.authoriser, first, 'walkdown');
    await expectOk(await transition(crew.authoriser, first, 'return_to_service', sign(users.authoriser)));
    // The control room's acknowledgement is still what lets the permit close.
    expect(reasonsOf(await transition(crew.authoriser, first, 'close'))).toEqual(['The control room has not acknowledged the return to service yet.']);
    await closeAfterReturn(first);
    expect((await finish(second)).status).toBe(200);
    await closeAfterReturn(second);
    const c = await cert(certId);
    expect(c.state).toBe('live');
    expect(c.permitsRelying).toBe(0);
    expect(c.devicesInPlace).toBe(2);
    expect(c.permits.every((p) => p.releasedAt !== null)).toBe(true);
  });

  it('when a long-term isolation is re-checked, then a person without an in-date lockout qualification is refused, a failure is recorded and mailed to the authoriser and control room and stays until a passing re-check (HSE HSG253, common practice)', async () => {
    const ok = { locksAndTagsIntact: true, valvesStillClosed: true, gaugeReading: 0, gaugeUnit: 'psig' };
    // The authoriser may record re-checks but holds no lockout qualification in the demo.
    expect(refusal(await crew.authoriser.post(`/api/certificates/${certId}/rechecks`, ok))).toBe('You need an in-date lockout tagout qualification to re-check isolations.');
    expect((await crew.control.post(`/api/certificates/${certId}/rechecks`, ok)).status).toBe(403);
    const bad = await crew.tech.post(`/api/certificates/${certId}/rechecks`, { ...ok, gaugeUnit: 'mmHg' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.map((d: { path: string }) => d.path)).toEqual(['gaugeUnit']);

    await advance(60);
    const failed = (await expectOk(await crew.tech.post(`/api/certificates/${certId}/rechecks`, { ...ok, valvesStillClosed: false, gaugeReading: 1.5 }), 201)) as unknown as IsolationCertificate;
    expect(failed.rechecks[0].result).toBe('fail');
    expect(failed.problem).toBe('a valve is no longer fully closed; the gauge reads 1.5 psig, above the limit of 0 psig: pressure is building up behind an isolation');
    const mail = await q<{ to: string; subject: string }>(`SELECT to_address AS to, subject FROM mail_outbox WHERE tenant_id = :tenantId AND subject LIKE '%failed its re-check%' ORDER BY to_address`);
    expect(mail.map((m) => m.to)).toEqual([users.authoriser, users.control].sort());
    expect(mail[0].subject).toBe(`${failed.number} long-term isolation failed its re-check: BM-10 Cedar Run Lateral`);
    // The problem stays visible on the list until a passing re-check.
    const listed = (await expectOk(await crew.auditor.get('/api/certificates?longTerm=true'))) as unknown as Page<IsolationCertificateSummary>;
    expect(listed.items.find((i) => i.id === certId)?.problem).toBe(failed.problem);

    await advance(30);
    const passed = (await expectOk(await crew.tech2.post(`/api/certificates/${certId}/rechecks`, ok), 201)) as unknown as IsolationCertificate;
    expect(passed.problem).toBeNull();
    expect(passed.rechecks.map((r) => r.result)).toEqual(['pass', 'fail']);
    expect(new Date(passed.nextRecheckDue!).getTime()).toBe(srv.clock.now().getTime() + 168 * 3600_000);
  });

  it('when a long-term isolation’s re-check is overdue, then the authoriser and control room are alerted once per overdue period (HSE HSG253, common practice: interval 168 h, no published source)', async () => {
    const count = async () =>
      (await q<{ n: number }>(`SELECT count(*)::int AS n FROM mail_outbox WHERE tenant_id = :tenantId AND subject LIKE '%re-check overdue%'`))[0].n;
    expect(await markOverdueRechecks(srv.appDeps)).toBe(0);
    await advance(168 * 60 + 1);
    expect(await markOverdueRechecks(srv.appDeps)).toBe(1);
    expect(await count()).toBe(2);
    expect((await cert(certId)).recheckOverdue).toBe(true);
    // Two servers' schedulers, or the next tick: no second alert for the same period.
    const again = await Promise.all([markOverdueRechecks(srv.appDeps), markOverdueRechecks(srv.appDeps)]);
    expect(again).toEqual([0, 0]);
    expect(await count()).toBe(2);
    // A passing re-check starts a new period; when that one runs out, one more alert.
    await expectOk(await crew.tech.post(`/api/certificates/${certId}/rechecks`, { locksAndTagsIntact: true, valvesStillClosed: true, gaugeReading: 0, gaugeUnit: 'kPa' }), 201);
    await advance(168 * 60 + 1);
    expect(await markOverdueRechecks(srv.appDeps)).toBe(1);
    expect(await count()).toBe(4);
  });

  it('when a long-term certificate is returned, then its isolations come off first in reverse order under the removal rules, and only then is it returned (HSE HSG253, common practice)', async () => {
    expect(reasonsOf(await crew.authoriser.post(`/api/certificates/${certId}/return`, {}))[0]).toBe('3 of its isolation(s) are still on: take them off in reverse order first.');
    const items = await steps(crew.tech, first);
    // Reverse order of application: the downstream valve went on last, so the vent cannot come off before it.
    const vent = items.find((s) => s.label === 'IC-VT-1')!;
    expect(refusal(await crew.tech.post(`/api/permits/${first}/isolations/${vent.id}/remove`, {}))).toMatch(/^Remove in reverse order of application: first IC-BV-DN/);
    await removeAll(first);
    const returned = (await expectOk(await crew.authoriser.post(`/api/certificates/${certId}/return`, {}))) as unknown as IsolationCertificate;
    expect(returned.state).toBe('returned');
    expect(returned.devicesInPlace).toBe(0);
    expect(returned.returnedByName).toBe('Priya Castellan');
  });

  it('when a permit’s certificate is not live, or failed its last re-check, then work may not start or resume (HSE HSG253, HSG250, common practice)', async () => {
    expect(certificateGaps(null)).toEqual(['No isolation certificate covers this permit: work starts only under a live certificate, which the authoriser’s signature on the isolations issues.']);
    expect(certificateGaps({ number: 'IC-2026-0002', state: 'returned', problem: null })).toEqual(['Isolation certificate IC-2026-0002 has been returned: work starts only under a live certificate.']);
    const id = await issuer('Certificate test: work under a failed re-check');
    const c = await certOfPermit(id);
    // A failed re-check on its certificate (the permit's own long-term certificate, written as the owner to reach the state quickly).
    await srv.deps.sequelize.query(`UPDATE isolation_certificates SET problem = 'a lock or tag is missing or damaged', problem_at = now() WHERE tenant_id = :tenantId AND id = :id`, {
      replacements: { tenantId: ids.tenantId, id: c.id },
    });
    const refused = reasonsOf(await startWork(id));
    expect(refused).toContain(`Isolation certificate ${c.number} failed its last re-check (a lock or tag is missing or damaged). Put it right and record a passing re-check first.`);
    // Without any certificate (written as the owner: no API path leaves an isolated permit without one), work is refused too.
    await srv.deps.sequelize.query(`UPDATE certificate_permits SET released_at = linked_at WHERE tenant_id = :tenantId AND permit_id = :id`, { replacements: { tenantId: ids.tenantId, id } });
    expect(reasonsOf(await transition(crew.lead, id, 'start_work'))).toContain(certificateGaps(null)[0]);
  });

  it('when a permit that is not long-term finishes and no other permit relies on its certificate, then its return to service returns the certificate by itself (HSE HSG253, common practice)', async () => {
    const id = await issuer('Certificate test: an ordinary permit');
    const c = await certOfPermit(id);
    expect((await startWork(id)).status).toBe(200);
    await expectOk(await transition(crew.lead, id, 'hand_back', sign(users.lead)));
    await removeAll(id);
    // The permit itself still relies on it until its return to service.
    expect((await cert(c.id)).state).toBe('live');
    expect((await finish(id, false)).status).toBe(200);
    const returned = await cert(c.id);
    expect(returned.state).toBe('returned');
    expect(returned.permits[0].releasedAt).not.toBeNull();
    await closeAfterReturn(id);
  });

  it('when a long-term certificate keeps a drain open after its permit closed, then a new plan that would operate that drain is refused naming the permit and the certificate (HSE HSG253, HSG250, common practice)', async () => {
    const [dr, bv] = await q<{ id: string }>(`SELECT id FROM isolation_points WHERE tenant_id = :tenantId AND tag_code IN ('CR-DR-251', 'CR-BV-252') ORDER BY tag_code DESC`);
    const created = await expectOk(
      await crew.lead.post('/api/permits', permitBody(ids, srv.clock.now(), { kinds: ['cold_work'], title: 'Certificate test: drain kept open', fromPosition: 25.25, toPosition: 25.28 })),
      201,
    );
    await expectOk(
      await crew.lead.put(`/api/permits/${created.id}/isolations`, {
        version: created.version,
        steps: [{ pointId: dr.id, kind: 'drain' }, { pointId: bv.id, kind: 'block_valve' }],
        deadEnds: { downstream: 'Capped beyond the work: no product can come from downstream.' },
      }),
    );
    await toAccepted(crew, created.id);
    await applyAndVerifySteps(srv, crew, ids, created.id);
    await proveAndSign(srv, crew, created.id);
    const c = await certOfPermit(created.id);
    await expectOk(await crew.authoriser.post(`/api/certificates/${c.id}/long-term`, { reason: 'The valve stays shut until the line is re-routed.' }));
    expect((await startWork(created.id)).status).toBe(200);
    expect((await finish(created.id)).status).toBe(200);
    await closeAfterReturn(created.id);
    const holder = await numberOf(created.id);
    const next = await expectOk(await crew.lead.post('/api/permits', permitBody(ids, srv.clock.now(), { kinds: ['cold_work'], title: 'Certificate test: would drain again', fromPosition: 25.12, toPosition: 25.15 })), 201);
    const res = await crew.lead.put(`/api/permits/${next.id}/isolations`, { version: next.version, steps: [{ pointId: dr.id, kind: 'drain' }] });
    expect(reasonsOf(res)).toEqual([`CR-DR-251 is held open by ${holder}, kept long-term under ${c.number}.`]);
  });

  it('when the certificates are listed, then the list is paged on the server and a bad filter is a 400 naming it', async () => {
    await advance(0);
    const page = (await expectOk(await crew.auditor.get('/api/certificates?pageSize=1'))) as unknown as Page<IsolationCertificateSummary>;
    expect(page.items).toHaveLength(1);
    expect(page.total).toBeGreaterThanOrEqual(3);
    expect(page.pageSize).toBe(1);
    const bad = await crew.auditor.get('/api/certificates?state=open');
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].path).toBe('state');
  });
});
