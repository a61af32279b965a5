import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { gaugeUnitLabels, gaugeUnits } from '@shared/calc/pressure';
import { markLongTermInputSchema, recordRecheckInputSchema, type MarkLongTermInput, type RecordRecheckInput } from '@shared/schemas/certificates.schema';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { SelectField, TextAreaField, TextField } from '@client/components/ui/field';
import { useToast } from '@client/components/ui/toast';
import { useMarkLongTerm, useRecordRecheck } from '../api/certificate-mutations';

/** Puts the server's field errors beside the fields, or says the one message when it names none. */
function onServerError<T extends Record<string, unknown>>(setError: (path: keyof T, e: { message: string }) => void, toast: (tone: 'error', m: string) => void) {
  return (err: Error) => (err instanceof ApiError && err.details.some((d) => d.path !== 'certificate') ? err.details.forEach((d) => setError(d.path as keyof T, { message: d.message })) : toast('error', err.message));
}

export function LongTermForm({ id }: { id: string }) {
  const mark = useMarkLongTerm(id);
  const toast = useToast();
  const form = useForm<MarkLongTermInput>({ resolver: zodResolver(markLongTermInputSchema), defaultValues: { reason: '' } });
  return (
    <form
      noValidate
      className="flex flex-col gap-3"
      onSubmit={form.handleSubmit((v) => mark.mutate(v, { onSuccess: () => toast('success', 'The isolation is now long-term.'), onError: onServerError<MarkLongTermInput>(form.setError, toast) }))}
    >
      <TextAreaField
        label="Why the isolation stays in place after its permits"
        hint="The permits then finish without taking these isolations off; re-checks fall due at the site’s interval."
        {...form.register('reason')}
        error={form.formState.errors.reason?.message}
      />
      <Button type="submit" busy={mark.isPending}>
        Keep as a long-term isolation
      </Button>
    </form>
  );
}

export function RecheckForm({ id, limit }: { id: string; limit: string }) {
  const record = useRecordRecheck(id);
  const toast = useToast();
  const form = useForm<RecordRecheckInput>({
    resolver: zodResolver(recordRecheckInputSchema),
    defaultValues: { locksAndTagsIntact: false, valvesStillClosed: false, gaugeUnit: 'psig' },
  });
  const e = form.formState.errors;
  return (
    <form
      noValidate
      className="flex flex-col gap-3"
      onSubmit={form.handleSubmit((v) =>
        record.mutate(v, {
          onSuccess: (c) => {
            const failed = 'problem' in c && c.problem;
            toast(failed ? 'error' : 'success', failed ? `Re-check failed: ${c.problem}. The authoriser and control room have been told.` : 'Re-check recorded: the isolation holds.');
            form.reset();
          },
          onError: onServerError<RecordRecheckInput>(form.setError, toast),
        }),
      )}
    >
      <label className="flex min-h-11 items-center gap-3">
        <input type="checkbox" className="size-6" {...form.register('locksAndTagsIntact')} />
        Every lock and tag is on and intact
      </label>
      <label className="flex min-h-11 items-center gap-3">
        <input type="checkbox" className="size-6" {...form.register('valvesStillClosed')} />
        Every valve is still fully closed
      </label>
      <div className="grid gap-3 sm:grid-cols-2">
        <TextField
          label="Gauge reading at the section"
          hint={`No build-up: at most ${limit}.`}
          inputMode="decimal"
          {...form.register('gaugeReading', { setValueAs: (v: string) => (v === '' ? undefined : Number(v)) })}
          error={e.gaugeReading?.message}
        />
        <SelectField label="Unit" {...form.register('gaugeUnit')} error={e.gaugeUnit?.message}>
          {gaugeUnits.map((u) => (
            <option key={u} value={u}>
              {gaugeUnitLabels[u]}
            </option>
          ))}
        </SelectField>
      </div>
      <TextAreaField label="Notes (optional)" {...form.register('notes', { setValueAs: (v: string) => v || undefined })} error={e.notes?.message} />
      <Button type="submit" busy={record.isPending}>
        Record re-check
      </Button>
    </form>
  );
}
