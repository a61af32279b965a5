import { useMemo } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { atmosphereRequestSchema, type AtmosphereRequest } from '@shared/schemas/calc.schema';
import { ApiError } from '@client/lib/api-client';
import { TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { Card, Loading } from '@client/components/ui/page';
import { AtmosphereReadout } from '@client/components/atmosphere/atmosphere-readout';
import { useAtmosphereAssessment } from '../api/get-atmosphere-assessment';
import { useDebouncedValue } from '../hooks/use-debounced-value';

type FormValues = z.input<typeof atmosphereRequestSchema>;
type ReadingField = keyof AtmosphereRequest['readings'];

const READINGS: { field: ReadingField; label: string; hint: string }[] = [
  { field: 'o2Pct', label: 'Oxygen, O₂ (% vol)', hint: 'Fresh air is about 20.9.' },
  { field: 'lelPct', label: 'Flammable gas (% LEL)', hint: 'Per cent of the lower explosive limit.' },
  { field: 'h2sPpm', label: 'H₂S (ppm)', hint: 'Leave empty if not measured.' },
  { field: 'coPpm', label: 'CO (ppm)', hint: 'Leave empty if not measured.' },
];

/** Try a set of readings against the tenant's limits; nothing is recorded. */
export function AtmosphereSection() {
  const form = useForm<FormValues, unknown, AtmosphereRequest>({
    resolver: zodResolver(atmosphereRequestSchema),
    mode: 'onChange',
    defaultValues: { readings: { o2Pct: '', lelPct: '', h2sPpm: '', coPpm: '' }, hotWork: false },
  });
  const values = useWatch({ control: form.control });
  const key = JSON.stringify(values);
  const settledKey = useDebouncedValue(key, 300);
  const request = useMemo(() => {
    const parsed = atmosphereRequestSchema.safeParse(JSON.parse(settledKey));
    if (!parsed.success) return null;
    const typed = Object.values(parsed.data.readings).some((v) => v !== null && v !== undefined);
    return typed ? parsed.data : null;
  }, [settledKey]);
  const assessment = useAtmosphereAssessment(request);
  const settling = key !== settledKey || assessment.isFetching;
  const errors = form.formState.errors;
  const serverError = (path: string) => (assessment.error instanceof ApiError ? assessment.error.fieldMessage(path) : undefined);

  return (
    <Card className="flex flex-col gap-4">
      <div>
        <h2 className="text-xl font-bold text-brand-strong">Atmosphere check</h2>
        <p className="text-sm text-ink-soft">
          Type the readings to see them judged against this tenant&apos;s limits. Nothing is recorded here; a gas test for a permit is recorded on the permit.
        </p>
      </div>
      <form noValidate className="flex flex-col gap-3" onSubmit={(e) => e.preventDefault()} aria-label="Gas readings">
        <div className="grid gap-3 sm:grid-cols-2">
          {READINGS.map((r) => (
            <TextField
              key={r.field}
              label={r.label}
              hint={r.hint}
              inputMode="decimal"
              autoComplete="off"
              {...form.register(`readings.${r.field}`)}
              error={errors.readings?.[r.field]?.message ?? serverError(`readings.${r.field}`)}
            />
          ))}
        </div>
        <label className="flex min-h-11 cursor-pointer items-center gap-3 self-start rounded-md border border-line bg-surface px-3">
          <input type="checkbox" className="size-5 accent-brand" {...form.register('hotWork')} />
          <span className="font-medium">Hot work is under way or about to start</span>
        </label>
      </form>

      <section aria-label="Atmosphere verdict">
        {assessment.error && !(assessment.error instanceof ApiError && assessment.error.details.length) ? (
          <Notice tone="danger" role="alert">
            {assessment.error.message}
          </Notice>
        ) : null}
        {request && assessment.data ? (
          <AtmosphereReadout result={assessment.data} busy={settling} />
        ) : request && settling ? (
          <Loading label="Checking the readings…" />
        ) : (
          <p className="text-sm text-ink-soft">Type at least one reading to see the verdict. Oxygen and flammable gas are always needed for a pass.</p>
        )}
      </section>
    </Card>
  );
}
