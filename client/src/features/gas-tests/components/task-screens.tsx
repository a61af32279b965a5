import { subject } from '@casl/ability';
import { workUnderWayStates, liveStates } from '@shared/permit/states';
import { offeredCheckKinds } from '@shared/gas-tests/check-kinds';
import { checkKindLabels, type CheckKind } from '@shared/schemas/timed-checks.schema';
import { useAbility } from '@client/lib/ability';
import { Notice } from '@client/components/ui/notice';
import { Loading } from '@client/components/ui/page';
import { useRegime } from '../api/get-regime';
import { usePlanSteps } from '../api/checks';
import { useSiteTimeZone } from '../lib/site-time';
import { scopeOf, workOpen, type PermitLike } from '../lib/permit-like';
import { DueList } from './due-list';
import { RecordGasTestForm } from './record-gas-test-form';
import { CheckForm } from './check-form';
import { StopWorkBlockers } from './stop-work-panel';

/** The timed tasks this person may record on the permit now: a gas test, and which checks. */
export function useGasTaskOffers(permit: PermitLike): { gasTest: boolean; checks: CheckKind[] } {
  const ability = useAbility();
  const steps = usePlanSteps(permit.id);
  const open = workOpen(permit);
  const gasTest = open && ability.can('create', subject('GasTest', scopeOf(permit)));
  const mayCheck = open && ability.can('record', subject('Check', scopeOf(permit)));
  const checks = mayCheck ? offeredCheckKinds(steps.data ?? [], permit.kinds.includes('hot_work') && workUnderWayStates.includes(permit.state)) : [];
  return { gasTest, checks };
}

/** What falls due next on a live permit (gas tests and checks), with a countdown each. */
export function DueNext({ permit }: { permit: PermitLike }) {
  const regime = useRegime(permit.id);
  if (!liveStates.includes(permit.state)) return null;
  if (regime.isPending) return <Loading label="Loading what is due…" />;
  if (regime.isError) return <Notice tone="danger">{regime.error.message}</Notice>;
  return <DueList due={regime.data.due} timeZone={regime.data.timeZone} testId="summary-due-list" />;
}

/** The gas-test task screen's body: the form against this permit's limits, submit at the bottom of the screen. */
export function GasTestTask({ permit }: { permit: PermitLike }) {
  const regime = useRegime(permit.id);
  const { gasTest } = useGasTaskOffers(permit);
  if (!gasTest) return <Notice tone="caution" role="status">You cannot record a gas test on this permit now.</Notice>;
  if (regime.isPending) return <Loading label="Loading this permit's limits…" />;
  if (regime.isError) return <Notice tone="danger" role="alert">{regime.error.message}</Notice>;
  return (
    <>
      <StopWorkBlockers r={regime.data} />
      <RecordGasTestForm permit={permit} limits={regime.data.limits} timeZone={regime.data.timeZone} requireDailyBumpTest={regime.data.requireDailyBumpTest} screen />
    </>
  );
}

/** The check task screen's body: `kind` is the check asked for in the address, if it may be recorded now. */
export function CheckTask({ permit, kind }: { permit: PermitLike; kind: CheckKind | undefined }) {
  const timeZone = useSiteTimeZone();
  const steps = usePlanSteps(permit.id);
  const { checks } = useGasTaskOffers(permit);
  if (steps.isPending) return <Loading label="Loading the vents and plugs…" />;
  if (!checks.length) return <Notice tone="caution" role="status">There is no check for you to record on this permit now.</Notice>;
  return (
    <>
      {kind && !checks.includes(kind) ? (
        <Notice tone="caution" role="status">
          A {checkKindLabels[kind].toLowerCase()} cannot be recorded on this permit now; choose what you checked.
        </Notice>
      ) : null}
      <CheckForm permitId={permit.id} kinds={checks} timeZone={timeZone} initialKind={kind} screen />
    </>
  );
}
