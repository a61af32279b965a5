import { Controller } from 'react-hook-form';
import { TextAreaField } from '@client/components/ui/field';
import { PpeInput } from './ppe-input';
import { fieldError, type PermitFormApi } from './types';

export function MethodStep({ form }: { form: PermitFormApi }) {
  return (
    <div className="flex flex-col gap-4">
      <TextAreaField label="Method statement" rows={6} {...form.register('methodStatement')} error={fieldError(form, 'methodStatement')} hint="The steps of the job in order, with the controls at each step." />
      <TextAreaField label="Hazards" rows={4} {...form.register('hazards')} error={fieldError(form, 'hazards')} hint="What could hurt someone here: product, pressure, ignition sources, ground, traffic, weather." />
      <Controller
        control={form.control}
        name="ppe"
        render={({ field }) => <PpeInput value={field.value ?? []} onChange={field.onChange} onBlur={field.onBlur} error={fieldError(form, 'ppe')} />}
      />
    </div>
  );
}
