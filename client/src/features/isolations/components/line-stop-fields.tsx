import type { FieldErrors, UseFormRegister } from 'react-hook-form';
import { GaugeUnitOptions } from './gauge-unit-options';
import { SelectField, TextField } from '@client/components/ui/field';
import { numberOrUndefined, textOrUndefined, type ApplyForm } from '../lib/step-forms';

/** A line stop (stopple) or mechanical plug as set: the device, its size, and the set pressure or where it is set. Not a mud plug's weights. */
export function LineStopFields({ register, errors }: { register: UseFormRegister<ApplyForm>; errors: FieldErrors<ApplyForm> }) {
  const num = { setValueAs: numberOrUndefined };
  return (
    <fieldset className="flex flex-col gap-3 rounded-md border border-line p-3" data-testid="line-stop-fields">
      <legend className="px-1 text-sm font-semibold">Line stop as set</legend>
      <TextField label="Device" placeholder="Stopple plugging head, 10 in fitting" {...register('lineStopDevice')} error={errors.lineStopDevice?.message} />
      <TextField label="Size (in)" type="number" inputMode="decimal" step="any" min={0} {...register('lineStopSizeIn', num)} error={errors.lineStopSizeIn?.message} />
      <div className="grid gap-3 sm:grid-cols-2">
        <TextField label="Set pressure" type="number" inputMode="decimal" step="any" min={0} {...register('lineStopSetPressure', num)} error={errors.lineStopSetPressure?.message} />
        <SelectField label="Unit" {...register('lineStopSetPressureUnit')} error={errors.lineStopSetPressureUnit?.message}>
          <option value="">Choose…</option>
          <GaugeUnitOptions />
        </SelectField>
      </div>
      <TextField
        label="Or where it is set"
        hint="For a plug or head without a pressure reading: its set position, as the indicator or the fitting shows it."
        {...register('lineStopSetPosition', { setValueAs: textOrUndefined })}
        error={errors.lineStopSetPosition?.message}
      />
    </fieldset>
  );
}
