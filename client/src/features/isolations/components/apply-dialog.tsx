import { useState } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { BENTONITE_WEIGH_NOTE, checkAsBuiltPlug, type PlugWarning } from '@shared/calc';
import { conditionLabels } from '@shared/schemas/isolation.schema';
import { isoToWallTime, wallTimeToIso } from '@shared/time/zone';
import { isQueued } from '@client/lib/outbox/send-or-queue';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { TextAreaField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { ModalDialog } from '@client/components/ui/dialog';
import type { IsolationStep } from '@shared/types/isolations';
import { LockTagFields } from './lock-tag-fields';
import { useStepAction } from '../api/step-mutations';
import { takesLock } from '@shared/isolations/step-rules';
import { earlierNotApplied } from '@shared/isolations/lockout-rules';
import { applyFieldOf, applyFormSchema, numberOrUndefined, textOrUndefined, toApplyInput, type ApplyForm } from '../lib/step-forms';
import { placeServerErrors } from '../lib/server-errors';
import { PlugWarnings, plugTargets } from './plug-record';
import { ConfirmBox } from './confirm-box';
import { usePlugUnits } from '../lib/plug-units';
import { LineStopFields } from './line-stop-fields';

interface Props {
  permitId: string;
  step: IsolationStep;
  /** Every step of the plan, to tell whether an earlier one is still to go on. */
  steps: IsolationStep[];
  timeZone: string;
  onClose: () => void;
}

interface FormProps extends Omit<Props, 'onClose'> {
  /** Recorded (or kept on the device to send later). */
  onDone: () => void;
  onCancel: () => void;
  /** On its own screen on a phone: the buttons stay at the bottom of the screen, within thumb reach. */
  screen?: boolean;
}

function liveWarnings(diameterIn: number | null, v: { bentoniteLb?: number; waterLb?: number; lengthIn?: number }): PlugWarning[] {
  if (!diameterIn || !v.bentoniteLb || !v.waterLb || !v.lengthIn) return [];
  try {
    return checkAsBuiltPlug({ diameterIn, bentoniteLb: v.bentoniteLb, waterLb: v.waterLb, lengthIn: v.lengthIn });
  } catch {
    return [];
  }
}

/** Applying one step: the dialog on the plan and the technician's task screen both use it. */
export function ApplyDialog({ permitId, step, steps, timeZone, onClose }: Props) {
  return (
    <ModalDialog title={`Apply ${step.label}`} onClose={onClose} description={<p>Required condition: {conditionLabels[step.condition]}.</p>}>
      <ApplyStepForm permitId={permitId} step={step} steps={steps} timeZone={timeZone} onDone={onClose} onCancel={onClose} />
    </ModalDialog>
  );
}

export function ApplyStepForm({ permitId, step, steps, timeZone, onDone, onCancel, screen = false }: FormProps) {
  const lockNeeded = takesLock(step.kind);
  const isPlug = step.kind === 'plug';
  const showLockFields = !isPlug;
  const apply = useStepAction('apply');
  const toast = useToast();
  const [confirmed, setConfirmed] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);
  const earlier = earlierNotApplied(step, steps);
  const [serverSaysOrder, setServerSaysOrder] = useState<string | null>(null);
  const outOfOrder = earlier.length > 0 || serverSaysOrder !== null;
  const form = useForm<ApplyForm>({
    resolver: zodResolver(applyFormSchema(step.kind, outOfOrder)),
    defaultValues: { lockId: '', tagId: '', appliedAt: isoToWallTime(new Date().toISOString(), timeZone) },
  });
  const { register, formState, handleSubmit, setError, control } = form;
  const [bentoniteLb, waterLb, lengthIn] = useWatch({ control, name: ['bentoniteLb', 'waterLb', 'lengthIn'] });
  const target = isPlug ? plugTargets(step.plugDiameterIn) : null;
  const warnings = isPlug ? liveWarnings(step.plugDiameterIn, { bentoniteLb, waterLb, lengthIn }) : [];
  const num = { setValueAs: numberOrUndefined };
  // Weights are typed in the tenant's unit and held in lb, as the record keeps them.
  const units = usePlugUnits();
  const weight = { setValueAs: (v: unknown) => units.toLb(numberOrUndefined(v)) };

  const submit = handleSubmit((v) => {
    setProblem(null);
    const appliedAt = wallTimeToIso(v.appliedAt, timeZone);
    if (!appliedAt) return setError('appliedAt', { message: 'Give a date and time.' });
    apply.mutate(
      { permitId, stepId: step.id, body: toApplyInput(step.kind, v, appliedAt) },
      {
        onSuccess: (saved) => {
          if (isQueued(saved)) toast('success', 'Saved on this device; it will send when you have signal.');
          else toast('success', `${saved.label} recorded as applied${saved.lockNumber ? ` with lock ${saved.lockNumber}` : ''}.`);
          onDone();
        },
        onError: (err) => {
          // A lock or tag already on another isolation: say so beside the field chosen.
          if (err instanceof ApiError && err.status === 409 && /^(Lock|Tag) /.test(err.message)) {
            setError(err.message.startsWith('Lock') ? 'lockId' : 'tagId', { message: err.message });
            return;
          }
          // Out of the plan's order: the server names what goes on first; the reason field opens beside its message.
          if (err instanceof ApiError && err.details.some((d) => d.path === 'outOfOrderReason')) setServerSaysOrder(err.message);
          setProblem(placeServerErrors(err, setError, applyFieldOf));
        },
      },
    );
  });

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-3" data-testid="apply-form">
        {problem ? (
          <Notice tone="danger" role="alert" title="Not recorded">
            {problem}
          </Notice>
        ) : null}
        {showLockFields ? <LockTagFields register={register} errors={formState.errors} lockNeeded={lockNeeded} /> : null}
        <TextField label={`Time applied (${timeZone})`} type="datetime-local" {...register('appliedAt')} error={formState.errors.appliedAt?.message} data-autofocus={showLockFields ? undefined : true} />
        {isPlug ? (
          <fieldset className="flex flex-col gap-3 rounded-md border border-line p-3">
            <legend className="px-1 text-sm font-semibold">Plug as built</legend>
            <TextField
              label={`Bentonite used (${units.massUnit})`}
              type="number"
              inputMode="decimal"
              step="any"
              min={0}
              {...register('bentoniteLb', weight)}
              error={formState.errors.bentoniteLb?.message}
              hint={target ? `Target ${units.mass(target.bentoniteLb)}` : undefined}
            />
            <p className="text-sm text-ink-soft">{BENTONITE_WEIGH_NOTE}</p>
            <TextField
              label={`Water used (${units.massUnit})`}
              type="number"
              inputMode="decimal"
              step="any"
              min={0}
              {...register('waterLb', weight)}
              error={formState.errors.waterLb?.message}
              hint={target ? `Target ${units.water(target.waterLb)}; paste ${units.mass(target.mudLbRange[0])} to ${units.mass(target.mudLbRange[1])} in all` : undefined}
            />
            <TextField
              label="Plug length built (in)"
              type="number"
              inputMode="decimal"
              step="any"
              min={0}
              {...register('lengthIn', num)}
              error={formState.errors.lengthIn?.message}
              hint={target ? `At least ${Number(target.plugLengthIn.toFixed(1))} in` : undefined}
            />
            <div aria-live="polite">
              <PlugWarnings warnings={warnings} title="These figures are outside the rules; the authoriser will have to acknowledge them" />
            </div>
          </fieldset>
        ) : null}
        {step.kind === 'line_stop' ? <LineStopFields register={register} errors={formState.errors} /> : null}
        {outOfOrder ? (
          <>
            <Notice tone="caution" title="Out of the plan's order" role="status">
              {serverSaysOrder ?? `The plan puts ${earlier.map((s) => s.label).join(', ')} on first. Apply ${earlier.length === 1 ? 'it' : 'them'} first, or say why this one goes on now.`}
            </Notice>
            <TextAreaField label="Reason for applying it now" {...register('outOfOrderReason', { setValueAs: textOrUndefined })} error={formState.errors.outOfOrderReason?.message} />
          </>
        ) : null}
        <ConfirmBox checked={confirmed} onChange={setConfirmed}>
          I confirm {step.label} is in the required condition ({conditionLabels[step.condition].toLowerCase()}) and the record above is what I did.
        </ConfirmBox>
        <div className={screen ? 'sticky bottom-0 z-10 flex gap-2 border-t border-line bg-surface py-3 [&>button]:min-h-12 [&>button]:flex-1' : 'flex flex-wrap justify-end gap-2'}>
          <Button type="button" variant="secondary" onClick={onCancel}>
            Cancel
          </Button>
          <Button type="submit" busy={apply.isPending} disabled={!confirmed}>
            Record as applied
          </Button>
        </div>
      </form>
  );
}
