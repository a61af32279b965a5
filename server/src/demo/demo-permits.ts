import { QueryTypes } from 'sequelize';
import { defineAbilityFor } from '@shared/abilities/define-ability';
import { assessAtmosphere, DEFAULT_ATMOSPHERE_LIMITS, mudPlug } from '@shared/calc';
import { signedEvents, type PermitEvent } from '@shared/permit/state-machine';
import { createLogger } from '../lib/logger';
import { ManualClock } from '../lib/clock';
import { loadActor } from '../lib/actor';
import type { CallerContext } from '../lib/caller';
import type { AppDeps } from '../deps';
import type { Config } from '../config/env';
import { applyTransition, createPermit, transitionPermit, updateChecklist, recordHotWorkStopped } from '../modules/permits/permits.service';
import { findPermit } from '../modules/permits/permits.repository';
import { proposePlan, savePlan } from '../modules/isolations/isolation-plan.service';
import { acknowledgeStep, applyStep, removeStep, verifyStep } from '../modules/isolations/isolation-steps.service';
import { listSteps } from '../modules/isolations/isolation-queries';
import { endProving, startProving } from '../modules/isolations/isolation-proving.service';
import { loadTenantSettings } from '../modules/tenants/tenant-settings';
import { recordCheck } from '../modules/gas-tests/checks.service';
import { linkPermit, markLongTerm } from '../modules/certificates/certificates.service';
import { DEMO_PASSWORD } from './demo-people';
import type { DemoSeeder } from './registry';

const MIN = 60_000;

/** A plug built a little over the rule-of-thumb quantities, 50/50 by weight, as a careful crew would. */
function asBuiltFor(diameterIn: number) {
  const m = mudPlug({ diameterIn });
  const half = Math.round(m.mudLb * 1.03 * 5) / 10;
  return { bentoniteLb: half, waterLb: half, lengthIn: Math.ceil(m.plugLengthIn * 2) / 2 };
}
const HOUR = 60 * MIN;

/**
 * The demo job at every stage, written through the same services people use, so every permit has a
 * real audit trail: Bramblecote Midstream replaces a dented 12-foot section of BM-10 at about
 * milepost 17.3 with Oxbow Line Repair, while other permits wait, start and finish around it.
 */
export const seedPermits: DemoSeeder = async (sequelize, ids) => {
  const tenantId = ids.tenants.bramblecote;
  const exists = await sequelize.query(`SELECT 1 FROM permits WHERE tenant_id = :tenantId AND job_reference LIKE 'BM-DEMO-%' LIMIT 1`, { replacements: { tenantId }, type: QueryTypes.SELECT });
  if (exists.length) return;

  const now = new Date();
  const clock = new ManualClock(now);
  const deps = {
    sequelize,
    clock,
    logger: createLogger('silent'),
    mailTransport: null,
    // The attempt counters' queries (auth_attempts) through the seed's own connection.
    pgPool: { query: (text: string, values?: unknown[]) => sequelize.query(text, { bind: values }).then(([rows]) => ({ rows })) },
    config: { PUBLIC_URL: process.env.PUBLIC_URL ?? `http://127.0.0.1:${process.env.PORT ?? 3000}` } as Config,
  } as unknown as AppDeps;

  const as = async (email: string): Promise<CallerContext> => {
    const loaded = await loadActor(sequelize, ids.users[email], tenantId);
    if (!loaded?.actor) throw new Error(`demo user ${email} has no role in the tenant`);
    return { actor: loaded.actor, ability: defineAbilityFor(loaded.actor), user: loaded.user, ip: '127.0.0.1' };
  };
  const lead = await as('lead@oxbow-repair.example');
  const authoriser = await as('authoriser@bramblecote.example');
  const authoriser2 = await as('authoriser2@bramblecote.example');
  const tech = await as('tech@oxbow-repair.example');
  const tech2 = await as('tech2@oxbow-repair.example');
  const control = await as('control@bramblecote.example');
  const sig = { password: DEMO_PASSWORD };
  const at = (t: Date) => clock.set(t);
  const move = async (who: CallerContext, id: string, event: PermitEvent, extra: Record<string, unknown> = {}) => {
    const p = (await findPermit(sequelize, tenantId, id))!;
    const signed = signedEvents.includes(event);
    return transitionPermit(deps, who, id, { event, version: p.version, ...(signed ? { ...sig, signedName: who.user.name } : {}), ...extra });
  };
  const [bm10] = await sequelize.query<{ id: string; bore: number }>(`SELECT id, inside_diameter_in::float8 AS bore FROM pipelines WHERE tenant_id = :tenantId AND code = 'BM-10'`, { replacements: { tenantId }, type: QueryTypes.SELECT });
  const [bm16] = await sequelize.query<{ id: string }>(`SELECT id FROM pipelines WHERE tenant_id = :tenantId AND code = 'BM-16'`, { replacements: { tenantId }, type: QueryTypes.SELECT });
  const oxbow = ids.organisations.bramblecote.oxbow;
  const locks = await sequelize.query<{ id: string }>(`SELECT id FROM locks WHERE tenant_id = :tenantId AND state = 'in_store' ORDER BY number`, { replacements: { tenantId }, type: QueryTypes.SELECT });
  const tags = await sequelize.query<{ id: string }>(`SELECT id FROM tags WHERE tenant_id = :tenantId AND state = 'in_store' ORDER BY number`, { replacements: { tenantId }, type: QueryTypes.SELECT });
  let nextLock = 0;

  const request = async (input: Record<string, unknown>, start: Date, hours: number, who = lead) => {
    // Asked for two hours before the start; a permit for tomorrow is asked for at the moment already set, never in the future.
    if (start.getTime() - 2 * HOUR <= now.getTime()) at(new Date(start.getTime() - 2 * HOUR));
    const p = await createPermit(deps, who, {
      scope: '', methodStatement: '', hazards: '', ppe: ['FR coveralls', 'Hard hat', 'Safety glasses', 'Gloves'], fireWatchMinutes: 60, contractorOrganisationId: oxbow,
      validFrom: start.toISOString(), validTo: new Date(start.getTime() + hours * HOUR).toISOString(), ...input,
    } as never);
    return p.id;
  };
  const planCut = async (id: string, from: number, to: number) => {
    const proposal = await proposePlan(deps, lead, id, from, to);
    const p = (await findPermit(sequelize, tenantId, id))!;
    await savePlan(deps, lead, id, { version: p.version, steps: proposal.steps.map(({ label: _l, position: _p, ...s }) => s) });
  };
  const isolate = async (id: string, startAt: Date) => {
    let t = startAt.getTime();
    for (const step of await listSteps(sequelize, tenantId, id)) {
      at(new Date((t += 6 * MIN)));
      const needsLock = step.kind === 'block_valve' || step.kind === 'isolator';
      await applyStep(deps, tech, id, step.id, {
        ...(needsLock ? { lockId: locks[nextLock].id, tagId: tags[nextLock++].id } : {}),
        ...(step.kind === 'plug' ? { asBuilt: asBuiltFor(step.plugDiameterIn ?? 10) } : {}),
      });
      if (step.remotelyOperable) await acknowledgeStep(deps, control, id, step.id, { what: 'remote_inhibited' });
      at(new Date((t += 3 * MIN)));
      await verifyStep(deps, tech2, id, step.id, step.kind === 'plug' ? { method: 'plug_length', reading: asBuiltFor(step.plugDiameterIn ?? 10).lengthIn, unit: 'in' } : { method: step.kind === 'block_valve' ? 'try_out' : 'position_checked' });
      await acknowledgeStep(deps, control, id, step.id, { what: 'applied' });
    }
    return new Date(t);
  };
  const { provingHoldMinutes } = await loadTenantSettings(sequelize, tenantId);
  /**
   * The second technician, who applied none of the isolating devices, proves the section dead at the
   * plan's first vent or drain, held the site's time without build-up (HSE HSG253); then the
   * authoriser signs the isolations in place (HSE HSG250). Returns when that was done.
   */
  const proveAndSign = async (id: string, from: Date, signer = authoriser) => {
    const bleed = (await listSteps(sequelize, tenantId, id)).find((s) => s.kind === 'vent' || s.kind === 'drain')!;
    at(new Date(from.getTime() + 2 * MIN));
    const test = await startProving(deps, tech2, id, { stepId: bleed.id, reading: 0, unit: 'psig' });
    at(new Date(from.getTime() + (2 + provingHoldMinutes) * MIN));
    await endProving(deps, tech2, id, test.id, { reading: 0 });
    at(new Date(from.getTime() + (4 + provingHoldMinutes) * MIN));
    await move(signer, id, 'confirm_isolated');
    return clock.now();
  };
  const gasTest = async (id: string, when: Date, readings: { o2Pct: number; lelPct: number; h2sPpm: number; coPpm: number }, place = 'work_area') => {
    const assessment = assessAtmosphere(readings, DEFAULT_ATMOSPHERE_LIMITS, { hotWork: true });
    await sequelize.query(
      `INSERT INTO gas_tests (tenant_id, permit_id, tester_user_id, place, tested_at, readings, verdict, assessment)
       VALUES (:tenantId, :id, :tester, :place, :when, CAST(:readings AS jsonb), :verdict, CAST(:assessment AS jsonb))`,
      { replacements: { tenantId, id, tester: tech.user.id, place, when, readings: JSON.stringify(readings), verdict: assessment.verdict, assessment: JSON.stringify(assessment) } },
    );
    return assessment.verdict;
  };
  /** A passing check recorded by the technician (plugs re-checked on the day work starts; the fire watch's closing check). */
  const passingCheck = async (id: string, when: Date, kind: 'plug' | 'fire_watch') => {
    await sequelize.query(
      `INSERT INTO permit_checks (tenant_id, permit_id, kind, checked_at, ok, observation, recorded_by, created_at) VALUES (:tenantId, :id, :kind, :when, true, CAST(:observation AS jsonb), :tester, :when)`,
      { replacements: { tenantId, id, kind, when, tester: tech.user.id, observation: JSON.stringify(kind === 'plug' ? { face: 'intact' } : { observation: 'clear' }) } },
    );
  };
  /** Before work starts (shared/permit/stop-work.ts): the plugs checked today and a pass inside the pipe on each side and at the work area. */
  const readyToStart = async (id: string, when: Date) => {
    await passingCheck(id, when, 'plug');
    for (const place of ['inside_pipe_upstream', 'inside_pipe_downstream', 'work_area']) await gasTest(id, when, clean, place);
  };
  const confirmChecklist = async (id: string, who: CallerContext, list: 'checklist' | 'walkdown') => {
    const p = (await findPermit(sequelize, tenantId, id))!;
    for (const item of p[list]) await updateChecklist(deps, who, id, list, item.key, true);
  };
  const clean = { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 };

  // 1. Returned to service last week: sleeve repair at MP 11.4, the whole trail.
  const weekAgo = new Date(now.getTime() - 7 * 24 * HOUR);
  const done = await request({ kinds: ['hot_work'], title: 'Install a full-encirclement sleeve at MP 11.4', jobReference: 'BM-DEMO-0411', pipelineId: bm10.id, fromPosition: 11.39, toPosition: 11.41, hazards: 'Refined product vapour; hot work on a drained line.', scope: 'Weld a full-encirclement sleeve over a gouge found by the in-line inspection.', methodStatement: 'Isolate between CR-BV-098 and CR-BV-149, drain, vent, plug both sides, weld the sleeve, test, restore.' }, weekAgo, 14);
  await planCut(done, 11.39, 11.41);
  await move(lead, done, 'submit');
  at(new Date(weekAgo.getTime() - HOUR));
  await move(authoriser, done, 'approve');
  await move(lead, done, 'accept');
  let t = await proveAndSign(done, await isolate(done, new Date(weekAgo.getTime() + 10 * MIN)));
  at(t);
  await confirmChecklist(done, lead, 'checklist');
  await readyToStart(done, t);
  await move(lead, done, 'start_work');
  for (let k = 1; k <= 8; k++) await gasTest(done, new Date(t.getTime() + k * 30 * MIN), clean);
  // The crew checks the vents and plugs every half hour while the sleeve is welded, each check in the audit trail.
  for (let k = 1; k <= 8; k++) {
    for (const step of (await listSteps(sequelize, tenantId, done)).filter((s) => s.kind === 'vent' || s.kind === 'plug')) {
      const checkedAt = new Date(t.getTime() + k * 30 * MIN - 5 * MIN);
      at(checkedAt);
      const common = { checkedAt: checkedAt.toISOString(), isolationStepId: step.id };
      await recordCheck(deps, tech, done, step.kind === 'vent' ? { kind: 'vent', ...common, vapourAwayFromWork: true, pressureBuilding: false } : { kind: 'plug', ...common, face: 'intact' });
    }
  }
  at(new Date(t.getTime() + 4 * HOUR));
  await recordHotWorkStopped(deps, lead, done);
  await passingCheck(done, new Date(t.getTime() + 5 * HOUR + 2 * MIN), 'fire_watch');
  at(new Date(t.getTime() + 5 * HOUR + 5 * MIN));
  await move(lead, done, 'hand_back');
  t = new Date(t.getTime() + 5 * HOUR + 10 * MIN);
  for (const step of (await listSteps(sequelize, tenantId, done)).filter((s) => s.status !== 'removed').sort((a, b) => +new Date(b.appliedAt!) - +new Date(a.appliedAt!))) {
    at((t = new Date(t.getTime() + 4 * MIN)));
    await removeStep(deps, tech, done, step.id, step.kind === 'plug' ? { plugOutcome: 'displaced_by_product' } : {});
    await acknowledgeStep(deps, control, done, step.id, { what: 'removed' });
  }
  await confirmChecklist(done, authoriser, 'walkdown');
  at(new Date(t.getTime() + 10 * MIN));
  await move(authoriser, done, 'return_to_service');

  // 2. Live: the cut-out at MP 17.3, isolated between CR-BV-149 and CR-BV-197, gas tests every 30 min, the next one due in about ten minutes.
  const liveStart = new Date(now.getTime() - 4 * HOUR);
  const live = await request({ kinds: ['hot_work'], title: 'Cut out and replace dented 12 ft section at MP 17.3', jobReference: 'BM-DEMO-1730', pipelineId: bm10.id, fromPosition: 17.299, toPosition: 17.301, fireWatchPerson: 'Tam Okafor (Oxbow)', hazards: 'Refined product vapour in the open pipe; hot work; pipe under residual stress at the dent.', scope: 'Cut out the dented section and weld in a pre-tested 12 ft pup.', methodStatement: 'Close and lock CR-BV-149 and CR-BV-197, drain at CR-DR-151 and CR-DR-195, open vents CR-VT-150 and CR-VT-196, cold-cut, build a mud plug each side, test, weld, inspect, restore.' }, liveStart, 12);
  await planCut(live, 17.299, 17.301);
  await move(lead, live, 'submit');
  at(new Date(liveStart.getTime() - HOUR));
  await move(authoriser, live, 'approve');
  await move(lead, live, 'accept');
  t = await proveAndSign(live, await isolate(live, liveStart));
  at(t);
  await confirmChecklist(live, lead, 'checklist');
  await readyToStart(live, t);
  await move(lead, live, 'start_work');
  // Not overdue: the scheduler would suspend live hot work with an overdue repeat test on its first tick; the page shows a countdown instead.
  const { gasTestIntervalMinutes } = (await findPermit(sequelize, tenantId, live))!;
  const lastTest = now.getTime() - (gasTestIntervalMinutes - 10) * MIN;
  for (let when = t.getTime() + gasTestIntervalMinutes * MIN; when < lastTest; when += gasTestIntervalMinutes * MIN) await gasTest(live, new Date(when), { ...clean, coPpm: 2 });
  await gasTest(live, new Date(lastTest), { ...clean, coPpm: 2 });

  // 3. A second permit sharing CR-BV-149 (group lockout): coupon change between CR-BV-098 and CR-BV-149, isolated.
  const shareStart = new Date(now.getTime() - 2 * HOUR);
  const shared = await request({ kinds: ['cold_work'], title: 'Replace corrosion coupon at MP 12.6', jobReference: 'BM-DEMO-1260', pipelineId: bm10.id, fromPosition: 12.6, toPosition: 12.6, hazards: 'Residual product at the fitting.' }, shareStart, 10);
  {
    const p = (await findPermit(sequelize, tenantId, shared))!;
    // The two valves either side, and the vent between them where the section is proved dead.
    const points = await sequelize.query<{ id: string; tag_code: string; kind: 'block_valve' | 'vent' }>(
      `SELECT id, tag_code, kind FROM isolation_points WHERE tenant_id = :tenantId AND tag_code IN ('CR-BV-098','CR-BV-149','CR-VT-099') ORDER BY kind, tag_code`,
      { replacements: { tenantId }, type: QueryTypes.SELECT },
    );
    await savePlan(deps, lead, shared, { version: p.version, steps: points.map((pt) => ({ pointId: pt.id, kind: pt.kind })) });
  }
  await move(lead, shared, 'submit');
  at(new Date(shareStart.getTime() - HOUR));
  await move(authoriser2, shared, 'approve');
  await move(lead, shared, 'accept');
  await proveAndSign(shared, await isolate(shared, shareStart), authoriser2);

  // 4. Suspended after a high flammable reading: weld repair on a stopple fitting on BM-16.
  const suspStart = new Date(now.getTime() - 3 * HOUR);
  const susp = await request({ kinds: ['hot_work'], title: 'Weld repair on a stopple fitting at MP 8.2', jobReference: 'BM-DEMO-0820', pipelineId: bm16.id, fromPosition: 8.19, toPosition: 8.21, hazards: 'Crude oil vapour; hot work.' }, suspStart, 10);
  await planCut(susp, 8.19, 8.21);
  await move(lead, susp, 'submit');
  at(new Date(suspStart.getTime() - HOUR));
  await move(authoriser, susp, 'approve');
  await move(lead, susp, 'accept');
  t = await proveAndSign(susp, await isolate(susp, suspStart));
  at(t);
  await confirmChecklist(susp, lead, 'checklist');
  await readyToStart(susp, t);
  await move(lead, susp, 'start_work');
  const failAt = new Date(now.getTime() - 35 * MIN);
  at(failAt);
  const high = { o2Pct: 20.8, lelPct: 14, h2sPpm: 0, coPpm: 3 };
  await gasTest(susp, failAt, high, 'work_area');
  await applyTransition(deps, (await findPermit(sequelize, tenantId, susp, { lock: true }))!, 'suspend', { reason: 'Gas test failed: flammable 14 %LEL at the work area, above the 0 %LEL hot-work limit.' }, { system: 'gas test' });

  // 5. Approved but not accepted yet; 6. requested and waiting for approval.
  at(new Date(now.getTime() - 90 * MIN));
  const approved = await request({ kinds: ['excavation', 'cold_work'], title: 'Dig and recoat at MP 31.0', jobReference: 'BM-DEMO-3100', pipelineId: bm16.id, fromPosition: 30.95, toPosition: 31.05, hazards: 'Excavation beside a live crude line.' }, new Date(now.getTime() + 20 * HOUR), 10);
  await move(lead, approved, 'submit');
  await move(authoriser, approved, 'approve');
  at(new Date(now.getTime() - 30 * MIN));
  const requested = await request({ kinds: ['cold_work'], title: 'Replace vent valve at CR-VT-253', jobReference: 'BM-DEMO-2530', pipelineId: bm10.id, fromPosition: 25.3, toPosition: 25.3, hazards: 'Trapped pressure at the vent.' }, new Date(now.getTime() + 26 * HOUR), 8);
  await move(lead, requested, 'submit');

  // 7. Isolation certificates (HSE HSG253, HSG250): a coating inspection inside the live cut-out's isolated section relies on its
  //    certificate instead of isolating again, so one certificate is shared by two permits; and the coupon change's isolation
  //    is kept long-term until the replacement fitting arrives, its first re-check due in a week.
  const certificateOf = async (permitId: string) =>
    (await sequelize.query<{ id: string }>(`SELECT certificate_id AS id FROM certificate_permits WHERE tenant_id = :tenantId AND permit_id = :permitId AND released_at IS NULL`, {
      replacements: { tenantId, permitId },
      type: QueryTypes.SELECT,
    }))[0].id;
  at(new Date(now.getTime() - 20 * MIN));
  const inside = await request({ kinds: ['cold_work'], title: 'Inspect and recoat the line at MP 18.4', jobReference: 'BM-DEMO-1840', pipelineId: bm10.id, fromPosition: 18.4, toPosition: 18.42, hazards: 'Residual product in the isolated section.' }, new Date(now.getTime() + 3 * HOUR), 8);
  await linkPermit(deps, lead, inside, { certificateId: await certificateOf(live) });
  await move(lead, inside, 'submit');
  at(new Date(now.getTime() - 10 * MIN));
  await markLongTerm(deps, authoriser2, await certificateOf(shared), { reason: 'BM-10 stays isolated between CR-BV-098 and CR-BV-149 until the replacement coupon fitting arrives.' });

  // Demo history should not fill the mailbox on first start.
  await sequelize.query(`DELETE FROM mail_outbox WHERE status = 'pending' AND tenant_id = :tenantId`, { replacements: { tenantId } });
};
