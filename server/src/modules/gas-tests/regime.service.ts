import { dueTimes, nextDue, timedCheckLabels, type DueTime } from '@shared/permit/due-times';
import { fireWatchEnd } from '@shared/calc';
import type { DueTimeView, PermitRegime } from '@shared/types/timed-checks';
import type { TenantSettings } from '@shared/schemas/tenant-settings.schema';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import type { CallerContext } from '../../lib/caller';
import { dueFactsFor, gasHistory, limitsForPermit } from './gas-tests.repository';
import { loadTenantSettings } from '../tenants/tenant-settings';
import { permitFor } from './permit-access';
import { gasTestPlaceLabels, gasTestPlaces } from '@shared/schemas/gas-tests.schema';
import { requiredGasPlaces, stopWorkGaps, unresolvedGasPlaces } from '@shared/permit/stop-work';
import { isolationCheckStates } from '@shared/permit/states';
import { loadStopWorkFacts } from '../permits/stop-work-facts';

const iso = (d: Date | null) => (d ? d.toISOString() : null);

function intervalOf(t: DueTime, gasInterval: number, s: TenantSettings): number | null {
  return t.kind === 'gas_test' ? gasInterval : t.kind === 'vent' ? s.ventCheckIntervalMinutes : t.kind === 'plug' ? s.plugCheckIntervalMinutes : null;
}

/** The gas-test regime of one permit: limits, what has been done, and what is due when. */
export async function regimeFor(deps: AppDeps, caller: CallerContext, permitId: string): Promise<PermitRegime> {
  return withTenant(deps.sequelize, caller.actor.tenantId, async () => {
    const permit = await permitFor(deps, caller, permitId, { action: 'read', type: 'GasTest', what: 'gas tests of this permit' });
    const settings = await loadTenantSettings(deps.sequelize, permit.tenantId);
    const now = deps.clock.now();
    const limits = await limitsForPermit(deps.sequelize, permit);
    const history = await gasHistory(deps.sequelize, permit.tenantId, permit.id);
    const times = dueTimes(await dueFactsFor(deps.sequelize, permit, settings), now);
    const view = (t: DueTime): DueTimeView => ({ kind: t.kind, label: timedCheckLabels[t.kind], dueAt: iso(t.dueAt), overdue: t.overdue, minutesOverdue: t.minutesOverdue, intervalMinutes: intervalOf(t, permit.gasTestIntervalMinutes, settings) });
    const next = nextDue(times);
    const sw = await loadStopWorkFacts(deps.sequelize, permit.tenantId, permit.id);
    const required = requiredGasPlaces(sw.plugSides);
    const failing = unresolvedGasPlaces(sw.gasPlaces);
    return {
      ...limits,
      permitId: permit.id,
      state: permit.state,
      holder: permit.holderUserId ? { userId: permit.holderUserId, name: permit.holderName ?? '' } : null,
      gasTestWindowMinutes: permit.gasTestWindowMinutes,
      gasTestIntervalMinutes: permit.gasTestIntervalMinutes,
      fireWatchMinutes: permit.fireWatchMinutes,
      fireWatchEndsAt: permit.kinds.includes('hot_work') && permit.hotWorkEndedAt ? fireWatchEnd(new Date(permit.hotWorkEndedAt), permit.fireWatchMinutes).toISOString() : null,
      tests: { beforeCleaning: iso(history.beforeCleaningAt), beforeWork: iso(history.beforeWorkAt), lastPass: iso(history.lastPassAt), lastFail: iso(history.lastFailAt) },
      due: times.map(view),
      nextDue: next ? view(next) : null,
      requireDailyBumpTest: settings.requireDailyBumpTest,
      timeZone: settings.timeZone,
      stopWork: {
        places: gasTestPlaces
          .filter((place) => required.includes(place) || sw.gasPlaces.some((g) => g.place === place))
          .map((place) => {
            const g = sw.gasPlaces.find((x) => x.place === place);
            return {
              place, label: gasTestPlaceLabels[place], required: required.includes(place), latest: g ? (failing.includes(place) ? 'fail' : 'pass') : null,
              lastPassAt: iso(g?.lastPassAt ?? null), lastFailAt: iso(g?.lastFailAt ?? null),
            };
          }),
        failedChecks: sw.failedChecks,
        // What the start and resume guards will say of these rules, while the isolations are in place.
        blockers: isolationCheckStates.includes(permit.state) ? stopWorkGaps(sw, permit.gasTestWindowMinutes, now) : [],
        fireWatchBasis: settings.fireWatchBasis,
        ventOutletLelPct: settings.ventOutletLelPct,
      },
    };
  });
}
