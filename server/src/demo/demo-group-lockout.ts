import { QueryTypes } from 'sequelize';
import { defineAbilityFor } from '@shared/abilities/define-ability';
import { mudPlug } from '@shared/calc';
import { signedEvents, type PermitEvent } from '@shared/permit/state-machine';
import { createLogger } from '../lib/logger';
import { ManualClock } from '../lib/clock';
import { loadActor } from '../lib/actor';
import type { CallerContext } from '../lib/caller';
import type { AppDeps } from '../deps';
import type { Config } from '../config/env';
import { createPermit, transitionPermit } from '../modules/permits/permits.service';
import { findPermit } from '../modules/permits/permits.repository';
import { proposePlan, savePlan } from '../modules/isolations/isolation-plan.service';
import { acknowledgeStep, applyStep, verifyStep } from '../modules/isolations/isolation-steps.service';
import { listSteps } from '../modules/isolations/isolation-queries';
import { endProving, startProving } from '../modules/isolations/isolation-proving.service';
import { loadTenantSettings } from '../modules/tenants/tenant-settings';
import { signOn } from '../modules/crew/crew.service';
import { DEMO_PASSWORD } from './demo-people';
import type { DemoSeeder } from './registry';

const MIN = 60_000;
const HOUR = 60 * MIN;

/** The personal locks of Harlow Ridge's crew of three, in the order they sign on. */
export const demoCrewLocks = [
  { email: 'hr-lead@oxbow-repair.example', lock: 'PL-HR-01' },
  { email: 'hr-tech@oxbow-repair.example', lock: 'PL-HR-02' },
  { email: 'hr-tech2@oxbow-repair.example', lock: 'PL-HR-03' },
];

/**
 * Group lockout per person (OSHA 29 CFR 1910.147(f)(3)(ii)(D)) is a per-tenant setting, so the demo
 * shows it at Harlow Ridge Gas, kept apart from Bramblecote's one-crew-lock-per-permit job: an
 * insulating-joint change on HR-8, isolated and proved through the real services, with a crew of
 * three signed on to its lockbox, each with their own personal lock.
 */
export const seedGroupLockout: DemoSeeder = async (sequelize, ids) => {
  const tenantId = ids.tenants.harlowridge;
  const exists = await sequelize.query(`SELECT 1 FROM permits WHERE tenant_id = :tenantId AND job_reference LIKE 'HR-DEMO-%' LIMIT 1`, { replacements: { tenantId }, type: QueryTypes.SELECT });
  if (exists.length) return;
  await sequelize.query(`UPDATE tenants SET settings = coalesce(settings, '{}'::jsonb) || '{"groupLockout":"per_person"}'::jsonb WHERE id = :tenantId`, { replacements: { tenantId } });

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
  const lead = await as('hr-lead@oxbow-repair.example');
  const tech = await as('hr-tech@oxbow-repair.example');
  const tech2 = await as('hr-tech2@oxbow-repair.example');
  const authoriser = await as('authoriser@harlowridge.example');
  const control = await as('control@harlowridge.example');
  const at = (t: number) => clock.set(new Date(t));
  const move = async (who: CallerContext, id: string, event: PermitEvent) => {
    const p = (await findPermit(sequelize, tenantId, id))!;
    const signed = signedEvents.includes(event) ? { password: DEMO_PASSWORD, signedName: who.user.name } : {};
    return transitionPermit(deps, who, id, { event, version: p.version, ...signed });
  };
  const [hr8] = await sequelize.query<{ id: string }>(`SELECT id FROM pipelines WHERE tenant_id = :tenantId AND code = 'HR-8'`, { replacements: { tenantId }, type: QueryTypes.SELECT });
  const locks = await sequelize.query<{ id: string }>(`SELECT id FROM locks WHERE tenant_id = :tenantId AND state = 'in_store' ORDER BY number`, { replacements: { tenantId }, type: QueryTypes.SELECT });
  const tags = await sequelize.query<{ id: string }>(`SELECT id FROM tags WHERE tenant_id = :tenantId AND state = 'in_store' ORDER BY number`, { replacements: { tenantId }, type: QueryTypes.SELECT });

  const start = now.getTime() - 3 * HOUR;
  at(start - 2 * HOUR);
  const { id } = await createPermit(deps, lead, {
    kinds: ['cold_work'], title: 'Replace the insulating joint at km 12.1', jobReference: 'HR-DEMO-1210', pipelineId: hr8.id, fromPosition: 12.09, toPosition: 12.11,
    hazards: 'Residual natural gas in the blown-down section.', scope: 'Cut out the leaking insulating joint and bolt in a new one.',
    methodStatement: 'Close and lock JF-BV-072 and JF-BV-186, blow down at JF-VT-073 and JF-VT-185, prove the section dead, each of the crew puts a personal lock on the lockbox, change the joint.',
    ppe: ['FR coveralls', 'Hard hat', 'Safety glasses', 'Gloves'], fireWatchMinutes: 60, contractorOrganisationId: ids.organisations.harlowridge.oxbow,
    validFrom: new Date(start).toISOString(), validTo: new Date(start + 10 * HOUR).toISOString(),
  } as never);
  const proposal = await proposePlan(deps, lead, id, 12.09, 12.11);
  await savePlan(deps, lead, id, { version: (await findPermit(sequelize, tenantId, id))!.version, steps: proposal.steps.map(({ label: _l, position: _p, ...s }) => s) });
  await move(lead, id, 'submit');
  at(start - HOUR);
  await move(authoriser, id, 'approve');
  await move(lead, id, 'accept');

  let t = start;
  let nextLock = 0;
  for (const step of await listSteps(sequelize, tenantId, id)) {
    at((t += 6 * MIN));
    const plug = step.kind === 'plug' ? mudPlug({ diameterIn: step.plugDiameterIn ?? 8 }) : null;
    const asBuilt = plug && { bentoniteLb: Math.round(plug.mudLb * 5.15) / 10, waterLb: Math.round(plug.mudLb * 5.15) / 10, lengthIn: Math.ceil(plug.plugLengthIn * 2) / 2 };
    await applyStep(deps, tech, id, step.id, {
      ...(step.kind === 'block_valve' || step.kind === 'isolator' ? { lockId: locks[nextLock].id, tagId: tags[nextLock++].id } : {}),
      ...(asBuilt ? { asBuilt } : {}),
    });
    if (step.remotelyOperable) await acknowledgeStep(deps, control, id, step.id, { what: 'remote_inhibited' });
    at((t += 3 * MIN));
    await verifyStep(deps, tech2, id, step.id, asBuilt ? { method: 'plug_length', reading: asBuilt.lengthIn, unit: 'in' } : { method: step.kind === 'block_valve' ? 'try_out' : 'position_checked' });
    await acknowledgeStep(deps, control, id, step.id, { what: 'applied' });
  }
  // Proved dead at the first blowdown by the technician who applied none of the valves (HSE HSG253), then signed in place (HSE HSG250).
  const { provingHoldMinutes } = await loadTenantSettings(sequelize, tenantId);
  const bleed = (await listSteps(sequelize, tenantId, id)).find((s) => s.kind === 'vent' || s.kind === 'drain')!;
  at((t += 2 * MIN));
  const test = await startProving(deps, tech2, id, { stepId: bleed.id, reading: 0, unit: 'psig' });
  at((t += provingHoldMinutes * MIN));
  await endProving(deps, tech2, id, test.id, { reading: 0 });
  at((t += 2 * MIN));
  await move(authoriser, id, 'confirm_isolated');

  // The crew of three each put a personal lock on the permit's lockbox.
  for (const { email, lock } of demoCrewLocks) {
    at((t += 4 * MIN));
    await signOn(deps, await as(email), id, { personalLockNumber: lock });
  }
  await sequelize.query(`DELETE FROM mail_outbox WHERE status = 'pending' AND tenant_id = :tenantId`, { replacements: { tenantId } });
};
