import type { UseFieldArrayReturn, UseFormReturn } from 'react-hook-form';
import { z } from 'zod';
import { signatureMessages, signedNameMatches } from '@shared/permit/signed-name';
import { isoToWallTime } from '@shared/time/zone';
import { Button } from './button';
import { TextAreaField, TextField } from './field';

// The authoriser's signed record that a lock's owner is away (OSHA 29 CFR 1910.147(e)(3)): how it was
// checked, the attempts to reach them, how they will be told. One form for an isolation's lock and for a
// personal lock on the lockbox.

export const MAX_ATTEMPTS = 10;

export const absenceRecordSchema = (signer: string) =>
  z.object({
    absenceCheck: z.string().trim().min(1, 'Say how you checked they are not on site.').max(1000),
    contactAttempts: z
      .array(z.object({ how: z.string().trim().min(1, 'Say how you tried to reach them.').max(300), at: z.string().min(1, 'Give the date and time you tried.') }))
      .min(1, 'Record at least one attempt to reach them.')
      .max(MAX_ATTEMPTS),
    informPlan: z.string().trim().min(1, 'Say how they will be told before they come back to work.').max(1000),
    password: z.string().min(1, signatureMessages.passwordMissing),
    signedName: z.string().refine((v) => signedNameMatches(v, signer), signatureMessages.name(signer)),
  });
export type AbsenceRecordForm = z.infer<ReturnType<typeof absenceRecordSchema>>;

interface Props {
  form: UseFormReturn<AbsenceRecordForm>;
  attempts: UseFieldArrayReturn<AbsenceRecordForm, 'contactAttempts'>;
  /** The owner's name as the sentence needs it. */
  who: string;
  timeZone: string;
  autoFocus?: boolean;
}

/** The absence check and the attempts to reach the owner (the inform plan and the signature follow in each form). */
export function AbsenceRecordFields({ form, attempts, who, timeZone, autoFocus }: Props) {
  const { register, formState } = form;
  const errors = formState.errors;
  return (
    <>
      <TextAreaField
        label={`How you checked ${who} is not on site`}
        data-autofocus={autoFocus || undefined}
        {...register('absenceCheck')}
        error={errors.absenceCheck?.message}
        hint="For example: not on the gate log, not answering the site radio."
      />
      <fieldset className="flex min-w-0 flex-col gap-3 rounded-md border border-line p-3">
        <legend className="px-1 text-sm font-semibold">Attempts to reach {who}</legend>
        {attempts.fields.map((f, i) => (
          <div key={f.id} className="flex flex-col gap-2 border-b border-line pb-3 last:border-b-0 last:pb-0">
            <TextField label={`Attempt ${i + 1}: how`} {...register(`contactAttempts.${i}.how`)} error={errors.contactAttempts?.[i]?.how?.message} hint="Phone, text, radio, their supervisor…" />
            <TextField label={`Attempt ${i + 1}: when (${timeZone})`} type="datetime-local" {...register(`contactAttempts.${i}.at`)} error={errors.contactAttempts?.[i]?.at?.message} />
            {attempts.fields.length > 1 ? (
              <Button type="button" variant="secondary" className="w-full sm:w-auto sm:self-start" onClick={() => attempts.remove(i)}>
                Remove attempt {i + 1}
              </Button>
            ) : null}
          </div>
        ))}
        {errors.contactAttempts?.message || errors.contactAttempts?.root?.message ? (
          <p role="alert" className="text-sm font-medium text-danger">
            {errors.contactAttempts.message ?? errors.contactAttempts.root?.message}
          </p>
        ) : null}
        {attempts.fields.length < MAX_ATTEMPTS ? (
          <Button type="button" variant="secondary" className="w-full sm:w-auto sm:self-start" onClick={() => attempts.append({ how: '', at: isoToWallTime(new Date().toISOString(), timeZone) })}>
            Add another attempt
          </Button>
        ) : null}
      </fieldset>
    </>
  );
}
