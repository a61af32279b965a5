// Simultaneous operations: conflicting isolations between permits (HSE HSG250, permit-to-work systems
// must identify conflicting work; common practice where the text was not read).
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { captureMail, type CaughtMail } from '../fixtures/mail-capture';
import { demoIds, permitBody, sign, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, inStore, reasonsOf, signInCrew, tempDeadEnds, toAccepted, type Crew, type Ids, type PlanStepBody } from '../fixtures/permit-journey';

interface Neighbour {
  pointId: string;
  label: string;
  permitNumber: string;
  held: string;
  message: string;
}
interface Plan {
  items: { id: string; label: string; status: string }[];
  conflicts: Neighbour[];
  shared: Neighbour[];
}

describe('conflicting isolations between permits', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  const point: Record<string, string> = {};
  /** The first permit: accepted, with CR-VT-150 opened and CR-BV-149 closed, locked and tagged. */
  const holder = { id: '', number: '' };

  const select = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) =>
    srv.deps.sequelize.query<T>(sql, { replacements: { tenantId: ids.tenantId, ...replacements }, type: QueryTypes.SELECT });
  const planOf = async (id: string) => (await expectOk(await crew.lead.get(`/api/permits/${id}/isolations`))) as unknown as Plan;
  const numberOf = async (id: string) => ((await expectOk(await crew.lead.get(`/api/permits/${id}`))) as unknown as { number: string }).number;
  const stepOf = async (id: string, label: string) => (await planOf(id)).items.find((s) => s.label === label)!;
  const lockAndTag = async () => ({ lockId: await inStore(srv, 'locks', ids.tenantId), tagId: await inStore(srv, 'tags', ids.tenantId) });

  let capture: Awaited<ReturnType<typeof captureMail>>;
  const mails: CaughtMail[] = [];
  const flushMail = () => capture.flush(srv);

  beforeAll(async () => {
    capture = await captureMail(mails);
    srv = await startTestServer({ smtpPort: capture.catcher.port });
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    for (const p of await select<{ id: string; tag_code: string }>(`SELECT id, tag_code FROM isolation_points WHERE tenant_id = :tenantId`)) point[p.tag_code] = p.id;
    const plan: PlanStepBody[] = [
      { pointId: point['CR-VT-150'], kind: 'vent' },
      { pointId: point['CR-BV-149'], kind: 'block_valve' },
      { tempLabel: 'TEST-PL-1', tempPosition: 15.2, kind: 'plug', plugDiameterIn: 10 },
    ];
    holder.id = await draftWithPlan(srv, crew, ids, { title: 'Sleeve at MP 15.2', fromPosition: 15.2, toPosition: 15.2 }, crew.lead, plan, tempDeadEnds);
    holder.number = await numberOf(holder.id);
    await toAccepted(crew, holder.id);
    await expectOk(await crew.tech.post(`/api/permits/${holder.id}/isolations/${(await stepOf(holder.id, 'CR-VT-150')).id}/apply`, {}));
    await expectOk(await crew.tech.post(`/api/permits/${holder.id}/isolations/${(await stepOf(holder.id, 'CR-BV-149')).id}/apply`, await lockAndTag()));
  });
  afterAll(async () => {
    await srv?.close();
    await capture?.catcher.stop();
  });

  // Source: HSE HSG250 (a permit-to-work system must identify conflicting work); common practice where the text was not read.
  it('finding L1: when a draft plan would open CR-VT-150, which an accepted permit holds open, then saving it is refused naming the point and the permit, and nothing is written', async () => {
    const created = await expectOk(await crew.lead.post('/api/permits', permitBody(ids, srv.clock.now())), 201);
    const steps = [
      { pointId: point['CR-BV-098'], kind: 'block_valve' },
      { pointId: point['CR-VT-150'], kind: 'vent' },
    ];
    const res = await crew.lead.put(`/api/permits/${created.id}/isolations`, { version: created.version, steps });
    const reasons = reasonsOf(res);
    expect(reasons).toEqual([`CR-VT-150 is held open by ${holder.number}.`]);
    expect(res.body.error.message).toContain(`CR-VT-150 is held open by ${holder.number}`);
    expect(res.body.error.details[0].path).toBe('steps.1.pointId');
    expect((await planOf(created.id)).items).toEqual([]);
  });

  // Source: HSE HSG250 (a permit-to-work system must identify conflicting work); common practice where the text was not read.
  it('finding L1: when two permits hold CR-BV-149 closed, then both may, and both plan pages list it as shared naming the other permit', async () => {
    const plan: PlanStepBody[] = [
      { pointId: point['CR-BV-149'], kind: 'block_valve' },
      { tempLabel: 'TEST-VT-9', tempPosition: 14.5, kind: 'vent' },
    ];
    const id = await draftWithPlan(srv, crew, ids, { title: 'Coupon change at MP 14.5' }, crew.lead, plan, { upstream: 'Test line: capped before the cut.' });
    const number = await numberOf(id);
    const draft = await planOf(id);
    expect(draft.conflicts).toEqual([]);
    expect(draft.shared).toEqual([
      { pointId: point['CR-BV-149'], label: 'CR-BV-149', permitNumber: holder.number, held: 'closed_locked_tagged', message: `CR-BV-149 is held closed by ${holder.number}` },
    ]);
    await toAccepted(crew, id);
    await expectOk(await crew.tech.post(`/api/permits/${id}/isolations/${(await stepOf(id, 'CR-BV-149')).id}/apply`, await lockAndTag()));
    expect((await planOf(holder.id)).shared.map((s) => s.message)).toEqual([`CR-BV-149 is held closed by ${number}`]);
    expect((await planOf(holder.id)).conflicts).toEqual([]);
  });

  // Source: HSE HSG250 (a permit-to-work system must identify conflicting work); common practice where the text was not read.
  it('finding L1: when an accepted permit has opened CR-VT-047, then another permit planning it cannot apply it and cannot be approved, each refusal naming the point and the permit', async () => {
    // The vent comes first in each plan, so it is the first step applied.
    const plan: PlanStepBody[] = [
      { pointId: point['CR-VT-047'], kind: 'vent' },
      { tempLabel: 'TEST-BV-1', tempPosition: 4.65, kind: 'block_valve' },
      { tempLabel: 'TEST-PL-1', tempPosition: 4.75, kind: 'plug', plugDiameterIn: 10 },
    ];
    const [first, second, third] = [
      await draftWithPlan(srv, crew, ids, { title: 'Sleeve at MP 4.7' }, crew.lead, plan, tempDeadEnds),
      await draftWithPlan(srv, crew, ids, { title: 'Coating repair at MP 4.7' }, crew.lead, plan, tempDeadEnds),
      await draftWithPlan(srv, crew, ids, { title: 'Anode check at MP 4.7' }, crew.lead, plan, tempDeadEnds),
    ];
    for (const id of [first, second, third]) await expectOk(await transition(crew.lead, id, 'submit'));
    for (const id of [first, second]) {
      await expectOk(await transition(crew.authoriser, id, 'approve', sign(users.authoriser)));
      await expectOk(await transition(crew.lead, id, 'accept', sign(users.lead)));
    }
    const firstNumber = await numberOf(first);
    const vent = (id: string) => planOf(id).then((p) => p.items.find((s) => s.label === 'CR-VT-047')!);

    await expectOk(await crew.tech.post(`/api/permits/${first}/isolations/${(await vent(first)).id}/apply`, {}));

    // The first permit is only accepted (not yet signed isolated): it holds the vent open all the same.
    const applied = await crew.tech.post(`/api/permits/${second}/isolations/${(await vent(second)).id}/apply`, {});
    expect(reasonsOf(applied)).toEqual([`CR-VT-047 is held open by ${firstNumber}.`]);
    expect(applied.body.error.message).toContain(`CR-VT-047 is held open by ${firstNumber}`);
    expect((await vent(second)).status).toBe('planned');
    expect((await planOf(second)).conflicts.map((c) => c.message)).toEqual([`CR-VT-047 is held open by ${firstNumber}`]);

    const approved = await transition(crew.authoriser, third, 'approve', sign(users.authoriser));
    expect(reasonsOf(approved)).toEqual([`The plan would operate points another permit holds in place: CR-VT-047 is held open by ${firstNumber}.`]);
    expect((await expectOk(await crew.lead.get(`/api/permits/${third}`))).state).toBe('requested');
  });

  // Source: HSE HSG250 (a permit-to-work system must identify conflicting work); common practice where the text was not read.
  it('finding L2: when a permit sent for approval works on a stretch of BM-10 that another permit already covers, then both pages warn and each authoriser gets one mail, not another at approval', async () => {
    await flushMail();
    mails.length = 0;
    const first = await draftWithPlan(srv, crew, ids, { title: 'Recoat at MP 27', fromPosition: 27.0, toPosition: 27.5 });
    const second = await draftWithPlan(srv, crew, ids, { title: 'Dig-up at MP 27.4', fromPosition: 27.3, toPosition: 27.8 });
    const apart = await draftWithPlan(srv, crew, ids, { title: 'Marker post at MP 28', fromPosition: 28.0, toPosition: 28.2 });
    const [firstNumber, secondNumber] = [await numberOf(first), await numberOf(second)];
    for (const id of [first, apart]) await expectOk(await transition(crew.lead, id, 'submit'));
    // A draft is not yet anyone's work: nothing is flagged until it is sent for approval.
    expect((await expectOk(await crew.authoriser.get(`/api/permits/${first}`))).workOverlaps).toEqual([]);
    await flushMail();
    expect(mails.filter((m) => m.subject.includes('same stretch'))).toEqual([]);

    await expectOk(await transition(crew.lead, second, 'submit'));
    await expectOk(await transition(crew.authoriser, first, 'approve', sign(users.authoriser)));
    await flushMail();

    const authorisers = (
      await select<{ email: string }>(
        `SELECT DISTINCT u.email FROM users u JOIN memberships m ON m.user_id = u.id WHERE m.tenant_id = :tenantId AND m.role = 'authoriser' AND u.disabled_at IS NULL ORDER BY u.email`,
      )
    ).map((u) => u.email);
    expect(authorisers).toContain(users.authoriser);
    const flagged = mails.filter((m) => m.subject === `${secondNumber} and ${firstNumber} work on the same stretch of BM-10 Cedar Run Lateral`);
    expect(flagged.map((m) => m.to).sort()).toEqual(authorisers);
    expect(flagged[0].body).toContain(`Permit ${firstNumber} (Recoat at MP 27) works between 27 and 27.5 on the same line.`);
    expect(mails.filter((m) => m.subject.includes('same stretch'))).toHaveLength(authorisers.length);

    const onSecond = (await expectOk(await crew.authoriser.get(`/api/permits/${second}`))).workOverlaps as unknown as { permitNumber: string; message: string }[];
    expect(onSecond).toEqual([expect.objectContaining({ permitNumber: firstNumber, message: `${firstNumber} (Recoat at MP 27) also works between 27 and 27.5 on this line` })]);
    const onFirst = (await expectOk(await crew.authoriser.get(`/api/permits/${first}`))).workOverlaps as unknown as { permitNumber: string }[];
    expect(onFirst.map((o) => o.permitNumber)).toEqual([secondNumber]);
    expect((await expectOk(await crew.authoriser.get(`/api/permits/${apart}`))).workOverlaps).toEqual([]);
  });
});
