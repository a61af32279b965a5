import { useState } from 'react';
import { useFieldArray, useForm, type FieldValues, type Path, type UseFormSetError } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { signatureMessages, signedNameMatches } from '@shared/permit/signed-name';
import type { LockboxMember } from '@shared/types/crew';
import { isoToWallTime, wallTimeToIso } from '@shared/time/zone';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { TextAreaField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { AbsenceRecordFields, absenceRecordSchema, type AbsenceRecordForm } from '@client/components/ui/absence-record';
import { useToast } from '@client/components/ui/toast';
import { useCrewRecordException, useCrewRemoveUnderException } from '../api/crew-lockbox';

// OSHA 29 CFR 1910.147(e)(3): a personal lock left on the lockbox by someone who is not at the site
// comes off only after an authoriser records that they are away, the attempts to reach them and how
// they will be told, and then another of the crew takes it off and signs for it.

const signature = (signer: string) => ({
  password: z.string().min(1, signatureMessages.passwordMissing),
  signedName: z.string().refine((v) => signedNameMatches(v, signer), signatureMessages.name(signer)),
});
const recordSchema = absenceRecordSchema;
type RecordForm = AbsenceRecordForm;
const removeSchema = (signer: string) => z.object(signature(signer));
type RemoveForm = z.infer<ReturnType<typeof removeSchema>>;

/** Puts the server's field messages beside their fields; answers what is left for a notice above the form. */
function placeErrors<F extends FieldValues>(err: unknown, setError: UseFormSetError<F>, known: RegExp): string | null {
  if (!(err instanceof ApiError)) return err instanceof Error ? err.message : 'Something went wrong. Try again.';
  let placed = 0;
  for (const d of err.details) if (known.test(d.path) && ++placed) setError(d.path as Path<F>, { message: d.message });
  return placed && placed === err.details.length ? null : err.message;
}

interface Props {
  permitId: string;
  member: LockboxMember;
  signer: string;
  timeZone: string;
  onDone: () => void;
}

/** The authoriser's signed record that the person is away with their personal lock still on the box. */
export function RecordCrewExceptionForm({ permitId, member, signer, timeZone, onDone }: Props) {
  const record = useCrewRecordException(permitId);
  const toast = useToast();
  const [problem, setProblem] = useState<string | null>(null);
  const now = () => isoToWallTime(new Date().toISOString(), timeZone);
  const form = useForm<RecordForm>({
    resolver: zodResolver(recordSchema(signer)),
    defaultValues: { absenceCheck: '', contactAttempts: [{ how: '', at: now() }], informPlan: '', password: '', signedName: '' },
  });
  const { register, formState, handleSubmit, setError, control } = form;
  const attempts = useFieldArray({ control, name: 'contactAttempts' });
  const errors = formState.errors;
  const who = member.name;

  const submit = handleSubmit(async (v) => {
    setProblem(null);
    const contactAttempts = [];
    for (const [i, a] of v.contactAttempts.entries()) {
      const at = wallTimeToIso(a.at, timeZone);
      if (!at) return setError(`contactAttempts.${i}.at`, { message: 'Give a date and time.' });
      contactAttempts.push({ how: a.how.trim(), at });
    }
    try {
      await record.mutateAsync({ userId: member.userId, body: { absenceCheck: v.absenceCheck.trim(), contactAttempts, informPlan: v.informPlan.trim(), password: v.password, signedName: v.signedName } });
    } catch (err) {
      return setProblem(placeErrors(err, setError, /^(absenceCheck|informPlan|password|signedName|contactAttempts(\.\d+\.(how|at))?)$/));
    }
    toast('success', `Exception recorded for ${who}'s personal lock ${member.personalLockNumber}. Another of the crew may now take it off and sign for it.`);
    onDone();
  });

  return (
    <form noValidate className="flex flex-col gap-3" onSubmit={submit} aria-label={`Record exception for ${who}'s lock`}>
      <p className="text-sm">
        {who}&apos;s personal lock {member.personalLockNumber} is on the lockbox. Only {who} takes it off, unless you record here that {who} is not on site. Then another of the crew
        takes it off and signs for it, and {who} gets an e-mail saying so.
      </p>
      {problem ? (
        <Notice tone="danger" title="Not recorded" role="alert">
          {problem}
        </Notice>
      ) : null}
      <AbsenceRecordFields form={form} attempts={attempts} who={who} timeZone={timeZone} />
      <TextAreaField label={`How ${who} will be told before coming back to work`} {...register('informPlan')} error={errors.informPlan?.message} />
      <TextField label="Your password" type="password" autoComplete="current-password" {...register('password')} error={errors.password?.message} />
      <TextField label={`Type your name as it appears: ${signer}`} autoComplete="off" spellCheck={false} {...register('signedName')} error={errors.signedName?.message} />
      <div className="flex flex-col gap-2 sm:flex-row sm:justify-end">
        <Button type="button" variant="secondary" className="w-full sm:w-auto" onClick={onDone}>
          Cancel
        </Button>
        <Button type="submit" className="w-full sm:w-auto" busy={record.isPending}>
          Sign: record the exception
        </Button>
      </div>
    </form>
  );
}

/** Another of the crew takes the absent person's personal lock off under the recorded exception, signing. */
export function RemoveCrewLockForm({ permitId, member, signer, onDone }: Omit<Props, 'timeZone'>) {
  const remove = useCrewRemoveUnderException(permitId);
  const toast = useToast();
  const [problem, setProblem] = useState<string | null>(null);
  const form = useForm<RemoveForm>({ resolver: zodResolver(removeSchema(signer)), defaultValues: { password: '', signedName: '' } });
  const { register, formState, handleSubmit, setError } = form;
  const errors = formState.errors;

  const submit = handleSubmit(async (v) => {
    setProblem(null);
    try {
      await remove.mutateAsync({ userId: member.userId, body: { password: v.password, signedName: v.signedName } });
    } catch (err) {
      return setProblem(placeErrors(err, setError, /^(password|signedName)$/));
    }
    toast('success', `Signed: take ${member.name}'s personal lock ${member.personalLockNumber} off the lockbox. ${member.name} gets an e-mail saying so.`);
    onDone();
  });

  return (
    <form noValidate className="flex flex-col gap-3" onSubmit={submit} aria-label={`Remove ${member.name}'s lock under the exception`}>
      <p className="text-sm">
        {member.exception?.authoriserName ?? 'An authoriser'} recorded that {member.name} is not on site. You take personal lock {member.personalLockNumber} off the lockbox and sign for it.
      </p>
      {problem ? (
        <Notice tone="danger" title="Not removed" role="alert">
          {problem}
        </Notice>
      ) : null}
      <TextField label="Your password" type="password" autoComplete="current-password" {...register('password')} error={errors.password?.message} />
      <TextField label={`Type your name as it appears: ${signer}`} autoComplete="off" spellCheck={false} {...register('signedName')} error={errors.signedName?.message} />
      <div className="flex flex-col gap-2 sm:flex-row sm:justify-end">
        <Button type="button" variant="secondary" className="w-full sm:w-auto" onClick={onDone}>
          Cancel
        </Button>
        <Button type="submit" variant="danger" className="w-full sm:w-auto" busy={remove.isPending}>
          Sign: remove the lock
        </Button>
      </div>
    </form>
  );
}
