import { useState } from 'react';
import { Controller, useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import {
  isolationPointKinds, normalPositions, pointInputSchema, pointKindLabels, positionPrefix, valveTypeLabels, valveTypes, type LocationUnit, type PointInput,
} from '@shared/schemas/assets.schema';
import type { IsolationPoint } from '@shared/assets/types';
import { Button } from '@client/components/ui/button';
import { SelectField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useCreatePoint, useUpdatePoint } from '../api/pipelines';
import { applyServerErrors, numberOrUndefined, textOrNull } from './form-helpers';

type FormInput = z.input<typeof pointInputSchema>;
const FIELDS = ['pipelineId', 'tagCode', 'kind', 'position', 'description', 'valveType', 'normalPosition', 'remotelyOperable'] as const;
const yesNo = (v: unknown) => (v === 'yes' ? true : v === 'no' ? false : null);

interface Props {
  pipelineId: string;
  unit: LocationUnit;
  range: [number, number];
  initial?: IsolationPoint;
  onDone: (p: IsolationPoint) => void;
  onCancel: () => void;
}

export function PointForm({ pipelineId, unit, range, initial, onDone, onCancel }: Props) {
  const create = useCreatePoint();
  const update = useUpdatePoint();
  const [problem, setProblem] = useState<string | null>(null);
  // Valve details exist only for valves: fields that leave the form leave the values too.
  const form = useForm<FormInput, unknown, PointInput>({
    resolver: zodResolver(pointInputSchema),
    shouldUnregister: true,
    defaultValues: initial
      ? { pipelineId, tagCode: initial.tagCode, kind: initial.kind, position: initial.position, description: initial.description, valveType: initial.valveType, normalPosition: initial.normalPosition, remotelyOperable: initial.remotelyOperable }
      : { pipelineId, tagCode: '', kind: 'block_valve', description: '' },
  });
  const kind = useWatch({ control: form.control, name: 'kind' });
  const errors = form.formState.errors;
  const prefix = positionPrefix[unit];

  const submit = form.handleSubmit((values) => {
    setProblem(null);
    const onError = (e: Error) => setProblem(applyServerErrors(e, form.setError, FIELDS));
    if (initial) {
      const { pipelineId: _p, ...patch } = values;
      update.mutate({ id: initial.id, patch: { ...patch, description: patch.description ?? null } }, { onSuccess: onDone, onError });
    } else create.mutate(values, { onSuccess: onDone, onError });
  });

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-3" aria-label={initial ? `Edit point ${initial.tagCode}` : 'Add a point'}>
      {problem ? (
        <Notice tone="danger" role="alert">
          {problem}
        </Notice>
      ) : null}
      <input type="hidden" {...form.register('pipelineId')} />
      <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4">
        <TextField label="Tag code" hint="Unique in the register, e.g. CR-BV-149" {...form.register('tagCode')} error={errors.tagCode?.message} />
        <SelectField label="Kind" {...form.register('kind')} error={errors.kind?.message}>
          {isolationPointKinds.map((k) => (
            <option key={k} value={k}>
              {pointKindLabels[k]}
            </option>
          ))}
        </SelectField>
        <TextField
          label={`Position (${prefix})`}
          type="number"
          step="any"
          inputMode="decimal"
          hint={`On the line: ${range[0]} to ${range[1]}`}
          {...form.register('position', { setValueAs: numberOrUndefined })}
          error={errors.position?.message}
        />
        <TextField
          label={kind === 'isolator' ? 'What it isolates' : 'Description'}
          hint={kind === 'isolator' ? 'Required, e.g. the breaker and the motor it feeds' : 'Optional'}
          {...form.register('description', { setValueAs: textOrNull })}
          error={errors.description?.message}
        />
        {kind === 'block_valve' ? (
          <>
            <SelectField label="Valve type" {...form.register('valveType', { setValueAs: (v) => v || null })} error={errors.valveType?.message}>
              <option value="">Choose…</option>
              {valveTypes.map((t) => (
                <option key={t} value={t}>
                  {valveTypeLabels[t]}
                </option>
              ))}
            </SelectField>
            <SelectField label="Normal position" {...form.register('normalPosition', { setValueAs: (v) => v || null })} error={errors.normalPosition?.message}>
              <option value="">Choose…</option>
              {normalPositions.map((n) => (
                <option key={n} value={n}>
                  {n === 'open' ? 'Open' : 'Closed'}
                </option>
              ))}
            </SelectField>
            <Controller
              control={form.control}
              name="remotelyOperable"
              render={({ field }) => (
                <SelectField
                  label="Operable from the control room?"
                  hint="If yes, the control room must acknowledge every isolation on it"
                  name={field.name}
                  ref={field.ref}
                  onBlur={field.onBlur}
                  value={field.value === true ? 'yes' : field.value === false ? 'no' : ''}
                  onChange={(e) => field.onChange(yesNo(e.target.value))}
                  error={errors.remotelyOperable?.message}
                >
                  <option value="">Choose…</option>
                  <option value="yes">Yes, remotely operable</option>
                  <option value="no">No, by hand on site only</option>
                </SelectField>
              )}
            />
          </>
        ) : null}
      </div>
      <div className="flex flex-wrap gap-2">
        <Button type="submit" busy={create.isPending || update.isPending}>
          {initial ? 'Save point' : 'Add point'}
        </Button>
        <Button type="button" variant="secondary" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
