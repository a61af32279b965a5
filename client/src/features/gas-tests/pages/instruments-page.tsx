import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { subject } from '@casl/ability';
import { format, parseISO } from 'date-fns';
import { instrumentStatus, type InstrumentStatus } from '@shared/gas-tests/instrument-status';
import { instrumentInputSchema, type InstrumentInput } from '@shared/schemas/gas-tests.schema';
import type { InstrumentRow } from '@shared/types/gas-tests';
import { formatInZone, isoToWallTime, wallTimeToIso } from '@shared/time/zone';
import { ApiError } from '@client/lib/api-client';
import { Can, useAbility } from '@client/lib/ability';
import { useMe } from '@client/features/auth';
import { Button } from '@client/components/ui/button';
import { TextField } from '@client/components/ui/field';
import { Card, EmptyState, Loading, PageHeader } from '@client/components/ui/page';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { useInstruments } from '../api/get-instruments';
import { useCreateInstrument, useUpdateInstrument } from '../api/instrument-mutations';
import { useSiteTimeZone } from '../lib/site-time';
import { useNow } from '../hooks/use-now';

function AddInstrument({ timeZone }: { timeZone: string }) {
  const create = useCreateInstrument();
  const toast = useToast();
  const form = useForm<InstrumentInput>({ resolver: zodResolver(instrumentInputSchema), defaultValues: { model: '', serial: '', lastCalibratedOn: null, calibrationDueOn: '' } });
  const [bumpWall, setBumpWall] = useState('');
  const e = form.formState.errors;
  return (
    <Card>
      <h2 className="mb-3 text-lg font-semibold">Register a gas monitor</h2>
      <form
        noValidate
        className="grid gap-3 md:grid-cols-3"
        onSubmit={form.handleSubmit((v) =>
          create.mutate(
            { ...v, lastCalibratedOn: v.lastCalibratedOn || null, lastBumpTestAt: bumpWall ? wallTimeToIso(bumpWall, timeZone) : null },
            {
              onSuccess: () => {
                toast('success', 'Instrument registered.');
                form.reset();
                setBumpWall('');
              },
              onError: (err) => (err instanceof ApiError && err.details.length ? err.details.forEach((d) => form.setError(d.path as keyof InstrumentInput, { message: d.message })) : toast('error', err.message)),
            },
          ),
        )}
      >
        <TextField label="Model" {...form.register('model')} error={e.model?.message} />
        <TextField label="Serial number" {...form.register('serial')} error={e.serial?.message} />
        <TextField label="Last bump test (site time, optional)" type="datetime-local" value={bumpWall} onChange={(ev) => setBumpWall(ev.target.value)} />
        <TextField label="Last calibrated (optional)" type="date" {...form.register('lastCalibratedOn', { setValueAs: (v: string) => v || null })} error={e.lastCalibratedOn?.message} />
        <TextField label="Calibration due" type="date" {...form.register('calibrationDueOn')} error={e.calibrationDueOn?.message} />
        <div className="flex items-end">
          <Button type="submit" busy={create.isPending}>
            Register
          </Button>
        </div>
      </form>
    </Card>
  );
}

function StatusText({ s }: { s: InstrumentStatus }) {
  const calibration = s.calibration === 'overdue' ? `Calibration overdue by ${-s.calibrationDaysLeft} day(s)` : s.calibration === 'due_soon' ? `Calibration due in ${s.calibrationDaysLeft} day(s)` : 'Calibration in date';
  const bump = s.bump === 'today' ? 'bump-tested today' : s.bump === 'never' ? 'never bump-tested' : 'not bump-tested today';
  return (
    <span className={s.usable ? (s.calibration === 'due_soon' ? 'font-semibold' : '') : 'font-bold text-danger'} data-testid="instrument-status">
      {s.usable ? '✓ Usable' : '✕ Not usable'}: {calibration}; {bump}.
    </span>
  );
}

function RowActions({ row, timeZone }: { row: InstrumentRow; timeZone: string }) {
  const update = useUpdateInstrument();
  const toast = useToast();
  const [calibrating, setCalibrating] = useState(false);
  const [dates, setDates] = useState({ lastCalibratedOn: '', calibrationDueOn: '' });
  const run = (patch: Parameters<typeof update.mutate>[0]['patch'], done: string) =>
    update.mutate({ id: row.id, patch }, { onSuccess: () => { toast('success', done); setCalibrating(false); }, onError: (err) => toast('error', err.message) });
  return (
    <div className="flex flex-col gap-2">
      <Button type="button" variant="secondary" busy={update.isPending} onClick={() => run({ lastBumpTestAt: wallTimeToIso(isoToWallTime(new Date(), timeZone), timeZone) }, `Bump test recorded for ${row.serial}.`)}>
        Record bump test now
      </Button>
      <Button type="button" variant="ghost" aria-expanded={calibrating} onClick={() => setCalibrating((c) => !c)}>
        Record calibration
      </Button>
      {calibrating ? (
        <div className="flex flex-col gap-2">
          <TextField label="Calibrated on" type="date" value={dates.lastCalibratedOn} onChange={(e) => setDates({ ...dates, lastCalibratedOn: e.target.value })} />
          <TextField label="Next calibration due" type="date" value={dates.calibrationDueOn} onChange={(e) => setDates({ ...dates, calibrationDueOn: e.target.value })} />
          <Button type="button" disabled={!dates.lastCalibratedOn || !dates.calibrationDueOn} onClick={() => run(dates, `Calibration recorded for ${row.serial}.`)}>
            Save calibration
          </Button>
        </div>
      ) : null}
    </div>
  );
}

export default function InstrumentsPage() {
  const instruments = useInstruments();
  const ability = useAbility();
  const timeZone = useSiteTimeZone();
  const now = useNow();
  const { data: me } = useMe();
  const tenantId = me?.activeTenantId ?? '';
  const canUpdate = ability.can('update', subject('Instrument', { tenantId }));
  // The status is judged no earlier than the answer it reads: a bump test recorded a moment after
  // the clock last ticked must not count as "after the test".
  const asOf = new Date(Math.max(now.getTime(), instruments.dataUpdatedAt));
  return (
    <>
      <PageHeader title="Instruments" subtitle="Gas monitors: a monitor past its calibration due date, or without a bump test on the day, cannot be used for a gas test." />
      <div className="flex flex-col gap-4">
        <SafetyCaution>Bump-test every monitor before use each day and keep calibration in date, as the manufacturer instructs. </SafetyCaution>
        <Can I="create" a="Instrument">
          <AddInstrument timeZone={timeZone} />
        </Can>
        {instruments.isPending ? (
          <Loading />
        ) : instruments.isError ? (
          <Notice tone="danger" role="alert">
            {instruments.error.message}
          </Notice>
        ) : !instruments.data.items.length ? (
          <EmptyState title="No instrument registered yet." />
        ) : (
          <ul className="grid gap-3 md:grid-cols-2" aria-label="Instruments">
            {instruments.data.items.map((row) => {
              const s = instrumentStatus(row, asOf, timeZone, instruments.data.requireDailyBumpTest);
              const tone = !s.usable ? 'border-danger bg-danger-soft' : s.calibration === 'due_soon' ? 'border-caution bg-caution-soft' : 'border-safe bg-surface';
              return (
                <li key={row.id} className={`flex min-w-0 flex-col gap-2 rounded-card border-l-4 p-3 ${tone}`} data-testid="instrument-row">
                  <p className="font-semibold break-words">
                    {row.model} <span className="font-normal text-ink-soft">· serial {row.serial}</span>
                  </p>
                  <StatusText s={s} />
                  <dl className="grid grid-cols-[auto_1fr] gap-x-3 text-sm">
                    <dt className="text-ink-soft">Last bump test</dt>
                    <dd>{row.lastBumpTestAt ? formatInZone(row.lastBumpTestAt, timeZone, 'dayTime') : 'none recorded'}</dd>
                    <dt className="text-ink-soft">Last calibrated</dt>
                    <dd>{row.lastCalibratedOn ? format(parseISO(row.lastCalibratedOn), 'd MMM yyyy') : '—'}</dd>
                    <dt className="text-ink-soft">Calibration due</dt>
                    <dd>{format(parseISO(row.calibrationDueOn), 'd MMM yyyy')}</dd>
                  </dl>
                  {canUpdate ? <RowActions row={row} timeZone={timeZone} /> : null}
                </li>
              );
            })}
          </ul>
        )}
      </div>
    </>
  );
}
