import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { formatPressure, gaugeUnitLabels, gaugeUnits, type GaugeUnit } from '@shared/calc/pressure';
import { isBleedKind } from '@shared/isolations/readiness';
import { isInPlace } from '@shared/isolations/step-rules';
import type { IsolationStep } from '@shared/types/isolations';
import type { IsolationPlanReadiness, IsolationProving } from '@shared/types/isolation-proving';
import { formatInZone, isoToWallTime, wallTimeToIso } from '@shared/time/zone';
import { Button } from '@client/components/ui/button';
import { GaugeUnitOptions } from './gauge-unit-options';
import { SelectField, TextAreaField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { useEndProving, useStartProving } from '../api/proving-mutations';
import { placeServerErrors } from '../lib/server-errors';
import { numberOrUndefined, textOrUndefined } from '../lib/step-forms';

const formSchema = (starting: boolean) =>
  z
    .object({
      stepId: z.string(),
      reading: z.number({ message: 'Enter the pressure the gauge shows, as a number.' }),
      unit: z.enum(gaugeUnits, { message: 'Choose psig, kPa or bar.' }),
      readAt: z.string().min(1, 'Give the time of the reading.'),
      notes: z.string().max(1000).optional(),
    })
    .superRefine((v, ctx) => {
      if (starting && !v.stepId) ctx.addIssue({ code: 'custom', path: ['stepId'], message: 'Choose the vent or drain where you read the gauge.' });
    });
type ProvingFormValues = z.infer<ReturnType<typeof formSchema>>;
const fields = ['stepId', 'reading', 'unit', 'readAt', 'notes'] as const;

interface Props {
  permitId: string;
  steps: IsolationStep[];
  running: IsolationProving | null;
  limits: IsolationPlanReadiness['limits'];
  timeZone: string;
}

/**
 * The hold test that proves the section dead (HSE HSG253): the first reading at a vent or drain once
 * every isolating device is on, then the reading at the end of the site's hold time. Read by someone
 * who applied none of the isolating devices; the server refuses anyone else, in words.
 */
export function ProvingForm({ permitId, steps, running, limits, timeZone }: Props) {
  const start = useStartProving(permitId);
  const end = useEndProving(permitId);
  const toast = useToast();
  const [problem, setProblem] = useState<string | null>(null);
  const bleeds = steps.filter((s) => isBleedKind(s.kind) && isInPlace(s.status));
  const form = useForm<ProvingFormValues>({
    resolver: zodResolver(formSchema(!running)),
    defaultValues: { stepId: bleeds.length === 1 ? bleeds[0].id : '', unit: (running?.unit ?? limits.unit) as GaugeUnit, readAt: isoToWallTime(new Date().toISOString(), timeZone) },
  });
  const { register, formState, handleSubmit, setError } = form;
  const holdEnds = running ? new Date(new Date(running.startedAt).getTime() + running.holdMinutes * 60_000).toISOString() : null;

  const submit = handleSubmit(async (v) => {
    setProblem(null);
    const readAt = wallTimeToIso(v.readAt, timeZone);
    if (!readAt) return setError('readAt', { message: 'Give a date and time.' });
    try {
      if (running) {
        const ended = await end.mutateAsync({ provingId: running.id, body: { reading: v.reading, readAt, notes: v.notes } });
        if (ended.result === 'proved') toast('success', `Section proved dead at ${ended.at}.`);
        else toast('error', `Hold test failed: ${ended.failure}.`);
      } else {
        const started = await start.mutateAsync({ stepId: v.stepId, reading: v.reading, unit: v.unit, readAt, notes: v.notes });
        toast('success', `Hold test started at ${started.at}; take the end reading after ${started.holdMinutes} minutes.`);
      }
      form.reset({ ...form.getValues(), reading: undefined as unknown as number, notes: undefined, readAt: isoToWallTime(new Date().toISOString(), timeZone) });
    } catch (err) {
      setProblem(placeServerErrors(err, setError, (p) => fields.find((f) => f === p) ?? null));
    }
  });

  if (!running && !bleeds.length)
    return <p className="text-sm text-ink-soft">Apply a vent or drain of the plan first: the gauge that proves the section dead is read there.</p>;

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-3 rounded-card border border-line p-3" data-testid="proving-form" aria-label={running ? 'Record the end of the hold test' : 'Start a hold test'}>
      <p className="font-semibold">{running ? 'Record the end of the hold test' : 'Start a hold test'}</p>
      <p className="text-sm text-ink-soft">
        {running
          ? `Running at ${running.at} since ${formatInZone(running.startedAt, timeZone)} (${formatPressure(running.startReading, running.unit)}, read by ${running.startedByName}). Hold ${running.holdMinutes} minutes: the end reading can be taken from ${formatInZone(holdEnds, timeZone)}. Any rise fails the test.`
          : `Once every isolating device is on, read the gauge at a vent or drain. The site’s limit for a dead section is ${formatPressure(limits.maxPressure, limits.unit)}, held ${limits.holdMinutes} minutes without build-up. A valve checked for position is not proved until the section holds. Someone who applied none of the isolating devices reads the gauge.`}
      </p>
      {problem ? (
        <Notice tone="danger" role="alert" title="Not recorded">
          {problem}
        </Notice>
      ) : null}
      {!running ? (
        <SelectField label="Vent or drain where the gauge is read" {...register('stepId')} error={formState.errors.stepId?.message}>
          <option value="">Choose…</option>
          {bleeds.map((s) => (
            <option key={s.id} value={s.id}>
              {s.label}
            </option>
          ))}
        </SelectField>
      ) : null}
      <div className="grid gap-3 sm:grid-cols-2">
        <TextField label="Gauge reading" type="number" inputMode="decimal" step="any" {...register('reading', { setValueAs: numberOrUndefined })} error={formState.errors.reading?.message} />
        {running ? (
          <p className="self-end pb-3 text-sm">In {gaugeUnitLabels[running.unit]}, on the same gauge as the first reading.</p>
        ) : (
          <SelectField label="Unit" {...register('unit')} error={formState.errors.unit?.message}>
            <GaugeUnitOptions />
          </SelectField>
        )}
      </div>
      <TextField label={`Time of the reading (${timeZone})`} type="datetime-local" {...register('readAt')} error={formState.errors.readAt?.message} />
      <TextAreaField label="Notes (optional)" rows={2} maxLength={1000} {...register('notes', { setValueAs: textOrUndefined })} error={formState.errors.notes?.message} />
      <Button type="submit" busy={start.isPending || end.isPending} className="self-start">
        {running ? 'Record end reading' : 'Record first reading'}
      </Button>
    </form>
  );
}
