import { QueryTypes } from 'sequelize';
import { assessAtmosphere, type AtmosphereAssessment } from '@shared/calc';
import { assessOptionsFor, checkPermitLimitRequest, permitLimits } from '@shared/gas-tests/permit-limits';
import { instrumentStatus } from '@shared/gas-tests/instrument-status';
import { failureSummary } from '@shared/gas-tests/verdict-text';
import { assessVentOutlet } from '@shared/gas-tests/vent-outlet';
import { formatInZone } from '@shared/time/zone';
import { gasTestPlaceLabels, type GasTestData, type GasTestPlace, type GasTestPurpose, type PermitGasLimitsInput } from '@shared/schemas/gas-tests.schema';
import type { GasTestResult } from '@shared/types/gas-tests';
import { editableStates, limitsFixedStates, liveStates, workUnderWayStates } from '@shared/permit/states';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { appendAudit } from '../audit/audit.service';
import { qualificationOnSiteDay } from '../../lib/qualifications';
import { loadTenantSettings } from '../tenants/tenant-settings';
import { tenantAtmosphereLimits } from '../../lib/atmosphere-limits';
import { notifyChange } from '../isolations/isolation-queries';
import { auditActor, type CallerContext } from '../../lib/caller';
import { applyTransition } from '../permits/permits.service';
import { recordPermitEditor } from '../permits/permit-editors';
import type { PermitRow } from '../permits/permits.repository';
import { findGasTest, limitsForPermit, listGasTests, resolveOverdue } from './gas-tests.repository';
import { findInstrument, type InstrumentRecord } from './instruments.service';
import { checkObservedTime, observationBounds } from '../permits/observed-time';
import { permitFor, requireWorkOpen } from './permit-access';

export async function listGasTestsFor(deps: AppDeps, caller: CallerContext, permitId: string, q: { page: number; pageSize: number; dir: 'asc' | 'desc' }) {
  return withTenant(deps.sequelize, caller.actor.tenantId, async () => {
    await permitFor(deps, caller, permitId, { action: 'read', type: 'GasTest', what: 'gas tests of this permit' });
    return listGasTests(deps.sequelize, caller.actor.tenantId, permitId, q);
  });
}

/** The tester must hold an in-date gas tester qualification on the site day of the test. */
export async function requireGasTester(deps: AppDeps, caller: CallerContext, on: Date) {
  const { held, day } = await qualificationOnSiteDay(deps.sequelize, caller.actor.tenantId, caller.user.id, 'gas_tester', on);
  if (!held)
    throw AppError.unprocessable(`${caller.user.name} holds no in-date gas tester qualification for ${day}; only a qualified gas tester may record a gas test.`, [
      { path: 'tester', message: 'An in-date gas tester qualification is needed.' },
    ]);
}

/** The instrument must be registered in the tenant and fit for use at that time. */
export async function usableInstrument(
  deps: AppDeps,
  tenantId: string,
  id: string,
  at: Date,
  known?: Pick<Awaited<ReturnType<typeof loadTenantSettings>>, 'timeZone' | 'requireDailyBumpTest'>,
): Promise<InstrumentRecord> {
  const inst = await findInstrument(deps.sequelize, tenantId, id);
  if (!inst) throw AppError.validation('Choose an instrument from the register.', [{ path: 'instrumentId', message: 'No such instrument in this tenant.' }]);
  const settings = known ?? (await loadTenantSettings(deps.sequelize, tenantId));
  const status = instrumentStatus(inst, at, settings.timeZone, settings.requireDailyBumpTest);
  if (!status.usable) throw AppError.unprocessable(status.reasons.join(' '), status.reasons.map((message) => ({ path: 'instrumentId', message })));
  return inst;
}

/**
 * A failing reading during live work stops the work: Holdpoint suspends the permit itself, naming
 * the reading in the audit reason; resuming needs a new passing test (the guard of 'resume').
 */
export async function suspendForFailure(deps: AppDeps, permit: PermitRow, assessment: AtmosphereAssessment, where: { place: GasTestPlace; testedAt: Date; tester: string; timeZone: string }) {
  // The reason is read on screens and paper as it is: the site's time with its zone, as everywhere else.
  const when = formatInZone(where.testedAt, where.timeZone);
  const reason = `Gas test failed: ${failureSummary(assessment)} (${gasTestPlaceLabels[where.place].toLowerCase()}, ${where.tester}, ${when}).`;
  return applyTransition(deps, permit, 'suspend', { reason }, { system: 'failing gas test' });
}

export async function recordGasTest(deps: AppDeps, caller: CallerContext, permitId: string, input: GasTestData): Promise<GasTestResult<Date>> {
  const { tenantId } = caller.actor;
  const testedAt = new Date(input.testedAt);
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = await permitFor(deps, caller, permitId, { action: 'create', type: 'GasTest', what: 'gas tests' }, { lock: true });
    requireWorkOpen(permit, 'Gas tests');
    const bounds = await observationBounds(deps, permit);
    const { enteredLate } = checkObservedTime(bounds, testedAt, 'testedAt');
    await requireGasTester(deps, caller, testedAt);
    const instrument = await usableInstrument(deps, tenantId, input.instrumentId, testedAt, bounds.settings);
    const { limits } = await limitsForPermit(deps.sequelize, permit);
    const { others, ...gases } = input.readings;
    // A vent outlet carries vapour by design: its flammable reading has its own limit, never the hot-work one.
    const assessment = input.place === 'vent_outlet' ? assessVentOutlet(gases, limits, bounds.settings.ventOutletLelPct) : assessAtmosphere(gases, limits, assessOptionsFor(permit.kinds));
    const purpose: GasTestPurpose = input.purpose ?? (workUnderWayStates.includes(permit.state) ? 'repeat' : 'before_work');
    const now = deps.clock.now();
    const [{ id }] = await deps.sequelize.query<{ id: string }>(
      `INSERT INTO gas_tests (tenant_id, permit_id, tester_user_id, instrument_id, place, place_note, purpose, tested_at, readings, verdict, assessment, source, notes, entered_late, created_at)
       VALUES (:tenantId, :permitId, :tester, :instrumentId, :place, :placeNote, :purpose, :testedAt, CAST(:readings AS jsonb), :verdict, CAST(:assessment AS jsonb), 'manual', :notes, :enteredLate, :now)
       RETURNING id`,
      {
        replacements: {
          tenantId, permitId, tester: caller.user.id, instrumentId: instrument.id, place: input.place, placeNote: input.placeNote ?? null, purpose, testedAt,
          readings: JSON.stringify({ ...gases, ...(others?.length ? { others } : {}) }), verdict: assessment.verdict, assessment: JSON.stringify(assessment), notes: input.notes ?? null, enteredLate, now,
        },
        type: QueryTypes.SELECT,
      },
    );
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'gas_test', entityId: id, permitId, action: 'gas_test_recorded', actor: auditActor(caller, 'create'), ip: caller.ip,
      reason: assessment.verdict === 'fail' ? failureSummary(assessment) : null,
      data: {
        verdict: assessment.verdict, place: input.place, purpose, testedAt: testedAt.toISOString(), readings: gases, instrument: `${instrument.model} ${instrument.serial}`,
        ...(enteredLate ? { enteredLate } : {}),
      },
      occurredAt: now,
    });
    let state = permit.state;
    if (assessment.verdict === 'pass') await resolveOverdue(deps.sequelize, tenantId, permitId, 'gas_test', now);
    if (assessment.verdict === 'fail' && liveStates.includes(permit.state)) {
      state = (await suspendForFailure(deps, permit, assessment, { place: input.place, testedAt, tester: caller.user.name, timeZone: bounds.timeZone })).state;
    } else await notifyChange(deps.sequelize, { tenantId, kind: 'gas_test', id: permitId, verdict: assessment.verdict });
    return { test: await findGasTest(deps.sequelize, tenantId, id), verdict: assessment.verdict, assessment, permitState: state, suspended: state !== permit.state };
  });
}

/**
 * Sets the permit's own limits. A draft may tighten anything down from the tenant's limits; once
 * issued a permit's limits may only be tightened further, never relaxed.
 */
export async function setPermitLimits(deps: AppDeps, caller: CallerContext, permitId: string, input: PermitGasLimitsInput) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = await permitFor(deps, caller, permitId, { action: 'update', type: 'Permit', what: 'permit' }, { lock: true });
    if (limitsFixedStates.includes(permit.state)) throw AppError.unprocessable('The limits of a finished permit cannot change.');
    const { limits: tenant } = await tenantAtmosphereLimits(deps.sequelize, tenantId);
    const current = await limitsForPermit(deps.sequelize, permit);
    const floor = editableStates.includes(permit.state) ? tenant : current.limits;
    checkPermitLimitRequest(tenant, floor, input, permit.number);
    const empty = Object.values(input).every((v) => !v || Object.values(v).every((x) => x === undefined));
    const now = deps.clock.now();
    await deps.sequelize.query(`UPDATE permits SET gas_limits = CAST(:limits AS jsonb), version = version + 1, updated_at = :now WHERE tenant_id = :tenantId AND id = :id`, {
      replacements: { limits: empty ? null : JSON.stringify(input), now, tenantId, id: permitId },
    });
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'permit', entityId: permitId, permitId, action: 'gas_limits_set', actor: auditActor(caller, 'update'), ip: caller.ip, data: { limits: input }, occurredAt: now,
    });
    // A draft's limits are part of what the authoriser approves; later they can only be tightened.
    if (editableStates.includes(permit.state)) await recordPermitEditor(deps.sequelize, tenantId, permitId, caller.user.id, now);
    return { limits: permitLimits(tenant, empty ? null : input, permit.number), hotWork: current.hotWork, permitRequest: empty ? null : input };
  });
}
