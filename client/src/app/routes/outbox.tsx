import { useState, type ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { useQueryClient } from '@tanstack/react-query';
import type { z } from 'zod';
import { gasTestInputSchema } from '@shared/schemas/gas-tests.schema';
import { checkInputSchema, fireWatchObservationLabels, fireWatchObservations, plugFaceLabels, plugFaces } from '@shared/schemas/timed-checks.schema';
import { formatInZone, isoToWallTime, wallTimeToIso } from '@shared/time/zone';
import { useMe } from '@client/features/auth';
import { Button } from '@client/components/ui/button';
import { LabelledOptions, SelectField, TextAreaField, TextField } from '@client/components/ui/field';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { Card, EmptyState, Loading, PageHeader } from '@client/components/ui/page';
import { useConnection } from '@client/lib/connection';
import { sendWaiting, useSendProgress } from '@client/lib/outbox/outbox-sender';
import { removeFromOutbox, saveOutboxRecord, useOutboxRecords } from '@client/lib/outbox/outbox-store';
import { sizeText, waitingText, type OutboxRecord } from '@client/lib/outbox/outbox-rules';
import { newIdempotencyKey } from '@client/lib/outbox/send-or-queue';

type Errors = Record<string, string>;

const errorsOf = (error: z.ZodError): Errors => Object.fromEntries(error.issues.map((i) => [i.path.join('.'), i.message]));

/** Back in the queue with a new key (the body changed), its place in the order kept. */
async function sendAgain(record: OutboxRecord, body: Record<string, unknown>, observedAt: string) {
  await saveOutboxRecord({ ...record, key: newIdempotencyKey(), body, observedAt, state: 'waiting', refusal: undefined, lastProblem: undefined, attempts: 0, nextAttemptAt: 0 });
  void sendWaiting();
}

const READINGS = [
  { field: 'o2Pct', label: 'Oxygen (%vol)' },
  { field: 'lelPct', label: 'Flammable gas (%LEL)' },
  { field: 'h2sPpm', label: 'H₂S (ppm)' },
  { field: 'coPpm', label: 'CO (ppm)' },
] as const;

function EditGasTest({ record, timeZone, onDone }: { record: OutboxRecord; timeZone: string; onDone: () => void }) {
  const body = record.body as { readings: Record<string, number>; testedAt: string };
  const [wall, setWall] = useState(isoToWallTime(body.testedAt, timeZone));
  const [readings, setReadings] = useState<Record<string, string>>(() => Object.fromEntries(READINGS.map((r) => [r.field, String(body.readings[r.field] ?? '')])));
  const [errors, setErrors] = useState<Errors>({});
  const submit = async () => {
    const parsed = gasTestInputSchema.safeParse({ ...record.body, testedAt: wallTimeToIso(wall, timeZone), readings: { ...body.readings, ...readings } });
    if (!parsed.success) return setErrors(errorsOf(parsed.error));
    await sendAgain(record, parsed.data as unknown as Record<string, unknown>, parsed.data.testedAt);
    onDone();
  };
  return (
    <EditForm name="the gas test" timeLabel={`Tested at (${timeZone})`} wall={wall} setWall={setWall} timeError={errors.testedAt} onSubmit={submit} onCancel={onDone}>
      <div className="grid grid-cols-2 gap-3">
        {READINGS.map((r) => (
          <TextField key={r.field} label={r.label} inputMode="decimal" value={readings[r.field]} onChange={(e) => setReadings((v) => ({ ...v, [r.field]: e.target.value }))} error={errors[`readings.${r.field}`]} />
        ))}
      </div>
    </EditForm>
  );
}

function EditCheck({ record, timeZone, onDone }: { record: OutboxRecord; timeZone: string; onDone: () => void }) {
  const body = record.body as Record<string, unknown> & { kind: 'vent' | 'plug' | 'fire_watch'; checkedAt: string };
  const [wall, setWall] = useState(isoToWallTime(body.checkedAt, timeZone));
  const [values, setValues] = useState<Record<string, unknown>>(body);
  const [errors, setErrors] = useState<Errors>({});
  const set = (name: string, value: unknown) => setValues((v) => ({ ...v, [name]: value }));
  const yesNo = (v: unknown) => (v === true ? 'yes' : v === false ? 'no' : '');
  const submit = async () => {
    const parsed = checkInputSchema.safeParse({ ...values, checkedAt: wallTimeToIso(wall, timeZone), actionTaken: (values.actionTaken as string) || undefined, notes: (values.notes as string) || undefined });
    if (!parsed.success) return setErrors(errorsOf(parsed.error));
    await sendAgain(record, parsed.data as unknown as Record<string, unknown>, parsed.data.checkedAt);
    onDone();
  };
  return (
    <EditForm name="the check" timeLabel={`Checked at (${timeZone})`} wall={wall} setWall={setWall} timeError={errors.checkedAt} onSubmit={submit} onCancel={onDone}>
      {body.kind === 'plug' ? (
        <SelectField label="Plug face" value={String(values.face ?? '')} onChange={(e) => set('face', e.target.value)} error={errors.face}>
          <LabelledOptions values={plugFaces} labels={plugFaceLabels} />
        </SelectField>
      ) : null}
      {body.kind === 'fire_watch' ? (
        <SelectField label="What the fire watch found" value={String(values.observation ?? '')} onChange={(e) => set('observation', e.target.value)} error={errors.observation}>
          <LabelledOptions values={fireWatchObservations} labels={fireWatchObservationLabels} />
        </SelectField>
      ) : null}
      {body.kind === 'vent' ? (
        <>
          <SelectField label="Vapour directed away from the work?" value={yesNo(values.vapourAwayFromWork)} onChange={(e) => set('vapourAwayFromWork', e.target.value === 'yes')} error={errors.vapourAwayFromWork}>
            <option value="yes">Yes</option>
            <option value="no">No</option>
          </SelectField>
          <SelectField label="Pressure building?" value={yesNo(values.pressureBuilding)} onChange={(e) => set('pressureBuilding', e.target.value === 'yes')} error={errors.pressureBuilding}>
            <option value="no">No</option>
            <option value="yes">Yes</option>
          </SelectField>
        </>
      ) : null}
      <TextAreaField label="Action taken" value={String(values.actionTaken ?? '')} onChange={(e) => set('actionTaken', e.target.value)} error={errors.actionTaken} />
    </EditForm>
  );
}

/** The edit form of a refused record: when it was done (site time), its own fields, then send again or cancel. */
function EditForm({ name, timeLabel, wall, setWall, timeError, onSubmit, onCancel, children }: { name: string; timeLabel: string; wall: string; setWall: (v: string) => void; timeError?: string; onSubmit: () => Promise<void>; onCancel: () => void; children: ReactNode }) {
  return (
    <form
      className="flex flex-col gap-3"
      noValidate
      onSubmit={(e) => {
        e.preventDefault();
        void onSubmit();
      }}
      aria-label={`Change ${name} and send again`}
    >
      <TextField label={timeLabel} type="datetime-local" value={wall} onChange={(e) => setWall(e.target.value)} error={timeError} />
      {children}
      <div className="flex flex-wrap gap-2">
        <Button type="submit">Send again</Button>
        <Button type="button" variant="secondary" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

function OutboxItem({ record, timeZone, permitNumber }: { record: OutboxRecord; timeZone: string; permitNumber: string | undefined }) {
  const [editing, setEditing] = useState(false);
  const [confirming, setConfirming] = useState(false);
  const editable = record.kind === 'gas_test' || record.kind === 'check';
  return (
    <li>
      <Card className="flex flex-col gap-2">
        <div className="flex flex-wrap items-baseline justify-between gap-2">
          <h2 className="text-lg font-semibold">{record.title}</h2>
          <span className="text-sm text-ink-soft">
            {record.kind === 'photo' ? 'Taken' : 'Made'} {formatInZone(record.observedAt, timeZone, 'dayTime')}
          </span>
        </div>
        <p className="text-sm">
          Permit{' '}
          <Link to={`/permits/${record.permitId}`} className="inline-flex min-h-11 items-center">
            {permitNumber ?? 'open it'}
          </Link>
          {record.photo ? ` · photo made smaller on this device: ${sizeText(record.photo.originalSize)} → ${sizeText(record.photo.blob.size)}` : ''}
        </p>
        {record.state === 'refused' ? (
          <Notice tone="danger" title="Holdpoint did not accept this record" role="alert">
            <p data-testid="refusal-reason">{record.refusal?.message}</p>
            {record.refusal?.details
              .filter((d) => d.message !== record.refusal?.message)
              .map((d) => (
                <p key={d.path + d.message}>{d.message}</p>
              ))}
            <p className="mt-1">
              {editable ? 'Change it and send it again, or discard it.' : 'Discard it, and record it again once the reason is dealt with.'}
            </p>
          </Notice>
        ) : (
          <p className="text-sm" data-testid="waiting-note">
            Waiting to send{record.lastProblem ? `: ${record.lastProblem}` : '.'}
          </p>
        )}
        {editing ? (
          record.kind === 'gas_test' ? (
            <EditGasTest record={record} timeZone={timeZone} onDone={() => setEditing(false)} />
          ) : (
            <EditCheck record={record} timeZone={timeZone} onDone={() => setEditing(false)} />
          )
        ) : (
          <div className="flex flex-wrap gap-2">
            {record.state === 'refused' && editable ? (
              <Button type="button" onClick={() => setEditing(true)}>
                Edit and send again
              </Button>
            ) : null}
            {confirming ? (
              <>
                <Button type="button" variant="danger" onClick={() => void removeFromOutbox(record.seq!)}>
                  Yes, discard it
                </Button>
                <Button type="button" variant="secondary" onClick={() => setConfirming(false)}>
                  Keep it
                </Button>
              </>
            ) : (
              <Button type="button" variant="secondary" onClick={() => setConfirming(true)}>
                Discard
              </Button>
            )}
          </div>
        )}
      </Card>
    </li>
  );
}

/** Records made on this device that wait to be sent, and those Holdpoint did not accept, with the choice what to do. */
export default function OutboxPage() {
  const { data: me } = useMe();
  const qc = useQueryClient();
  const { online } = useConnection();
  const progress = useSendProgress();
  const records = useOutboxRecords(me?.user.id);
  const timeZone = me?.activeTenant?.timeZone ?? 'UTC';
  if (!records) return <Loading label="Reading this device's outbox…" />;
  const mine = records.filter((r) => r.tenantId === me?.activeTenantId);
  const waiting = mine.filter((r) => r.state === 'waiting').length;
  const permitNumber = (id: string) => qc.getQueryData<{ number?: string }>(['permits', 'detail', id])?.number;
  return (
    <div className="flex flex-col gap-4">
      <PageHeader
        title="Outbox"
        subtitle={waiting ? waitingText(waiting) : 'Records made on this device without signal wait here until they are sent.'}
        actions={
          waiting && online ? (
            <Button type="button" busy={progress.sending} onClick={() => void sendWaiting()}>
              Send now
            </Button>
          ) : null
        }
      />
      <SafetyCaution>A record waiting here has not reached the permit yet: others cannot see it, and it counts only once it has arrived. </SafetyCaution>
      {!online ? <Notice tone="caution">No signal. Waiting records are sent by themselves, oldest first, when the connection is back.</Notice> : null}
      {progress.sending && progress.total > 0 ? (
        <p role="status">
          Sending {Math.min(progress.sent + 1, progress.total)} of {progress.total}…
        </p>
      ) : null}
      {mine.length === 0 ? (
        <EmptyState title="Nothing waiting">Everything recorded on this device has been sent.</EmptyState>
      ) : (
        <ul className="flex flex-col gap-3">
          {mine.map((r) => (
            <OutboxItem key={r.key} record={r} timeZone={timeZone} permitNumber={permitNumber(r.permitId)} />
          ))}
        </ul>
      )}
    </div>
  );
}
