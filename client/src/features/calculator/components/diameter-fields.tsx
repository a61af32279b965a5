import type { UseFormReturn } from 'react-hook-form';
import { B36_SCHEDULES, scheduleLabel } from '@shared/calc';
import type { MudPlugForm } from '@shared/schemas/calc.schema';
import { SelectField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { usePipeSizes } from '../api/get-pipe-sizes';
import { pipelineLabel, type PipelineChoices } from '../api/get-pipelines';
import { fixed } from '../lib/format';

const MODES: { value: MudPlugForm['diameterMode']; label: string; hint: string }[] = [
  { value: 'nominal', label: 'Nominal size', hint: 'The size the pipe is called, in inches.' },
  { value: 'schedule', label: 'NPS and schedule', hint: 'Inside diameter from ASME B36.10M.' },
  { value: 'measured', label: 'Measured inside diameter', hint: 'A bore you measured, in inches or mm.' },
  { value: 'register', label: 'Pipeline in the register', hint: 'Inside diameter held on the pipeline record.' },
];

interface Props {
  form: UseFormReturn<MudPlugForm>;
  mode: MudPlugForm['diameterMode'];
  schedule: MudPlugForm['schedule'];
  nps: string;
  pipelines: { data?: PipelineChoices; isPending: boolean; error: Error | null };
  /** Messages the server gave for a field, shown when the form itself found nothing wrong. */
  serverError: (field: keyof MudPlugForm) => string | undefined;
}

/** How the person gives the diameter: four ways, one set of fields at a time. */
export function DiameterFields({ form, mode, schedule, nps, pipelines, serverError }: Props) {
  const { register, formState } = form;
  const sizes = usePipeSizes();
  const errorOf = (field: keyof MudPlugForm) => formState.errors[field]?.message ?? serverError(field);
  const listed = sizes.data?.schedules.find((s) => s.schedule === schedule)?.sizes ?? [];
  const unlisted = nps !== '' && !listed.some((o) => String(o.nps) === nps);

  return (
    <div className="flex flex-col gap-3">
      <fieldset className="min-w-0">
        <legend className="mb-1 text-sm font-semibold">Diameter to work from</legend>
        <div className="grid gap-2 sm:grid-cols-2">
          {MODES.map((m) => (
            <label key={m.value} className="flex min-h-11 cursor-pointer items-start gap-3 rounded-md border border-line bg-surface px-3 py-2 has-checked:border-brand has-checked:bg-brand-soft">
              <input type="radio" value={m.value} className="mt-1 size-5 shrink-0 accent-brand" {...register('diameterMode')} />
              <span>
                <span className="block font-medium">{m.label}</span>
                <span className="block text-xs text-ink-soft">{m.hint}</span>
              </span>
            </label>
          ))}
        </div>
      </fieldset>

      {mode === 'nominal' ? (
        <div className="grid gap-3 sm:grid-cols-2">
          <TextField label="Nominal diameter (in)" inputMode="decimal" autoComplete="off" {...register('nominalIn')} error={errorOf('nominalIn')} hint="For example 10 for a 10-inch line." />
        </div>
      ) : null}

      {mode === 'schedule' ? (
        <div className="grid gap-3 sm:grid-cols-2">
          <SelectField label="Schedule" {...register('schedule')} error={errorOf('schedule')}>
            {B36_SCHEDULES.map((s) => (
              <option key={s} value={s}>
                {scheduleLabel(s)}
              </option>
            ))}
          </SelectField>
          <SelectField
            label="Nominal pipe size (NPS)"
            {...register('nps')}
            error={errorOf('nps') ?? (sizes.error ? `The pipe sizes could not be loaded: ${sizes.error.message}` : undefined)}
            disabled={sizes.isPending}
            hint={sizes.isPending ? 'Loading pipe sizes…' : undefined}
          >
            <option value="">Choose a size</option>
            {unlisted ? <option value={nps}>{`NPS ${nps} (not listed for ${scheduleLabel(schedule)})`}</option> : null}
            {listed.map((o) => (
              <option key={o.nps} value={String(o.nps)}>
                {`NPS ${o.label} (OD ${fixed(o.odIn, 3)} in)`}
              </option>
            ))}
          </SelectField>
        </div>
      ) : null}

      {mode === 'measured' ? (
        <div className="grid grid-cols-[1fr_auto] gap-3 sm:max-w-[50%]">
          <TextField label="Inside diameter" inputMode="decimal" autoComplete="off" {...register('measured')} error={errorOf('measured')} />
          <SelectField label="Diameter unit" {...register('measuredUnit', { deps: ['measured'] })}>
            <option value="in">in</option>
            <option value="mm">mm</option>
          </SelectField>
        </div>
      ) : null}

      {mode === 'register' ? (
        pipelines.isPending ? (
          <p role="status" className="text-sm text-ink-soft">
            Loading the pipeline register…
          </p>
        ) : pipelines.error ? (
          <Notice tone="info">The pipeline register could not be loaded ({pipelines.error.message}). Enter the size another way.</Notice>
        ) : !pipelines.data?.items.length ? (
          <Notice tone="info" title="No pipelines in the register yet">
            Enter the size as a nominal size, NPS and schedule, or a measured inside diameter.
          </Notice>
        ) : (
          <SelectField
            label="Pipeline"
            {...register('pipelineId')}
            error={errorOf('pipelineId')}
            hint={pipelines.data.total > pipelines.data.items.length ? `Showing the first ${pipelines.data.items.length} of ${pipelines.data.total}.` : undefined}
          >
            <option value="">Choose a pipeline</option>
            {pipelines.data.items.map((p) => (
              <option key={p.id} value={p.id} disabled={p.insideDiameterIn === null}>
                {`${pipelineLabel(p)} ${p.insideDiameterIn === null ? '(no inside diameter recorded)' : `(ID ${fixed(p.insideDiameterIn, 3)} in)`}`}
              </option>
            ))}
          </SelectField>
        )
      ) : null}
    </div>
  );
}
