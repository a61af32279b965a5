import type { ReactNode } from 'react';
import { useWatch, type UseFormReturn } from 'react-hook-form';
import { BENTONITE_WEIGH_NOTE, D3_16_DIAMETER_NOTE, MUD_PLUG_CAUTION, SMALL_BORE_PLUG_ADVICE, galToL, inToMm, lbToKg, testedSizesCaution } from '@shared/calc';
import type { MudPlugForm } from '@shared/schemas/calc.schema';
import type { MudPlugResponse } from '@shared/types/calc';
import { ApiError } from '@client/lib/api-client';
import { SelectField, TextField } from '@client/components/ui/field';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { Card, Loading } from '@client/components/ui/page';
import type { PipelineChoices } from '../api/get-pipelines';
import type { usePlugFigures } from '../hooks/use-plug-figures';
import { fixed, upTo } from '../lib/format';
import { DiameterFields } from './diameter-fields';

interface Props {
  form: UseFormReturn<MudPlugForm>;
  figures: ReturnType<typeof usePlugFigures>;
  pipelines: { data?: PipelineChoices; isPending: boolean; error: Error | null };
  metric: boolean;
}

function Figure({ label, children, testId }: { label: string; children: ReactNode; testId?: string }) {
  return (
    <div className="min-w-0 rounded-md border border-line bg-paper px-3 py-2">
      <dt className="text-sm text-ink-soft">{label}</dt>
      <dd className="text-xl font-bold break-words text-ink" data-testid={testId}>
        {children}
      </dd>
    </div>
  );
}

function PlugFigures({ plug, metric }: { plug: MudPlugResponse; metric: boolean }) {
  const mass = (lb: number) => (metric ? `${upTo(lbToKg(lb), 2)} kg` : `${upTo(lb, 2)} lb`);
  const [low, high] = plug.mudLbRange;
  const range = metric ? `${upTo(lbToKg(low), 2)}–${upTo(lbToKg(high), 2)} kg` : `${upTo(low, 2)}–${upTo(high, 2)} lb`;
  return (
    <dl className="grid grid-cols-1 gap-3 sm:grid-cols-2 lg:grid-cols-3">
      <Figure label="Paste to mix" testId="mud-total">
        {mass(plug.mudLb)}
      </Figure>
      <Figure label="Acceptable range (± 10 %)" testId="mud-range">
        {range}
      </Figure>
      <Figure label="Bentonite" testId="mud-bentonite">
        {mass(plug.bentoniteLb)}
      </Figure>
      <Figure label="Water" testId="mud-water">
        {mass(plug.waterLb)}
        <span className="block text-base font-semibold">{metric ? `${upTo(galToL(plug.waterGal), 2)} L` : `${upTo(plug.waterGal, 2)} US gal`}</span>
      </Figure>
      <Figure label="Plug length (1.5 × diameter)" testId="mud-length">
        {metric ? `${upTo(inToMm(plug.plugLengthIn), 0)} mm` : `${upTo(plug.plugLengthIn, 1)} in`}
      </Figure>
      <Figure label={`Balls about ${metric ? '75 mm' : '3 in'} across`} testId="mud-balls">
        {plug.mudBalls ?? 'None: bore too small'}
      </Figure>
    </dl>
  );
}

type SideBySide = NonNullable<ReturnType<typeof usePlugFigures>['sideBySide']>;

/** D³/16 by the nominal size (what the rule takes) beside the same rule on the bore. */
function PasteSideBySide({ side, metric }: { side: SideBySide; metric: boolean }) {
  const mass = (lb: number) => (metric ? `${upTo(lbToKg(lb), 2)} kg` : `${upTo(lb, 2)} lb`);
  const size = (d: number | null, dp: number) => (d === null ? null : metric ? `${upTo(inToMm(d), 1)} mm (${fixed(d, dp)} in)` : `${fixed(d, dp)} in`);
  const cell = (plug: SideBySide['nominal'], d: string | null, missing: string, testId: string) => (
    <div className="min-w-0 rounded-md border border-line bg-paper px-3 py-2">
      {plug && d ? (
        <>
          <p className="text-sm text-ink-soft">D = {d}</p>
          <p className="text-xl font-bold" data-testid={testId}>
            {mass(plug.mudLb)}
          </p>
          <p className="text-sm">bentonite {mass(plug.bentoniteLb)}, water {mass(plug.waterLb)}</p>
        </>
      ) : (
        <p className="text-sm text-ink-soft" data-testid={testId}>
          {missing}
        </p>
      )}
    </div>
  );
  return (
    <section aria-label="Paste by nominal size and by bore" className="flex flex-col gap-2">
      <h3 className="text-base font-semibold">Paste by nominal size and by bore</h3>
      <div className="grid grid-cols-1 gap-3 sm:grid-cols-2">
        <div className="flex flex-col gap-1">
          <p className="text-sm font-semibold">By nominal size (what D³/16 takes)</p>
          {cell(side.nominal, size(side.nominalIn, 0), 'Not known: give the nominal size, or NPS and schedule.', 'paste-by-nominal')}
        </div>
        <div className="flex flex-col gap-1">
          <p className="text-sm font-semibold">By the bore (inside diameter)</p>
          {cell(side.bore, size(side.boreIn, 3), 'Not known: give NPS and schedule, a measured bore or a pipeline.', 'paste-by-bore')}
        </div>
      </div>
      <p className="text-xs text-ink-soft">{D3_16_DIAMETER_NOTE}</p>
    </section>
  );
}

const messageFor = (error: unknown, path: string) => (error instanceof ApiError ? error.fieldMessage(path) : undefined);

export function MudPlugSection({ form, figures, pipelines, metric }: Props) {
  const { register, formState } = form;
  const { settled, basis, pipe, plug, sideBySide, settling } = figures;
  const sizeCaution = basis ? testedSizesCaution(basis.nominalIn ?? basis.diameterIn) : null;
  const [mode, ratio, schedule, nps] = useWatch({ control: form.control, name: ['diameterMode', 'ratio', 'schedule', 'nps'] });

  // The server names its own inputs; put each message beside the field the person typed into.
  const diameterField: Record<MudPlugForm['diameterMode'], keyof MudPlugForm> = { nominal: 'nominalIn', schedule: 'nps', measured: 'measured', register: 'pipelineId' };
  const serverError = (field: keyof MudPlugForm) => {
    if (field === diameterField[mode]) return messageFor(plug.error, 'diameterIn') ?? (mode === 'schedule' ? messageFor(pipe.error, 'nps') : undefined);
    if (field === 'schedule') return messageFor(pipe.error, 'schedule');
    if (field === (ratio === 'custom' ? 'customWaterFraction' : 'ratio')) return messageFor(plug.error, 'waterFraction');
    return undefined;
  };
  const unplaced = [pipe.error, plug.error].find((e) => e && !(e instanceof ApiError && e.details.length));

  return (
    <Card className="flex flex-col gap-4">
      <h2 className="text-xl font-bold text-brand-strong">Mud plug</h2>
      <SafetyCaution>
        <p className="mb-1 font-semibold" data-testid="mud-plug-caution">
          {MUD_PLUG_CAUTION}
        </p>
      </SafetyCaution>
      <form noValidate className="flex flex-col gap-3" onSubmit={(e) => e.preventDefault()} aria-label="Mud plug inputs">
        <DiameterFields form={form} mode={mode} schedule={schedule} nps={nps} pipelines={pipelines} serverError={serverError} />
        <div className="grid gap-3 sm:grid-cols-2">
          <SelectField label="Mix, water to bentonite by weight" {...register('ratio')} error={formState.errors.ratio?.message ?? serverError('ratio')}>
            <option value="0.50">50/50 (water share 0.50)</option>
            <option value="0.55">55/45 (water share 0.55)</option>
            <option value="0.60">60/40 (water share 0.60)</option>
            <option value="custom">Other share…</option>
          </SelectField>
          {ratio === 'custom' ? (
            <TextField
              label="Water share (0.50–0.60)"
              inputMode="decimal"
              autoComplete="off"
              {...register('customWaterFraction')}
              error={formState.errors.customWaterFraction?.message ?? serverError('customWaterFraction')}
            />
          ) : null}
        </div>
      </form>

      <section aria-label="Mud plug figures" aria-live="polite" aria-busy={settling || undefined} className="flex flex-col gap-3">
        {unplaced ? <Notice tone="danger" role="alert">{unplaced.message}</Notice> : null}
        {plug.data && basis ? (
          <>
            <p className="text-base">
              Worked out for the{' '}
              <strong className="font-semibold" data-testid="plug-basis">
                {basis.text}
              </strong>
              .
            </p>
            {sizeCaution ? (
              <Notice tone="caution" title="Outside the sizes the rule was tried on">
                <span data-testid="plug-size-caution">{sizeCaution}</span>
              </Notice>
            ) : null}
            <div className={settling ? 'opacity-60' : ''}>
              <PlugFigures plug={plug.data} metric={metric} />
            </div>
            {plug.data.mudBalls === null ? (
              <Notice tone="info" title="No 3-in balls for this bore">
                <span data-testid="plug-small-bore">{SMALL_BORE_PLUG_ADVICE}</span>
              </Notice>
            ) : null}
            {sideBySide ? <PasteSideBySide side={sideBySide} metric={metric} /> : null}
            <p className="text-sm" data-testid="bentonite-weigh-note">
              <strong className="font-semibold">Why weigh the bentonite: </strong>
              {BENTONITE_WEIGH_NOTE}
            </p>
            <p className="text-xs text-ink-soft">
              Paste D³/16 lb (D the nominal size in inches) ± 10 %, tried on 6, 10 and 16 in pipe; plug 1.5 × D long, balls about 3 in across,
              50/50 to 60/40 water to bentonite by weight: common practice, no published source. Water at 8.33 lb per US gallon.
            </p>
          </>
        ) : settling && settled ? (
          <Loading label="Working out the plug…" />
        ) : (
          <p className="text-sm text-ink-soft">Give the diameter to see how much paste the plug needs.</p>
        )}
      </section>
    </Card>
  );
}
