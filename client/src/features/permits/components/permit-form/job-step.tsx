import { workKindLabels, workKinds } from '@shared/permit/states';
import { TextAreaField, TextField } from '@client/components/ui/field';
import { fieldError, type PermitFormApi } from './types';

export function JobStep({ form }: { form: PermitFormApi }) {
  const kindsError = fieldError(form, 'kinds');
  return (
    <div className="flex flex-col gap-4">
      <fieldset aria-describedby={kindsError ? 'kinds-error' : undefined}>
        <legend className="text-sm font-semibold">Kinds of work</legend>
        <div className="grid grid-cols-1 gap-x-4 sm:grid-cols-2">
          {workKinds.map((k) => (
            <label key={k} className="flex min-h-11 items-center gap-2">
              <input type="checkbox" className="size-5" value={k} {...form.register('kinds')} />
              {workKindLabels[k]}
            </label>
          ))}
        </div>
        {kindsError ? (
          <p id="kinds-error" role="alert" className="text-sm font-medium text-danger">
            {kindsError}
          </p>
        ) : null}
      </fieldset>
      <TextField label="Title" maxLength={160} {...form.register('title')} error={fieldError(form, 'title')} hint="A short name the crew will recognise, e.g. the repair and the place." />
      <TextAreaField label="Scope of work" rows={4} {...form.register('scope')} error={fieldError(form, 'scope')} />
      <TextField label="Job reference (optional)" maxLength={80} {...form.register('jobReference')} error={fieldError(form, 'jobReference')} hint="Work order or job number, if there is one." />
    </div>
  );
}
