import { useState } from 'react';
import { useFieldArray, useForm, type Path } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { IsolationStep } from '@shared/types/isolations';
import { formatInZone, isoToWallTime, wallTimeToIso } from '@shared/time/zone';
import { Button } from '@client/components/ui/button';
import { TextAreaField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { ModalDialog } from '@client/components/ui/dialog';
import { AbsenceRecordFields, absenceRecordSchema, type AbsenceRecordForm } from '@client/components/ui/absence-record';
import { useRecordRemovalException } from '../api/record-removal-exception';
import { placeServerErrors } from '../lib/server-errors';
import { ConfirmBox } from './confirm-box';

interface Props {
  permitId: string;
  step: IsolationStep;
  /** The signed-in person: who they are and what their role lets them do with this lock. */
  user: { id: string; name: string };
  mayRecord: boolean;
  mayRemove: boolean;
  timeZone: string;
  onClose: () => void;
  /** Goes on to the removal itself, signed, once the exception is on record. */
  onRemove: () => void;
}


const formSchema = absenceRecordSchema;
type ExceptionForm = AbsenceRecordForm;

const knownField = /^(absenceCheck|informPlan|password|signedName|contactAttempts(\.\d+\.(how|at))?)$/;

/**
 * The exception for taking off a lock whose owner is not on site (OSHA 29 CFR 1910.147(e)(3)): what the
 * authoriser must record, and for an authoriser the form that records it; a technician hears they need
 * that record first, and once it is there goes on to remove the lock and sign for it.
 */
export function RemovalExceptionDialog({ permitId, step, user, mayRecord, mayRemove, timeZone, onClose, onRemove }: Props) {
  const owner = step.heldByName ?? 'the person who put it on';
  const device = [step.lockNumber ? `lock ${step.lockNumber}` : '', step.tagNumber ? `tag ${step.tagNumber}` : ''].filter(Boolean).join(' and ') || 'lock';
  const recorded = step.exceptionRecordedAt !== null;
  const recordedByMe = step.exceptionAuthoriserId === user.id;

  return (
    <ModalDialog
      title={`Remove ${step.label} under the exception procedure`}
      onClose={onClose}
      description={
        <div className="flex flex-col gap-2">
          <p>
            {owner} put {device} on {step.label}. A lock comes off only by the hand that put it on. When {owner} is not on site, an authoriser first records:
          </p>
          <ol className="ml-5 list-decimal">
            <li>how they checked {owner} is not on site;</li>
            <li>how and when they tried to reach {owner};</li>
            <li>how {owner} will be told before coming back to work.</li>
          </ol>
          <p>Then another technician takes the lock off and signs for it, and {owner} gets an e-mail saying so.</p>
        </div>
      }
    >
      {recorded ? (
        <div className="flex flex-col gap-3" data-testid="exception-recorded">
          <Notice tone="info" title="Exception recorded" role="status">
            {step.exceptionAuthoriserName ?? 'An authoriser'} recorded it on {formatInZone(step.exceptionRecordedAt, timeZone)}.{' '}
            {mayRemove && !recordedByMe ? 'You may now take the lock off and sign for it.' : 'A technician other than the one who recorded it now takes the lock off and signs for it.'}
          </Notice>
          <div className="flex flex-wrap justify-end gap-2">
            <Button type="button" variant="secondary" onClick={onClose} data-autofocus>
              Close
            </Button>
            {mayRemove && !recordedByMe ? (
              <Button type="button" variant="danger" onClick={onRemove}>
                Continue to remove
              </Button>
            ) : null}
          </div>
        </div>
      ) : mayRecord ? (
        <RecordForm permitId={permitId} step={step} signer={user.name} owner={owner} timeZone={timeZone} onClose={onClose} />
      ) : (
        <div className="flex flex-col gap-3">
          <Notice tone="caution" title="An authoriser must record the exception first" role="status">
            Until an authoriser records it, only {owner} may take this lock off. Ask an authoriser on this permit.
          </Notice>
          <div className="flex justify-end">
            <Button type="button" variant="secondary" onClick={onClose} data-autofocus>
              Close
            </Button>
          </div>
        </div>
      )}
    </ModalDialog>
  );
}

function RecordForm({ permitId, step, signer, owner, timeZone, onClose }: { permitId: string; step: IsolationStep; signer: string; owner: string; timeZone: string; onClose: () => void }) {
  const record = useRecordRemovalException();
  const toast = useToast();
  const [confirmed, setConfirmed] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);
  const form = useForm<ExceptionForm>({
    resolver: zodResolver(formSchema(signer)),
    defaultValues: { absenceCheck: '', contactAttempts: [{ how: '', at: isoToWallTime(new Date().toISOString(), timeZone) }], informPlan: '', password: '', signedName: '' },
  });
  const { register, formState, handleSubmit, setError, control } = form;
  const attempts = useFieldArray({ control, name: 'contactAttempts' });
  const errors = formState.errors;

  const submit = handleSubmit(async (v) => {
    setProblem(null);
    const contactAttempts = [];
    for (const [i, a] of v.contactAttempts.entries()) {
      const at = wallTimeToIso(a.at, timeZone);
      if (!at) return setError(`contactAttempts.${i}.at`, { message: 'Give a date and time.' });
      contactAttempts.push({ how: a.how.trim(), at });
    }
    // Awaited rather than per-call callbacks: the recorded step replaces this form before those would run.
    try {
      await record.mutateAsync({ permitId, stepId: step.id, body: { absenceCheck: v.absenceCheck.trim(), contactAttempts, informPlan: v.informPlan.trim(), password: v.password, signedName: v.signedName } });
    } catch (err) {
      return setProblem(placeServerErrors(err, setError, (p) => (knownField.test(p) ? (p as Path<ExceptionForm>) : null)));
    }
    toast('success', `Exception recorded for ${step.label}. A technician may now take the lock off and sign for it.`);
    onClose();
  });

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-3" data-testid="exception-form">
      {problem ? (
        <Notice tone="danger" role="alert" title="Not recorded">
          {problem}
        </Notice>
      ) : null}
      <AbsenceRecordFields form={form} attempts={attempts} who={owner} timeZone={timeZone} autoFocus />
      <TextAreaField label={`How ${owner} will be told before coming back to work`} {...register('informPlan')} error={errors.informPlan?.message} />
      <TextField label="Your password" type="password" autoComplete="current-password" {...register('password')} error={errors.password?.message} />
      <TextField label={`Type your name as it appears: ${signer}`} autoComplete="off" spellCheck={false} {...register('signedName')} error={errors.signedName?.message} />
      <ConfirmBox checked={confirmed} onChange={setConfirmed}>
        I have checked that {owner} is not on site, tried to reach them as recorded above, and will make sure they are told before they come back to work.
      </ConfirmBox>
      <div className="flex flex-wrap justify-end gap-2">
        <Button type="button" variant="secondary" onClick={onClose}>
          Cancel
        </Button>
        <Button type="submit" busy={record.isPending} disabled={!confirmed}>
          Sign: record the exception
        </Button>
      </div>
    </form>
  );
}
