import { subject } from '@casl/ability';
import { checkKindLabels, plugFaceLabels, type CheckKind } from '@shared/schemas/timed-checks.schema';
import type { CheckRow } from '@shared/types/timed-checks';
import { formatInZone } from '@shared/time/zone';
import { workUnderWayStates } from '@shared/permit/states';
import { offeredCheckKinds } from '@shared/gas-tests/check-kinds';
import { useAbility } from '@client/lib/ability';
import { Card, EmptyState, Loading } from '@client/components/ui/page';
import { EnteredLate } from '@client/components/ui/entered-late';
import { useChecks, usePlanSteps } from '../api/checks';
import { useRegime } from '../api/get-regime';
import { useSiteTimeZone } from '../lib/site-time';
import { scopeOf, workOpen, type PermitLike } from '../lib/permit-like';
import { DueList } from './due-list';
import { CheckForm } from './check-form';
import { FireWatchBasis, StopWorkBlockers } from './stop-work-panel';

function describe(c: CheckRow): string {
  const o = c.observation as Record<string, unknown>;
  if (c.kind === 'vent') {
    const pressure = o.pressureReading !== null && o.pressureReading !== undefined ? `, ${o.pressureReading} ${o.pressureUnit}` : '';
    return `${o.vapourAwayFromWork ? 'Vapour away from the work' : 'Vapour toward the work'}; ${o.pressureBuilding ? 'pressure building' : 'no pressure building'}${pressure}`;
  }
  if (c.kind === 'plug') return plugFaceLabels[o.face as keyof typeof plugFaceLabels] ?? String(o.face);
  return o.observation === 'clear' ? 'Area clear, nothing smouldering' : 'Hot spot or smouldering found';
}

/** Vent, plug and fire-watch checks of one permit: what is due, recording a check, and the latest ones. */
export function ChecksSection({ permit }: { permit: PermitLike }) {
  const ability = useAbility();
  const timeZone = useSiteTimeZone();
  const regime = useRegime(permit.id);
  const checks = useChecks(permit.id);
  const steps = usePlanSteps(permit.id);
  const kinds: CheckKind[] = offeredCheckKinds(steps.data ?? [], permit.kinds.includes('hot_work') && workUnderWayStates.includes(permit.state));
  const canRecord = ability.can('record', subject('Check', scopeOf(permit))) && workOpen(permit);

  return (
    <Card className="flex min-w-0 flex-col gap-4">
      <h2 className="text-xl font-bold text-brand-strong">Vent, plug and fire-watch checks</h2>
      <div className="flex flex-col gap-2">
        <h3 className="text-lg font-semibold">Next due</h3>
        {regime.data ? <DueList due={regime.data.due} kinds={['vent', 'plug', 'fire_watch']} timeZone={timeZone} testId="checks-due-list" /> : <Loading />}
        {regime.data?.fireWatchEndsAt ? (
          <p className="text-sm">
            Fire watch ({regime.data.fireWatchMinutes} minutes after hot work stopped) may end at <strong>{formatInZone(regime.data.fireWatchEndsAt, timeZone, 'dayTime')}</strong>; hand-back waits for it and for the fire watcher&apos;s closing check after it (area clear, nothing smouldering).
          </p>
        ) : null}
      </div>
      {regime.data?.stopWork.failedChecks.length ? (
        <ul className="flex flex-col gap-1 text-sm" data-testid="failed-checks">
          {regime.data.stopWork.failedChecks.map((c) => (
            <li key={c} className="rounded-card border-l-4 border-danger bg-danger-soft px-3 py-1 font-semibold">
              {c}. Work stays stopped until a later check of it finds it right.
            </li>
          ))}
        </ul>
      ) : null}
      {regime.data ? <StopWorkBlockers r={regime.data} /> : null}
      {regime.data && permit.kinds.includes('hot_work') ? <FireWatchBasis r={regime.data} /> : null}
      {canRecord && kinds.length ? <CheckForm permitId={permit.id} kinds={kinds} timeZone={timeZone} /> : null}
      <h3 className="text-lg font-semibold">Latest checks</h3>
      {checks.isPending ? (
        <Loading />
      ) : !checks.data?.items.length ? (
        <EmptyState title="No check recorded yet." />
      ) : (
        <ul className="flex flex-col gap-2" data-testid="checks-list">
          {checks.data.items.map((c) => (
            <li key={c.id} className={`rounded-card border-l-4 px-3 py-2 text-sm ${c.ok ? 'border-safe bg-safe-soft' : 'border-danger bg-danger-soft'}`} data-testid="check-row">
              <p className="font-semibold">
                <span aria-hidden>{c.ok ? '✓ ' : '✕ '}</span>
                {checkKindLabels[c.kind]}
                {c.stepLabel ? ` ${c.stepLabel}` : ''} · {formatInZone(c.checkedAt, timeZone, 'dayTime')}
                {c.enteredLate ? <EnteredLate /> : null} · {c.recordedByName}
              </p>
              <p>{describe(c)}</p>
              {c.actionTaken ? <p>Action taken: {c.actionTaken}</p> : null}
              {c.notes ? <p className="text-ink-soft">{c.notes}</p> : null}
            </li>
          ))}
        </ul>
      )}
    </Card>
  );
}
