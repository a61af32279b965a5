import { useState } from 'react';
import { signatureMessages, signedNameMatches } from '@shared/permit/signed-name';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { removeStepInputSchema, type RemoveStepInput } from '@shared/schemas/isolation.schema';
import { isQueued } from '@client/lib/outbox/send-or-queue';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { TextAreaField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { ModalDialog } from '@client/components/ui/dialog';
import type { IsolationStep } from '@shared/types/isolations';
import { useStepAction } from '../api/step-mutations';
import { appliedAfter } from '@shared/isolations/lockout-rules';
import { textOrUndefined } from '../lib/step-forms';
import { placeServerErrors } from '../lib/server-errors';
import { ConfirmBox } from './confirm-box';

const fields = ['note', 'plugOutcome', 'outOfOrderReason', 'password', 'signedName'] as const;

const same = (a: string | undefined, b: string) => signedNameMatches(a, b);

/** `signer`: the remover's name when they sign for taking off someone else's lock under a recorded exception. */
const removeFormSchema = (isPlug: boolean, needsReason: boolean, signer: string | null) =>
  removeStepInputSchema.superRefine((v, ctx) => {
    if (isPlug && !v.plugOutcome) ctx.addIssue({ code: 'custom', path: ['plugOutcome'], message: 'Say whether the plug was removed or left to be displaced by product.' });
    if (needsReason && !v.outOfOrderReason) ctx.addIssue({ code: 'custom', path: ['outOfOrderReason'], message: 'Give the reason for taking this one off out of order.' });
    if (signer === null) return;
    if (!v.password) ctx.addIssue({ code: 'custom', path: ['password'], message: signatureMessages.passwordMissing });
    if (!same(v.signedName, signer)) ctx.addIssue({ code: 'custom', path: ['signedName'], message: signatureMessages.name(signer) });
  });

interface Props {
  permitId: string;
  step: IsolationStep;
  steps: IsolationStep[];
  /** Set when the remover takes off someone else's lock or tag under the exception an authoriser recorded: they sign. */
  signer?: string;
  onClose: () => void;
}

export const removeTitle = (step: IsolationStep, signer?: string) => (signer ? `Remove ${step.label} under the exception procedure` : `Remove ${step.label}`);
export const removeIntro = 'Taking an isolation off is recorded and cannot be undone. Each device comes off in reverse order of application.';

export function RemoveDialog({ permitId, step, steps, signer, onClose }: Props) {
  return (
    <ModalDialog title={removeTitle(step, signer)} onClose={onClose} description={<p>{removeIntro}</p>}>
      <RemoveStepForm permitId={permitId} step={step} steps={steps} signer={signer} onDone={onClose} onCancel={onClose} />
    </ModalDialog>
  );
}

interface FormProps extends Omit<Props, 'onClose'> {
  onDone: () => void;
  onCancel: () => void;
  /** On its own screen on a phone: the buttons stay at the bottom of the screen, within thumb reach. */
  screen?: boolean;
}

/** Removing one step: the dialog on the plan and the task screen both use it. */
export function RemoveStepForm({ permitId, step, steps, signer, onDone, onCancel, screen = false }: FormProps) {
  const remove = useStepAction('remove');
  const toast = useToast();
  const isPlug = step.kind === 'plug';
  const later = appliedAfter(step, steps);
  const [serverSaysOrder, setServerSaysOrder] = useState<string | null>(null);
  const needsReason = later.length > 0 || serverSaysOrder !== null;
  const [confirmed, setConfirmed] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);
  const form = useForm<RemoveStepInput>({ resolver: zodResolver(removeFormSchema(isPlug, needsReason, signer ?? null)), defaultValues: {} });
  const { register, formState, handleSubmit, setError } = form;

  const submit = handleSubmit((v) => {
    setProblem(null);
    remove.mutate(
      { permitId, stepId: step.id, body: v },
      {
        onSuccess: (saved) => {
          if (isQueued(saved)) toast('success', 'Saved on this device; it will send when you have signal.');
          else toast('success', `${saved.label} removed${saved.lockNumber ? `; lock ${saved.lockNumber} is back in the store` : ''}.`);
          onDone();
        },
        onError: (err) => {
          // Out of order: the server names what comes off first; ask for the reason beside its message.
          if (err instanceof ApiError && err.status === 422 && /reverse order/.test(err.message)) {
            setServerSaysOrder(err.message);
            setError('outOfOrderReason', { message: 'Give the reason for taking this one off out of order.' });
            return;
          }
          setProblem(placeServerErrors(err, setError, (p) => fields.find((f) => f === p) ?? null));
        },
      },
    );
  });

  return (
      <form noValidate onSubmit={submit} className="flex flex-col gap-3" data-testid="remove-form">
        {problem ? (
          <Notice tone="danger" role="alert" title="Not removed">
            {problem}
          </Notice>
        ) : null}
        {isPlug ? (
          <fieldset className="flex flex-col gap-2" aria-describedby={formState.errors.plugOutcome ? 'plug-outcome-error' : undefined}>
            <legend className="text-sm font-semibold">What happened to the plug</legend>
            {(
              [
                ['removed', 'Removed from the pipe'],
                ['displaced_by_product', 'Left in to be displaced by product'],
              ] as const
            ).map(([value, label], i) => (
              <label key={value} className="flex min-h-11 items-center gap-3 text-base">
                <input type="radio" value={value} className="size-5" {...register('plugOutcome')} data-autofocus={i === 0 ? true : undefined} />
                {label}
              </label>
            ))}
            {formState.errors.plugOutcome ? (
              <p id="plug-outcome-error" role="alert" className="text-sm font-medium text-danger">
                {formState.errors.plugOutcome.message}
              </p>
            ) : null}
          </fieldset>
        ) : null}
        {needsReason ? (
          <>
            <Notice tone="caution" title="Out of order" role="status">
              {serverSaysOrder ?? `Isolations come off in reverse order of application: first ${later.map((s) => s.label).join(', ')}.`}
            </Notice>
            <TextAreaField label="Reason for removing it now" {...register('outOfOrderReason', { setValueAs: textOrUndefined })} error={formState.errors.outOfOrderReason?.message} />
          </>
        ) : null}
        <TextAreaField label="Note (optional)" {...register('note', { setValueAs: textOrUndefined })} error={formState.errors.note?.message} data-autofocus={isPlug ? undefined : true} />
        {signer ? (
          <>
            <Notice tone="caution" title={`This is ${step.heldByName ?? 'someone else'}'s lock`} role="status">
              {step.exceptionAuthoriserName ?? 'An authoriser'} recorded that they are not on site. You sign for taking it off; they get an e-mail saying so.
            </Notice>
            <TextField label="Your password" type="password" autoComplete="current-password" {...register('password')} error={formState.errors.password?.message} />
            <TextField label={`Type your name as it appears: ${signer}`} autoComplete="off" spellCheck={false} {...register('signedName')} error={formState.errors.signedName?.message} />
          </>
        ) : null}
        <ConfirmBox checked={confirmed} onChange={setConfirmed}>
          I have checked that people are clear and that those affected know {step.label} is coming off.
        </ConfirmBox>
        <div className={screen ? 'sticky bottom-0 z-10 flex gap-2 border-t border-line bg-surface py-3 [&>button]:min-h-12 [&>button]:flex-1' : 'flex flex-wrap justify-end gap-2'}>
          <Button type="button" variant="secondary" onClick={onCancel}>
            Cancel
          </Button>
          <Button type="submit" variant="danger" busy={remove.isPending} disabled={!confirmed}>
            {signer ? 'Sign: remove isolation' : 'Remove isolation'}
          </Button>
        </div>
      </form>
  );
}
