import { subject } from '@casl/ability';
import type { PermitRegime } from '@shared/types/timed-checks';
import { formatInZone } from '@shared/time/zone';
import { editableStates, limitsFixedStates, liveStates } from '@shared/permit/states';
import { useAbility } from '@client/lib/ability';
import { Card, Loading } from '@client/components/ui/page';
import { Notice } from '@client/components/ui/notice';
import { useRegime } from '../api/get-regime';
import { useGasSeries } from '../api/get-gas-tests';
import { scopeOf, workOpen, type PermitLike } from '../lib/permit-like';
import { DueList } from './due-list';
import { RecordGasTestForm } from './record-gas-test-form';
import { GasReadingsChart } from './gas-readings-chart';
import { GasTestHistory } from './gas-test-history';
import { CsvImport } from './csv-import';
import { LimitsTable, TightenLimitsForm } from './permit-limits';
import { GasPlaceVerdicts, StopWorkBlockers } from './stop-work-panel';

function Regime({ r }: { r: PermitRegime }) {
  const done = (at: string | null) => (at ? `passed ${formatInZone(at, r.timeZone, 'dayTime')}` : 'not recorded yet');
  return (
    <dl className="grid grid-cols-1 gap-x-4 gap-y-1 text-sm sm:grid-cols-[auto_1fr]" data-testid="gas-regime">
      <dt className="font-semibold">Before cleaning the pipe interior</dt>
      <dd>{done(r.tests.beforeCleaning)}</dd>
      <dt className="font-semibold">Before work starts</dt>
      <dd>
        {done(r.tests.beforeWork)} <span className="text-ink-soft">(a pass within {r.gasTestWindowMinutes} minutes of starting)</span>
      </dd>
      <dt className="font-semibold">During work</dt>
      <dd>a repeat test every {r.gasTestIntervalMinutes} minutes</dd>
      <dt className="font-semibold">Latest</dt>
      <dd>
        {r.tests.lastPass ? `pass ${formatInZone(r.tests.lastPass, r.timeZone, 'dayTime')}` : 'no pass yet'}
        {r.tests.lastFail ? <span className="font-semibold text-danger">{` · fail ${formatInZone(r.tests.lastFail, r.timeZone, 'dayTime')}`}</span> : null}
      </dd>
    </dl>
  );
}

/** Gas tests of one permit: the regime, what is due, recording and importing tests, the chart and the history. */
export function GasTestsSection({ permit }: { permit: PermitLike }) {
  const ability = useAbility();
  const regime = useRegime(permit.id);
  const series = useGasSeries(permit.id);
  const canTest = ability.can('create', subject('GasTest', scopeOf(permit))) && workOpen(permit);
  const canTighten = ability.can('update', subject('Permit', { ...permit })) && !limitsFixedStates.includes(permit.state);

  return (
    <Card className="min-w-0">
      <div className="flex min-w-0 flex-col gap-4" data-testid="gas-tests-section">
        <h2 className="text-xl font-bold text-brand-strong" id={`gas-${permit.id}`}>
          Gas tests
        </h2>
        {regime.isPending ? (
          <Loading label="Loading the gas-test regime…" />
        ) : regime.isError ? (
          <Notice tone="danger" role="alert">
            {regime.error.message}
          </Notice>
        ) : (
          <>
            <Regime r={regime.data} />
            <GasPlaceVerdicts r={regime.data} />
            <StopWorkBlockers r={regime.data} />
            <div className="flex flex-col gap-2" data-testid="gas-due">
              <h3 className="text-lg font-semibold">Next due</h3>
              {liveStates.includes(permit.state) ? <DueList due={regime.data.due} kinds={['gas_test']} timeZone={regime.data.timeZone} testId="gas-due-list" /> : <p className="text-sm text-ink-soft">Repeat tests fall due while work is live.</p>}
            </div>
            <LimitsTable view={regime.data} />
            {canTighten ? <TightenLimitsForm permitId={permit.id} view={regime.data} draft={editableStates.includes(permit.state)} /> : null}
            {canTest ? <RecordGasTestForm permit={permit} limits={regime.data.limits} timeZone={regime.data.timeZone} requireDailyBumpTest={regime.data.requireDailyBumpTest} /> : null}
            {series.data?.length ? <GasReadingsChart tests={series.data} limits={regime.data.limits} hotWork={regime.data.hotWork} timeZone={regime.data.timeZone} /> : null}
            <h3 className="text-lg font-semibold">History</h3>
            <GasTestHistory permitId={permit.id} timeZone={regime.data.timeZone} />
            {canTest ? <CsvImport permitId={permit.id} timeZone={regime.data.timeZone} /> : null}
          </>
        )}
      </div>
    </Card>
  );
}
