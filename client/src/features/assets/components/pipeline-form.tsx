import { useState } from 'react';
import { useFieldArray, useForm, useWatch, type Control } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { PIPE_SCHEDULES } from '@shared/calc/pipe-table';
import { CalcInputError } from '@shared/calc/units';
import { resolveInsideDiameter } from '@shared/assets/inside-diameter';
import { pipelineInputSchema, positionPrefix, productKinds, productLabels, type LocationUnit, type PipelineInput } from '@shared/schemas/assets.schema';
import type { PipelineDetail } from '@shared/assets/types';
import { Button } from '@client/components/ui/button';
import { SelectField, TextAreaField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useCreatePipeline, useUpdatePipeline } from '../api/pipelines';
import { applyServerErrors, numberOrNull, numberOrUndefined, textOrNull } from './form-helpers';

type FormInput = z.input<typeof pipelineInputSchema>;
const FIELDS = ['code', 'name', 'product', 'nps', 'schedule', 'wallThicknessIn', 'insideDiameterIn', 'mopPsig', 'startPosition', 'endPosition', 'notes', 'sites'] as const;

const sourceText = { schedule: 'from the schedule (ASME B36.10M table)', wall: 'outside diameter less twice the wall', explicit: 'as measured' };

/** The bore the record will carry, worked out as the person types, or why it cannot be yet. */
function BorePreview({ control }: { control: Control<FormInput, unknown, PipelineInput> }) {
  const [nps, schedule, wallThicknessIn, insideDiameterIn] = useWatch({ control, name: ['nps', 'schedule', 'wallThicknessIn', 'insideDiameterIn'] });
  if (typeof nps !== 'number' || Number.isNaN(nps)) return null;
  const bore = boreOf({ nps, schedule, wallThicknessIn, insideDiameterIn });
  if ('problem' in bore) return <p className="text-sm text-ink-soft">{bore.problem}</p>;
  return (
    <p className="text-sm" data-testid="bore-preview">
      Inside diameter <strong>{bore.idIn.toFixed(3)} in</strong>, {sourceText[bore.source]}.
    </p>
  );
}

function boreOf(input: Parameters<typeof resolveInsideDiameter>[0]): ReturnType<typeof resolveInsideDiameter> | { problem: string } {
  try {
    return resolveInsideDiameter(input);
  } catch (err) {
    if (err instanceof CalcInputError) return { problem: err.message };
    throw err;
  }
}

export function PipelineForm({ initial, unit, onDone, onCancel }: { initial?: PipelineDetail; unit: LocationUnit; onDone: (p: PipelineDetail) => void; onCancel?: () => void }) {
  const create = useCreatePipeline();
  const update = useUpdatePipeline(initial?.id ?? '');
  const [problem, setProblem] = useState<string | null>(null);
  const form = useForm<FormInput, unknown, PipelineInput>({
    resolver: zodResolver(pipelineInputSchema),
    defaultValues: initial
      ? {
          code: initial.code, name: initial.name, product: initial.product, nps: initial.nps, schedule: initial.schedule, wallThicknessIn: initial.wallThicknessIn,
          insideDiameterIn: initial.insideDiameterSource === 'explicit' ? initial.insideDiameterIn : null, mopPsig: initial.mopPsig,
          startPosition: initial.startPosition, endPosition: initial.endPosition, notes: initial.notes, sites: initial.sites.map((s) => ({ name: s.name, position: s.position })),
        }
      : { code: '', name: '', product: 'refined_products', schedule: '40', sites: [] },
  });
  const sites = useFieldArray({ control: form.control, name: 'sites' });
  const errors = form.formState.errors;
  const prefix = positionPrefix[unit];
  const busy = create.isPending || update.isPending;

  const submit = form.handleSubmit((values) => {
    setProblem(null);
    const body = { ...values, schedule: values.schedule ?? null, wallThicknessIn: values.wallThicknessIn ?? null, insideDiameterIn: values.insideDiameterIn ?? null, notes: values.notes ?? null, sites: values.sites ?? [] };
    const onError = (e: Error) => setProblem(applyServerErrors(e, form.setError, FIELDS));
    if (initial) update.mutate(body, { onSuccess: onDone, onError });
    else create.mutate(body, { onSuccess: onDone, onError });
  });

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-4" aria-label={initial ? 'Edit pipeline' : 'Add a pipeline'}>
      {problem ? (
        <Notice tone="danger" role="alert">
          {problem}
        </Notice>
      ) : null}
      <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4">
        <TextField label="Code" hint="Letters, digits and dashes, e.g. BM-10" {...form.register('code')} error={errors.code?.message} />
        <div className="sm:col-span-1 lg:col-span-2">
          <TextField label="Name" {...form.register('name')} error={errors.name?.message} />
        </div>
        <SelectField label="Product carried" {...form.register('product')} error={errors.product?.message}>
          {productKinds.map((p) => (
            <option key={p} value={p}>
              {productLabels[p]}
            </option>
          ))}
        </SelectField>
        <TextField label="Nominal pipe size (NPS)" type="number" step="any" inputMode="decimal" {...form.register('nps', { setValueAs: numberOrUndefined })} error={errors.nps?.message} />
        <SelectField label="Schedule" {...form.register('schedule', { setValueAs: (v) => (v === '' ? null : v) })} error={errors.schedule?.message}>
          <option value="">None (give the wall or bore)</option>
          {PIPE_SCHEDULES.map((s) => (
            <option key={s} value={s}>
              {s === 'STD' || s === 'XS' ? s : `Sch ${s}`}
            </option>
          ))}
        </SelectField>
        <TextField label="Wall thickness (in)" type="number" step="any" inputMode="decimal" hint="Optional" {...form.register('wallThicknessIn', { setValueAs: numberOrNull })} error={errors.wallThicknessIn?.message} />
        <TextField label="Measured inside diameter (in)" type="number" step="any" inputMode="decimal" hint="Optional; overrides the table" {...form.register('insideDiameterIn', { setValueAs: numberOrNull })} error={errors.insideDiameterIn?.message} />
        <TextField label="Maximum operating pressure (psig)" type="number" step="any" inputMode="decimal" {...form.register('mopPsig', { setValueAs: numberOrUndefined })} error={errors.mopPsig?.message} />
        <TextField label={`Start position (${prefix})`} type="number" step="any" inputMode="decimal" {...form.register('startPosition', { setValueAs: numberOrUndefined })} error={errors.startPosition?.message} />
        <TextField label={`End position (${prefix})`} type="number" step="any" inputMode="decimal" {...form.register('endPosition', { setValueAs: numberOrUndefined })} error={errors.endPosition?.message} />
      </div>
      <BorePreview control={form.control} />
      <TextAreaField label="Notes" {...form.register('notes', { setValueAs: textOrNull })} error={errors.notes?.message} />

      <fieldset className="flex flex-col gap-2">
        <legend className="mb-1 text-sm font-semibold">Sites and stations along the line</legend>
        {sites.fields.length === 0 ? <p className="text-sm text-ink-soft">No sites yet.</p> : null}
        {sites.fields.map((field, i) => (
          <div key={field.id} className="grid grid-cols-[1fr_8rem_auto] items-end gap-2">
            <TextField label={`Site ${i + 1} name`} {...form.register(`sites.${i}.name`)} error={errors.sites?.[i]?.name?.message} />
            <TextField label={`Position (${prefix})`} type="number" step="any" inputMode="decimal" {...form.register(`sites.${i}.position`, { setValueAs: numberOrUndefined })} error={errors.sites?.[i]?.position?.message} />
            <Button type="button" variant="ghost" onClick={() => sites.remove(i)} aria-label={`Remove site ${i + 1}`}>
              Remove
            </Button>
          </div>
        ))}
        <div>
          <Button type="button" variant="secondary" onClick={() => sites.append({ name: '', position: undefined as unknown as number })}>
            Add a site
          </Button>
        </div>
      </fieldset>

      <div className="flex flex-wrap gap-2">
        <Button type="submit" busy={busy}>
          {initial ? 'Save changes' : 'Add pipeline'}
        </Button>
        {onCancel ? (
          <Button type="button" variant="secondary" onClick={onCancel}>
            Cancel
          </Button>
        ) : null}
      </div>
    </form>
  );
}
