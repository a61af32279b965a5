import { Controller, useWatch } from 'react-hook-form';
import { isoToWallTime, wallTimeToIso } from '@shared/time/zone';
import { SelectField, TextField } from '@client/components/ui/field';
import { useContractors } from '../../api/get-contractors';
import { useContractorLeads } from '../../api/get-contractor-leads';
import { fieldError, optionalNumber, type PermitFormApi } from './types';

interface Props {
  form: PermitFormApi;
  timeZone: string;
  /** Organisations the user may request for as a contractor lead; empty for operator staff. */
  ownOrganisationIds: string[];
}

export function TimeCrewStep({ form, timeZone, ownOrganisationIds }: Props) {
  const contractors = useContractors();
  const [kinds, organisationId] = useWatch({ control: form.control, name: ['kinds', 'contractorOrganisationId'] });
  const leads = useContractorLeads(organisationId || undefined);
  const hotWork = Array.isArray(kinds) && kinds.includes('hot_work');
  const choices = (contractors.data ?? []).filter((o) => !ownOrganisationIds.length || ownOrganisationIds.includes(o.id));
  const zoneHint = `Time where the line is (${timeZone}).`;

  const dateField = (name: 'validFrom' | 'validTo', label: string) => (
    <Controller
      control={form.control}
      name={name}
      render={({ field }) => (
        <TextField
          label={label}
          type="datetime-local"
          name={field.name}
          ref={field.ref}
          value={isoToWallTime(field.value, timeZone)}
          onChange={(e) => field.onChange(wallTimeToIso(e.target.value, timeZone))}
          onBlur={field.onBlur}
          error={fieldError(form, name)}
          hint={zoneHint}
        />
      )}
    />
  );

  return (
    <div className="flex flex-col gap-4">
      <div className="grid gap-4 sm:grid-cols-2">
        {dateField('validFrom', 'Valid from')}
        {dateField('validTo', 'Valid to')}
      </div>
      <div className="grid gap-4 sm:grid-cols-2">
        <Controller
          control={form.control}
          name="contractorOrganisationId"
          render={({ field }) => (
            <SelectField
              label="Contractor organisation"
              name={field.name}
              ref={field.ref}
              value={field.value ?? ''}
              onChange={(e) => {
                field.onChange(e.target.value);
                form.setValue('contractorLeadUserId', null);
              }}
              onBlur={field.onBlur}
              error={fieldError(form, 'contractorOrganisationId')}
            >
              <option value="">{contractors.isPending ? 'Loading…' : 'Choose a contractor…'}</option>
              {choices.map((o) => (
                <option key={o.id} value={o.id}>
                  {o.name}
                </option>
              ))}
            </SelectField>
          )}
        />
        <Controller
          control={form.control}
          name="contractorLeadUserId"
          render={({ field }) => (
            <SelectField
              label="Contractor lead (optional)"
              name={field.name}
              ref={field.ref}
              value={field.value ?? ''}
              onChange={(e) => field.onChange(e.target.value || null)}
              onBlur={field.onBlur}
              disabled={!organisationId || leads.data === null}
              error={fieldError(form, 'contractorLeadUserId')}
              hint={
                leads.data === null
                  ? 'Your role cannot list people; the contractor lead who accepts the permit is recorded then.'
                  : 'Leave empty and the contractor lead who accepts the permit is recorded.'
              }
            >
              <option value="">Not named yet</option>
              {leads.data?.map((u) => (
                <option key={u.userId} value={u.userId}>
                  {u.name}
                </option>
              ))}
            </SelectField>
          )}
        />
      </div>
      {hotWork ? (
        <div className="grid gap-4 sm:grid-cols-2">
          <TextField
            label="Fire watch after hot work (minutes)"
            type="number"
            inputMode="numeric"
            min={30}
            max={480}
            step={1}
            {...form.register('fireWatchMinutes', { setValueAs: optionalNumber })}
            error={fieldError(form, 'fireWatchMinutes')}
            hint="NFPA 51B (2019 edition) requires at least 60 minutes, the default; 30 only where the site has chosen the OSHA half hour (29 CFR 1910.252(a)(2)(iii)(B))."
          />
          <TextField label="Fire watch person (optional)" maxLength={120} {...form.register('fireWatchPerson')} error={fieldError(form, 'fireWatchPerson')} />
        </div>
      ) : null}
      <div className="grid gap-4 sm:grid-cols-2">
        <TextField
          label="Gas test window before work (minutes, optional)"
          type="number"
          inputMode="numeric"
          min={5}
          max={240}
          {...form.register('gasTestWindowMinutes', { setValueAs: optionalNumber })}
          error={fieldError(form, 'gasTestWindowMinutes')}
          hint="How old the last passing test may be when work starts. Empty: the tenant's rule."
        />
        <TextField
          label="Repeat gas test every (minutes, optional)"
          type="number"
          inputMode="numeric"
          min={5}
          max={480}
          {...form.register('gasTestIntervalMinutes', { setValueAs: optionalNumber })}
          error={fieldError(form, 'gasTestIntervalMinutes')}
          hint="Empty: the tenant's rule. A permit may be stricter than the tenant, never looser."
        />
      </div>
    </div>
  );
}
