import { useState } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import {
  checkInputSchema, checkKindLabels, fireWatchObservationLabels, fireWatchObservations, plugFaceLabels, plugFaces, pressureUnits,
  type CheckData, type CheckInput, type CheckKind,
} from '@shared/schemas/timed-checks.schema';
import { isoToWallTime, wallTimeToIso } from '@shared/time/zone';
import { isQueued } from '@client/lib/outbox/send-or-queue';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { SelectField, TextAreaField, TextField, LabelledOptions } from '@client/components/ui/field';
import { useToast } from '@client/components/ui/toast';
import { usePlanSteps, useRecordCheck } from '../api/checks';

const yesNo = { setValueAs: (v: string) => (v === 'yes' ? true : v === 'no' ? false : undefined) };

function KindForm({ permitId, kind, timeZone, screen }: { permitId: string; kind: CheckKind; timeZone: string; screen: boolean }) {
  const steps = usePlanSteps(permitId);
  const record = useRecordCheck(permitId);
  const toast = useToast();
  const [wall, setWall] = useState(() => isoToWallTime(new Date(), timeZone));
  const [timeTouched, setTimeTouched] = useState(false);
  const form = useForm<CheckInput, unknown, CheckData>({
    resolver: zodResolver(checkInputSchema),
    defaultValues: { kind, checkedAt: wallTimeToIso(isoToWallTime(new Date(), timeZone), timeZone), actionTaken: '', notes: '' } as CheckInput,
  });
  const errors = form.formState.errors as Record<string, { message?: string } | undefined>;
  const values = useWatch({ control: form.control }) as Record<string, unknown>;
  const problem = (kind === 'vent' && (values.vapourAwayFromWork === false || values.pressureBuilding === true)) || (kind === 'plug' && values.face && values.face !== 'intact') || (kind === 'fire_watch' && values.observation === 'hot_spot');
  const ofKind = (steps.data ?? []).filter((s) => s.kind === kind);

  const submit = form.handleSubmit((v) =>
    record.mutate({ ...v, checkedAt: timeTouched ? v.checkedAt : new Date().toISOString(), isolationStepId: v.isolationStepId || undefined, actionTaken: v.actionTaken || undefined, notes: v.notes || undefined } as CheckData, {
      onSuccess: (row) => {
        if (isQueued(row)) toast('success', 'Saved on this device; it will send when you have signal.');
        else toast(row.ok ? 'success' : 'error', row.ok ? `${checkKindLabels[kind]} recorded.` : `${checkKindLabels[kind]} recorded: problem reported to the lead and authoriser.`);
        const w = isoToWallTime(new Date(), timeZone);
        setWall(w);
        setTimeTouched(false);
        form.reset({ kind, checkedAt: wallTimeToIso(w, timeZone), actionTaken: '', notes: '' } as CheckInput);
      },
      onError: (err) => {
        if (err instanceof ApiError && err.details.length) err.details.forEach((d) => form.setError(d.path as never, { message: d.message }));
        else toast('error', err.message);
      },
    }),
  );

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-3" aria-label={`Record a ${checkKindLabels[kind].toLowerCase()}`}>
      <div className="grid gap-3 sm:grid-cols-2">
        <TextField
          label="Checked at (site time)"
          type="datetime-local"
          value={wall}
          onChange={(e) => {
            setWall(e.target.value);
            setTimeTouched(true);
            form.setValue('checkedAt', wallTimeToIso(e.target.value, timeZone));
          }}
          error={errors.checkedAt?.message}
        />
        {kind !== 'fire_watch' ? (
          <SelectField label={kind === 'vent' ? 'Which vent' : 'Which plug'} {...form.register('isolationStepId', { setValueAs: (v: string) => v || undefined })} error={errors.isolationStepId?.message}>
            <option value="">All {kind === 'vent' ? 'vents' : 'plugs'} of this permit</option>
            {ofKind.map((s) => (
              <option key={s.id} value={s.id}>
                {s.label}
              </option>
            ))}
          </SelectField>
        ) : null}
        {kind === 'vent' ? (
          <>
            <SelectField label="Is vapour directed away from the work?" {...form.register('vapourAwayFromWork' as never, yesNo)} error={errors.vapourAwayFromWork?.message}>
              <option value="">Choose…</option>
              <option value="yes">Yes, away from the work</option>
              <option value="no">No, toward the work</option>
            </SelectField>
            <SelectField label="Is pressure building behind the plug?" {...form.register('pressureBuilding' as never, yesNo)} error={errors.pressureBuilding?.message}>
              <option value="">Choose…</option>
              <option value="no">No</option>
              <option value="yes">Yes, pressure is building</option>
            </SelectField>
            <TextField label="Pressure reading (optional)" inputMode="decimal" {...form.register('pressureReading' as never)} error={errors.pressureReading?.message} />
            <SelectField label="Pressure unit" {...form.register('pressureUnit' as never, { setValueAs: (v: string) => v || undefined })} error={errors.pressureUnit?.message}>
              <option value="">—</option>
              {pressureUnits.map((u) => (
                <option key={u} value={u}>
                  {u}
                </option>
              ))}
            </SelectField>
          </>
        ) : null}
        {kind === 'plug' ? (
          <SelectField label="Plug face" {...form.register('face' as never, { setValueAs: (v: string) => v || undefined })} error={errors.face?.message}>
            <LabelledOptions values={plugFaces} labels={plugFaceLabels} blank="Choose…" />
          </SelectField>
        ) : null}
        {kind === 'fire_watch' ? (
          <SelectField label="What the fire watch found" {...form.register('observation' as never, { setValueAs: (v: string) => v || undefined })} error={errors.observation?.message}>
            <LabelledOptions values={fireWatchObservations} labels={fireWatchObservationLabels} blank="Choose…" />
          </SelectField>
        ) : null}
      </div>
      <TextAreaField label={problem ? 'Action taken (required)' : 'Action taken (if any)'} {...form.register('actionTaken')} error={errors.actionTaken?.message} />
      <TextAreaField label="Notes (optional)" {...form.register('notes')} error={errors.notes?.message} />
      <div className={screen ? 'sticky bottom-0 z-10 border-t border-line bg-surface py-3' : ''}>
        <Button type="submit" busy={record.isPending} className={screen ? 'min-h-12 w-full' : ''}>
          Record {checkKindLabels[kind].toLowerCase()}
        </Button>
      </div>
    </form>
  );
}

/**
 * Choose what was checked, then the form for that kind of check. `initialKind`: the check the person
 * came to record; `screen`: on its own screen, with the submit button kept within thumb reach.
 */
export function CheckForm({ permitId, kinds, timeZone, initialKind, screen = false }: { permitId: string; kinds: CheckKind[]; timeZone: string; initialKind?: CheckKind; screen?: boolean }) {
  const [kind, setKind] = useState<CheckKind>(initialKind && kinds.includes(initialKind) ? initialKind : kinds[0]);
  return (
    <div className="flex flex-col gap-3">
      <fieldset className="flex flex-wrap gap-2">
        <legend className="mb-1 text-sm font-semibold">What was checked</legend>
        {kinds.map((k) => (
          <label key={k} className={`flex min-h-11 cursor-pointer items-center gap-2 rounded-md border px-3 ${kind === k ? 'border-brand bg-brand-soft' : 'border-line bg-surface'}`}>
            <input type="radio" name="check-kind" className="size-5 accent-brand" checked={kind === k} onChange={() => setKind(k)} />
            {checkKindLabels[k]}
          </label>
        ))}
      </fieldset>
      <KindForm key={kind} permitId={permitId} kind={kind} timeZone={timeZone} screen={screen} />
    </div>
  );
}
