import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { tenantSettingsInputSchema, type TenantSettingsInput } from '@shared/schemas/tenant-settings-input.schema';
import { applySettingsInput, fireWatchBasisLabels, settingChanges, settingLabels, weakenedMargins } from '@shared/tenant-settings/settings-changes';
import type { TenantSettingsView } from '@shared/types/tenant-settings';
import { formatInZone, isTimeZone } from '@shared/time/zone';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { SelectField, TextAreaField, TextField } from '@client/components/ui/field';
import { SafetyCaution } from '@client/components/ui/notice';
import { Card, Loading, PageHeader } from '@client/components/ui/page';
import { useToast } from '@client/components/ui/toast';
import { useChangeTenantSettings, useTenantSettings } from '../api/tenant-settings';

type FormValues = TenantSettingsInput;

const toForm = (s: TenantSettingsView): FormValues => ({ ...s, recordsEmail: s.recordsEmail ?? '', hotWorkLelReason: s.hotWorkLelReason ?? '', reason: '' });

// The zones the browser knows, offered while typing; the server checks the name again.
const knownZones = typeof Intl.supportedValuesOf === 'function' ? Intl.supportedValuesOf('timeZone') : [];
const asNumber = { valueAsNumber: true } as const;

function SettingsForm({ current }: { current: TenantSettingsView }) {
  const change = useChangeTenantSettings();
  const toast = useToast();
  const form = useForm<FormValues>({ resolver: zodResolver(tenantSettingsInputSchema), defaultValues: toForm(current) });
  const errors = form.formState.errors;
  const watched = useWatch({ control: form.control });
  const weakened = weakenedMargins(current, applySettingsInput(current, watched));
  const zone = watched.timeZone?.trim() ?? '';

  const save = form.handleSubmit((values) => {
    const after = applySettingsInput(current, values);
    const changes = settingChanges(current, after);
    if (!changes.length) {
      toast('success', 'Nothing has changed, so nothing was saved.');
      return;
    }
    const weakens = weakenedMargins(current, after).length > 0;
    if (weakens && !values.reason) {
      form.setError('reason', { message: 'Say why this change is needed: it weakens a safety margin.' }, { shouldFocus: true });
      return;
    }
    const body: TenantSettingsInput = Object.fromEntries(changes.map((c) => [c.key, values[c.key]]));
    if (weakens) body.reason = values.reason;
    change.mutate(body, {
      onSuccess: (saved) => {
        toast('success', `Settings saved: ${changes.map((c) => c.label.toLowerCase()).join('; ')}.`);
        form.reset(toForm(saved));
      },
      onError: (err) =>
        err instanceof ApiError && err.details.length ? err.details.forEach((d) => form.setError(d.path as keyof FormValues, { message: d.message })) : toast('error', err.message),
    });
  });

  return (
    <form noValidate onSubmit={save} className="flex flex-col gap-4">
      <Card>
        <h2 className="mb-3 text-lg font-semibold">Site and records</h2>
        <div className="grid gap-3 md:grid-cols-2">
          <TextField
            label={settingLabels.timeZone}
            list="known-time-zones"
            autoComplete="off"
            autoCapitalize="off"
            spellCheck={false}
            hint={isTimeZone(zone) ? `Time at the site now: ${formatInZone(new Date(), zone, 'dayTime')}. Every time on permits, checks and printouts is shown in this zone.` : 'Its full name, such as America/Chicago.'}
            {...form.register('timeZone')}
            error={errors.timeZone?.message}
          />
          <datalist id="known-time-zones">
            {knownZones.map((z) => (
              <option key={z} value={z} />
            ))}
          </datalist>
          <TextField
            label={settingLabels.recordsEmail}
            type="email"
            inputMode="email"
            autoComplete="off"
            hint="Each signed checkpoint of the audit trail is mailed here. Leave it empty to keep them only in Holdpoint."
            {...form.register('recordsEmail')}
            error={errors.recordsEmail?.message}
          />
          <TextField label={`${settingLabels.auditCheckpointHours} (hours)`} type="number" inputMode="numeric" min={1} max={168} hint="1 to 168 hours (a week)." {...form.register('auditCheckpointHours', asNumber)} error={errors.auditCheckpointHours?.message} />
        </div>
      </Card>

      <Card>
        <h2 className="mb-3 text-lg font-semibold">Permits and isolations</h2>
        <div className="grid gap-3 md:grid-cols-2">
          <TextField label={`${settingLabels.maxPermitHours} (hours)`} type="number" inputMode="numeric" min={1} max={744} hint="1 to 744 hours (31 days)." {...form.register('maxPermitHours', asNumber)} error={errors.maxPermitHours?.message} />
          <TextField
            label={`${settingLabels.isolationRecheckHours} (hours)`}
            type="number"
            inputMode="numeric"
            min={1}
            max={168}
            hint="Locks and tags intact, valves still closed, no pressure build-up. 1 to 168 hours."
            {...form.register('isolationRecheckHours', asNumber)}
            error={errors.isolationRecheckHours?.message}
          />
        </div>
      </Card>

      <Card>
        <h2 className="mb-3 text-lg font-semibold">Gas tests</h2>
        <div className="grid gap-3 md:grid-cols-2">
          <label className="flex min-h-11 items-center gap-3 md:col-span-2">
            <input type="checkbox" className="size-6" {...form.register('requireDailyBumpTest')} />
            {settingLabels.requireDailyBumpTest}
          </label>
          <TextField label={`${settingLabels.gasTestIntervalMinutes} (minutes)`} type="number" inputMode="numeric" min={5} max={480} hint="5 to 480 minutes." {...form.register('gasTestIntervalMinutes', asNumber)} error={errors.gasTestIntervalMinutes?.message} />
          <TextField
            label={`${settingLabels.gasTestOverdueGraceMinutes} (minutes)`}
            type="number"
            inputMode="numeric"
            min={0}
            max={60}
            hint="0 to 60 minutes; 0 suspends the permit as soon as a test is overdue."
            {...form.register('gasTestOverdueGraceMinutes', asNumber)}
            error={errors.gasTestOverdueGraceMinutes?.message}
          />
        </div>
      </Card>

      <Card>
        <h2 className="mb-3 text-lg font-semibold">Hot work</h2>
        <div className="grid gap-3 md:grid-cols-2">
          <SelectField label={settingLabels.fireWatchBasis} {...form.register('fireWatchBasis')} error={errors.fireWatchBasis?.message}>
            {Object.entries(fireWatchBasisLabels).map(([value, label]) => (
              <option key={value} value={value}>
                {label}
              </option>
            ))}
          </SelectField>
          <TextField label={`${settingLabels.fireWatchMinutes} (minutes)`} type="number" inputMode="numeric" min={30} max={480} hint="30 to 480 minutes; at least 60 under NFPA 51B." {...form.register('fireWatchMinutes', asNumber)} error={errors.fireWatchMinutes?.message} />
          <TextField
            label={`${settingLabels.hotWorkLelPct} (%LEL)`}
            type="number"
            inputMode="decimal"
            step="0.1"
            min={0}
            max={10}
            hint="0 stops hot work at any flammable reading (common practice). At most 10 %LEL."
            {...form.register('hotWorkLelPct', asNumber)}
            error={errors.hotWorkLelPct?.message}
          />
          {Number(watched.hotWorkLelPct) > 0 ? (
            <TextAreaField label={settingLabels.hotWorkLelReason} maxLength={500} hint="Shown as the limit's source on every gas test." {...form.register('hotWorkLelReason')} error={errors.hotWorkLelReason?.message} />
          ) : null}
        </div>
      </Card>

      {weakened.length ? (
        <Card className="flex flex-col gap-3">
          <SafetyCaution>
            <p className="mb-1 font-semibold">This change weakens a safety margin:</p>
            <ul className="mb-2 list-disc pl-5">
              {weakened.map((w) => (
                <li key={w.key}>{w.words}</li>
              ))}
            </ul>
          </SafetyCaution>
          <TextAreaField label="Why is this change needed?" maxLength={1000} hint="Kept in the audit trail with the change (for example the operator standard or risk assessment it comes from)." {...form.register('reason')} error={errors.reason?.message} />
        </Card>
      ) : null}

      <div className="flex flex-wrap gap-3">
        <Button type="submit" busy={change.isPending}>
          Save settings
        </Button>
        <Button type="button" variant="secondary" onClick={() => form.reset(toForm(current))}>
          Undo changes
        </Button>
      </div>
    </form>
  );
}

export default function SettingsPage() {
  const settings = useTenantSettings();
  return (
    <>
      <PageHeader title="Settings" subtitle="The site's time zone, where signed audit records go, and the safety margins every permit on this site works to." />
      {settings.isPending ? <Loading /> : settings.data ? <SettingsForm current={settings.data} /> : <p role="alert">The settings could not be loaded: {settings.error?.message}</p>}
    </>
  );
}
