import { useState } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { conditionLabels, pressureUnits, verificationLabels, verificationMethods, verifyStepInputSchema, type VerifyStepInput } from '@shared/schemas/isolation.schema';
import { formatInZone } from '@shared/time/zone';
import { isQueued } from '@client/lib/outbox/send-or-queue';
import { Button } from '@client/components/ui/button';
import { SelectField, TextAreaField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { ModalDialog } from '@client/components/ui/dialog';
import type { IsolationStep } from '@shared/types/isolations';
import { useStepAction } from '../api/step-mutations';
import { numberOrUndefined, textOrUndefined } from '../lib/step-forms';
import { placeServerErrors } from '../lib/server-errors';
import { ConfirmBox } from './confirm-box';

const fields = ['method', 'reading', 'unit', 'notes'] as const;
const pressureOnly = pressureUnits.filter((u) => u !== 'in' && u !== 'mm');

/** What the verifier is asked to check, read out with the dialog's title or shown at the top of the task screen. */
export function VerifyIntro({ step, timeZone }: { step: IsolationStep; timeZone: string }) {
  return (
    <p>
      {conditionLabels[step.condition]}. Applied by {step.appliedByName ?? 'someone'} {formatInZone(step.appliedAt, timeZone)}
      {step.lockNumber ? ` with lock ${step.lockNumber}` : ''}. Someone other than the person who applied it must verify it.
    </p>
  );
}

export function VerifyDialog({ permitId, step, timeZone, onClose }: { permitId: string; step: IsolationStep; timeZone: string; onClose: () => void }) {
  return (
    <ModalDialog title={`Verify ${step.label}`} onClose={onClose} description={<VerifyIntro step={step} timeZone={timeZone} />}>
      <VerifyStepForm permitId={permitId} step={step} onDone={onClose} onCancel={onClose} />
    </ModalDialog>
  );
}

/** Verifying one step: the dialog on the plan and the task screen both use it. `screen`: the buttons stay within thumb reach. */
export function VerifyStepForm({ permitId, step, onDone, onCancel, screen = false }: { permitId: string; step: IsolationStep; onDone: () => void; onCancel: () => void; screen?: boolean }) {
  const verify = useStepAction('verify');
  const toast = useToast();
  const [confirmed, setConfirmed] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);
  const form = useForm<VerifyStepInput>({
    resolver: zodResolver(verifyStepInputSchema),
    defaultValues: { method: step.kind === 'plug' ? 'plug_length' : 'position_checked', unit: step.kind === 'plug' ? 'in' : undefined },
  });
  const { register, formState, handleSubmit, setError, control } = form;
  const method = useWatch({ control, name: 'method' });
  const needsReading = method === 'pressure_reading' || method === 'plug_length';
  const units = method === 'plug_length' ? (['in', 'mm'] as const) : pressureOnly;

  const submit = handleSubmit((v) => {
    setProblem(null);
    const body: VerifyStepInput = needsReading ? v : { method: v.method, notes: v.notes };
    verify.mutate(
      { permitId, stepId: step.id, body },
      {
        onSuccess: (saved) => {
          toast('success', isQueued(saved) ? 'Saved on this device; it will send when you have signal.' : `${saved.label} verified.`);
          onDone();
        },
        onError: (err) => setProblem(placeServerErrors(err, setError, (p) => fields.find((f) => f === p) ?? null)),
      },
    );
  });

  return (
      <form noValidate onSubmit={submit} className="flex flex-col gap-3" data-testid="verify-form">
        {problem ? (
          <Notice tone="danger" role="alert" title="Not verified">
            {problem}
          </Notice>
        ) : null}
        <SelectField label="How you checked it" data-autofocus {...register('method')} error={formState.errors.method?.message}>
          {verificationMethods.map((m) => (
            <option key={m} value={m}>
              {verificationLabels[m]}
            </option>
          ))}
        </SelectField>
        {needsReading ? (
          <div className="grid gap-3 sm:grid-cols-2">
            <TextField
              label={method === 'plug_length' ? 'Length measured' : 'Pressure read'}
              type="number"
              inputMode="decimal"
              step="any"
              {...register('reading', { setValueAs: numberOrUndefined })}
              error={formState.errors.reading?.message}
            />
            <SelectField label="Unit" {...register('unit', { setValueAs: textOrUndefined })} error={formState.errors.unit?.message}>
              <option value="">Choose…</option>
              {units.map((u) => (
                <option key={u} value={u}>
                  {u}
                </option>
              ))}
            </SelectField>
          </div>
        ) : null}
        <TextAreaField label="Notes (optional)" {...register('notes', { setValueAs: textOrUndefined })} error={formState.errors.notes?.message} />
        <ConfirmBox checked={confirmed} onChange={setConfirmed}>
          I checked {step.label} myself and it is in the required condition.
        </ConfirmBox>
        <div className={screen ? 'sticky bottom-0 z-10 flex gap-2 border-t border-line bg-surface py-3 [&>button]:min-h-12 [&>button]:flex-1' : 'flex flex-wrap justify-end gap-2'}>
          <Button type="button" variant="secondary" onClick={onCancel}>
            Cancel
          </Button>
          <Button type="submit" busy={verify.isPending} disabled={!confirmed}>
            Record verification
          </Button>
        </div>
      </form>
  );
}
