import { useEffect, useMemo, useRef, useState, type FormEvent } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { assessAtmosphere, CalcInputError, type AtmosphereLimits } from '@shared/calc';
import { assessOptionsFor } from '@shared/gas-tests/permit-limits';
import { instrumentStatus } from '@shared/gas-tests/instrument-status';
import { failureSummary } from '@shared/gas-tests/verdict-text';
import { isoToWallTime, wallTimeToIso } from '@shared/time/zone';
import { workUnderWayStates } from '@shared/permit/states';
import {
  gasReadingsSchema, gasTestInputSchema, gasTestPlaceLabels, gasTestPlaces, gasTestPurposeLabels, gasTestPurposes,
  type GasTestData, type GasTestInput,
} from '@shared/schemas/gas-tests.schema';
import type { GasTestResult } from '@shared/types/gas-tests';
import { isQueued } from '@client/lib/outbox/send-or-queue';
import { ApiError } from '@client/lib/api-client';
import { AtmosphereReadout } from '@client/components/atmosphere/atmosphere-readout';
import { Button } from '@client/components/ui/button';
import { SelectField, TextAreaField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { useMe } from '@client/features/auth';
import { useInstruments } from '../api/get-instruments';
import { useRecordGasTest } from '../api/record-gas-test';
import type { PermitLike } from '../lib/permit-like';
import { readLastUsed, writeLastUsed } from '../lib/last-used';

const READINGS = [
  { field: 'o2Pct', label: 'Oxygen, O₂ (% vol)', hint: 'Fresh air is about 20.9.' },
  { field: 'lelPct', label: 'Flammable gas (% LEL)', hint: 'Per cent of the lower explosive limit.' },
  { field: 'h2sPpm', label: 'H₂S (ppm)', hint: 'Hydrogen sulphide.' },
  { field: 'coPpm', label: 'CO (ppm)', hint: 'Carbon monoxide.' },
] as const;

type ReadingField = (typeof READINGS)[number]['field'];

interface Props {
  permit: PermitLike;
  limits: AtmosphereLimits;
  timeZone: string;
  requireDailyBumpTest: boolean;
  /** On its own screen on a phone: the submit button stays at the bottom of the screen, within thumb reach. */
  screen?: boolean;
}

/** Record one gas test; the verdict is worked out live as the readings are typed, against this permit's limits. */
export function RecordGasTestForm({ permit, limits, timeZone, requireDailyBumpTest, screen = false }: Props) {
  const instruments = useInstruments();
  const userId = useMe().data?.user.id ?? '';
  // The last instrument and place used on this device start the next test (read once, when the form opens).
  const [lastUsed] = useState(() => readLastUsed(userId));
  const [queued, setQueued] = useState(false);
  const record = useRecordGasTest(permit.id);
  const toast = useToast();
  const [wall, setWall] = useState(() => isoToWallTime(new Date(), timeZone));
  // Untouched, the time field means "now": the moment of recording, not the minute the form opened.
  const [timeTouched, setTimeTouched] = useState(false);
  const [last, setLast] = useState<GasTestResult | null>(null);
  const live = workUnderWayStates.includes(permit.state);
  const form = useForm<GasTestInput, unknown, GasTestData>({
    resolver: zodResolver(gasTestInputSchema),
    defaultValues: {
      instrumentId: '', place: lastUsed?.place ?? 'work_area', placeNote: lastUsed?.placeNote ?? '', purpose: live ? 'repeat' : 'before_work', testedAt: wallTimeToIso(isoToWallTime(new Date(), timeZone), timeZone),
      readings: { o2Pct: '', lelPct: '', h2sPpm: '', coPpm: '' }, notes: '',
    },
  });
  const errors = form.formState.errors;
  const readings = useWatch({ control: form.control, name: 'readings' });
  const place = useWatch({ control: form.control, name: 'place' });

  const verdict = useMemo(() => {
    const values: Record<ReadingField, number | null> = { o2Pct: null, lelPct: null, h2sPpm: null, coPpm: null };
    let typed = false;
    for (const { field } of READINGS) {
      const raw = readings?.[field];
      if (raw !== undefined && raw !== '') typed = true;
      const parsed = gasReadingsSchema.shape[field].safeParse(raw);
      values[field] = parsed.success ? parsed.data : null;
    }
    if (!typed) return null;
    try {
      return assessAtmosphere(values, limits, assessOptionsFor(permit.kinds));
    } catch (err) {
      if (err instanceof CalcInputError) return null;
      throw err;
    }
  }, [readings, limits, permit.kinds]);

  const now = new Date();
  const options = (instruments.data?.items ?? []).map((i) => ({ ...i, status: instrumentStatus(i, now, timeZone, requireDailyBumpTest) }));

  // The remembered monitor is chosen once the list has come, and only while it is still usable today.
  const rememberedUsable = options.some((i) => i.id === lastUsed?.instrumentId && i.status.usable);
  useEffect(() => {
    if (rememberedUsable && lastUsed && !form.getValues('instrumentId')) form.setValue('instrumentId', lastUsed.instrumentId);
  }, [rememberedUsable, lastUsed, form]);

  // What the person changes while a test is being saved belongs to the next test: the save's answer must not clear it.
  const editedSinceSubmit = useRef(new Set<string>());
  const timeEditedSinceSubmit = useRef(false);
  useEffect(
    () =>
      // Only a person's own input carries an event type; values the form sets itself do not.
      form.subscribe({
        formState: { values: true },
        callback: ({ name, type }) => {
          if (name && type) editedSinceSubmit.current.add(name);
        },
      }),
    [form],
  );

  /** The next test starts with the same instrument and place; readings, notes and time start afresh unless changed since the save began. */
  const startNextTest = () => {
    const edited = editedSinceSubmit.current;
    const current = form.getValues();
    const keepTime = timeEditedSinceSubmit.current;
    const w = isoToWallTime(new Date(), timeZone);
    if (!keepTime) {
      setWall(w);
      setTimeTouched(false);
    }
    const readingsNext = { ...current.readings };
    for (const { field } of READINGS) if (!edited.has(`readings.${field}`)) readingsNext[field] = '';
    form.reset({ ...current, testedAt: keepTime ? current.testedAt : wallTimeToIso(w, timeZone), readings: readingsNext, notes: edited.has('notes') ? current.notes : '' });
  };

  const save = (values: GasTestData) => {
    setQueued(false);
    editedSinceSubmit.current = new Set();
    timeEditedSinceSubmit.current = false;
    record.mutate(
      { ...values, testedAt: timeTouched ? values.testedAt : new Date().toISOString(), placeNote: values.place === 'other' ? values.placeNote : undefined, notes: values.notes || undefined },
      {
        onSuccess: (result) => {
          writeLastUsed(userId, { instrumentId: values.instrumentId, place: values.place, placeNote: values.place === 'other' ? (values.placeNote ?? '') : '' });
          startNextTest();
          if (isQueued(result)) {
            setLast(null);
            setQueued(true);
            toast('success', 'Saved on this device; it will send when you have signal.');
            return;
          }
          setLast(result);
          if (result.suspended) toast('error', `Gas test failed: ${permit.number} is suspended.`);
          else toast(result.verdict === 'pass' ? 'success' : 'error', result.verdict === 'pass' ? 'Gas test recorded: pass.' : 'Gas test recorded: FAIL.');
        },
        onError: (err) => {
          if (!(err instanceof ApiError)) return toast('error', err.message);
          for (const d of err.details) form.setError((d.path === 'tester' ? 'root' : d.path) as never, { message: d.message });
          if (!err.details.length) form.setError('root', { message: err.message });
        },
      },
    );
  };
  // Handed to handleSubmit at the moment of submitting, not while drawing the form.
  const submit = (e: FormEvent<HTMLFormElement>) => form.handleSubmit(save)(e);

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-3" aria-label="Record a gas test">
      {screen ? null : <h3 className="text-lg font-semibold">Record a gas test</h3>}
      <div className="grid gap-3 sm:grid-cols-2">
        <SelectField label="Instrument" {...form.register('instrumentId')} error={errors.instrumentId?.message}>
          <option value="">Choose the monitor…</option>
          {options.map((i) => (
            <option key={i.id} value={i.id} disabled={!i.status.usable}>
              {i.model} · {i.serial}
              {i.status.usable ? '' : i.status.calibration === 'overdue' ? ' — calibration overdue' : ' — no bump test today'}
            </option>
          ))}
        </SelectField>
        <TextField
          label={`Tested at (site time, ${timeZone})`}
          type="datetime-local"
          value={wall}
          onChange={(e) => {
            setWall(e.target.value);
            setTimeTouched(true);
            timeEditedSinceSubmit.current = true;
            form.setValue('testedAt', wallTimeToIso(e.target.value, timeZone), { shouldValidate: form.formState.isSubmitted });
          }}
          error={errors.testedAt?.message}
        />
        <SelectField label="Where" {...form.register('place')} error={errors.place?.message}>
          {gasTestPlaces.map((p) => (
            <option key={p} value={p}>
              {gasTestPlaceLabels[p]}
            </option>
          ))}
        </SelectField>
        {place === 'other' ? <TextField label="Say where" {...form.register('placeNote')} error={errors.placeNote?.message} /> : null}
        <SelectField label="Which test" {...form.register('purpose')}>
          {gasTestPurposes.map((p) => (
            <option key={p} value={p}>
              {gasTestPurposeLabels[p]}
            </option>
          ))}
        </SelectField>
      </div>
      <fieldset className="grid gap-3 sm:grid-cols-2">
        <legend className="mb-1 text-sm font-semibold">Readings</legend>
        {READINGS.map((r) => (
          <TextField key={r.field} label={r.label} hint={r.hint} inputMode="decimal" autoComplete="off" {...form.register(`readings.${r.field}`)} error={errors.readings?.[r.field]?.message} />
        ))}
      </fieldset>
      <div aria-live="polite" data-testid="gas-verdict-live">
        {verdict ? <AtmosphereReadout result={verdict} /> : <p className="text-sm text-ink-soft">Type the readings to see the verdict against this permit&apos;s limits.</p>}
      </div>
      <TextAreaField label="Notes (optional)" {...form.register('notes')} error={errors.notes?.message} />
      {errors.root?.message ? (
        <Notice tone="danger" role="alert">
          {errors.root.message}
        </Notice>
      ) : null}
      {queued ? (
        <Notice tone="info" role="status" title="Saved on this device">
          It will send when you have signal.
        </Notice>
      ) : null}
      {last ? (
        <Notice tone={last.verdict === 'pass' ? 'safe' : 'danger'} role="status" title={last.verdict === 'pass' ? 'Last test recorded: pass' : 'Last test recorded: FAIL'}>
          {last.verdict === 'fail' ? <p>{failureSummary(last.assessment)}.</p> : null}
          {last.suspended ? <p className="font-semibold">Holdpoint has suspended the permit. Stop the work; resuming needs a new passing test.</p> : null}
        </Notice>
      ) : null}
      {live && verdict?.verdict === 'fail' ? (
        <Notice tone="danger" title="A failing reading stops the work">
          Recording this test suspends the permit at once and tells the lead, the authoriser and the control room.
        </Notice>
      ) : null}
      <div className={screen ? 'sticky bottom-0 z-10 border-t border-line bg-surface py-3' : ''}>
        <Button type="submit" busy={record.isPending} className={screen ? 'min-h-12 w-full' : ''}>
          Record gas test
        </Button>
      </div>
    </form>
  );
}
