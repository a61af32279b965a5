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
    };
  });
}
