import { Controller, useWatch } from 'react-hook-form';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import { SelectField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { usePermitPipelines } from '../../api/get-pipelines';
import { formatRange, pipelineLabel, positionWord } from '../../lib/positions';
import { fieldError, optionalNumber, type PermitFormApi } from './types';

export function PlaceStep({ form, unit }: { form: PermitFormApi; unit: LocationUnit }) {
  const pipelines = usePermitPipelines();
  const [pipelineId, from, to] = useWatch({ control: form.control, name: ['pipelineId', 'fromPosition', 'toPosition'] });
  const line = pipelines.data?.items.find((p) => p.id === pipelineId);
  const outside = line && [from, to].some((v) => typeof v === 'number' && Number.isFinite(v) && (v < line.startPosition || v > line.endPosition));
  const word = positionWord[unit];

  return (
    <div className="flex flex-col gap-4">
      <Controller
        control={form.control}
        name="pipelineId"
        render={({ field }) => (
          <SelectField
            label="Pipeline"
            name={field.name}
            ref={field.ref}
            value={field.value ?? ''}
            onChange={(e) => field.onChange(e.target.value)}
            onBlur={field.onBlur}
            error={fieldError(form, 'pipelineId')}
            hint={line ? `The line runs ${formatRange(line.startPosition, line.endPosition, unit)}.` : pipelines.isError ? 'The pipeline register could not be loaded; try again in a moment.' : undefined}
          >
            <option value="">{pipelines.isPending ? 'Loading pipelines…' : 'Choose a pipeline…'}</option>
            {pipelines.data?.items.map((p) => (
              <option key={p.id} value={p.id}>
                {pipelineLabel(p)}
              </option>
            ))}
          </SelectField>
        )}
      />
      <div className="grid gap-4 sm:grid-cols-2">
        <TextField
          label={`From ${word}`}
          type="number"
          inputMode="decimal"
          step="0.001"
          min={0}
          {...form.register('fromPosition', { setValueAs: optionalNumber })}
          error={fieldError(form, 'fromPosition')}
        />
        <TextField
          label={`To ${word}`}
          type="number"
          inputMode="decimal"
          step="0.001"
          min={0}
          {...form.register('toPosition', { setValueAs: optionalNumber })}
          error={fieldError(form, 'toPosition')}
          hint={`Positions are ${word}s on this line, as painted on the markers.`}
        />
      </div>
      {outside ? (
        <Notice tone="caution" role="status" title="Outside the line">
          The work range reaches beyond {formatRange(line.startPosition, line.endPosition, unit)}, the ends of {line.name}. Check the {word}s.
        </Notice>
      ) : null}
    </div>
  );
}
