import { useState } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { BENTONITE_WEIGH_NOTE, checkAsBuiltPlug, type PlugWarning } from '@shared/calc';
import { conditionLabels } from '@shared/schemas/isolation.schema';
import { isoToWallTime, wallTimeToIso } from '@shared/time/zone';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { SelectField, TextAreaField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { ModalDialog } from '@client/components/ui/dialog';
import type { IsolationStep } from '@shared/types/isolations';
import { useInStore } from '../api/get-inventory';
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

function liveWarnings(diameterIn: number | null, v: { bentoniteLb?: number; waterLb?: number; lengthIn?: number }): PlugWarning[] {
  if (!diameterIn || !v.bentoniteLb || !v.waterLb || !v.lengthIn) return [];
  try {
    return checkAsBuiltPlug({ diameterIn, bentoniteLb: v.bentoniteLb, waterLb: v.waterLb, lengthIn: v.lengthIn });
  } catch {
    return [];
  }
}

export function ApplyDialog({ permitId, step, steps, timeZone, onClose }: Props) {
  const lockNeeded = takesLock(step.kind);
  const isPlug = step.kind === 'plug';
  const showLockFields = !isPlug;
  const locks = useInStore('lock');
  const tags = useInStore('tag');
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
          toast('success', `${saved.label} recorded as applied${saved.lockNumber ? ` with lock ${saved.lockNumber}` : ''}.`);
          onClose();
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
    <ModalDialog title={`Apply ${step.label}`} onClose={onClose} description={<p>Required condition: {conditionLabels[step.condition]}.</p>}>
      <form noValidate onSubmit={submit} className="flex flex-col gap-3" data-testid="apply-form">
        {problem ? (
          <Notice tone="danger" role="alert" title="Not recorded">
            {problem}
          </Notice>
        ) : null}
        {showLockFields ? (
          <>
            <SelectField
              label={lockNeeded ? 'Lock' : 'Lock (if one is used)'}
              data-autofocus
              {...register('lockId')}
              error={formState.errors.lockId?.message}
              hint={locks.data && locks.data.total > locks.data.items.length ? `Showing the first ${locks.data.items.length} of ${locks.data.total} locks in the store.` : undefined}
            >
              <option value="">{locks.isPending ? 'Loading locks…' : lockNeeded ? 'Choose a lock…' : 'No lock'}</option>
              {locks.data?.items.map((l) => (
                <option key={l.id} value={l.id}>
                  {l.number}
                  {l.holderName ? ` (held by ${l.holderName})` : ''}
                </option>
              ))}
            </SelectField>
            <SelectField label={lockNeeded ? 'Danger tag' : 'Danger tag (if one is hung)'} {...register('tagId')} error={formState.errors.tagId?.message}>
              <option value="">{tags.isPending ? 'Loading tags…' : lockNeeded ? 'Choose a tag…' : 'No tag'}</option>
              {tags.data?.items.map((t) => (
                <option key={t.id} value={t.id}>
                  {t.number}
                </option>
              ))}
            </SelectField>
            {locks.data && !locks.data.items.length ? <Notice tone="caution">No locks are in the store. Return or add locks in the register first.</Notice> : null}
          </>
        ) : null}
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
        <div className="flex flex-wrap justify-end gap-2">
          <Button type="button" variant="secondary" onClick={onClose}>
            Cancel
          </Button>
          <Button type="submit" busy={apply.isPending} disabled={!confirmed}>
            Record as applied
          </Button>
        </div>
      </form>
    </ModalDialog>
  );
}
