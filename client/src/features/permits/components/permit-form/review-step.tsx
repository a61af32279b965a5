import type { ReactNode } from 'react';
import { useWatch } from 'react-hook-form';
import { workKindLabels, type WorkKind } from '@shared/permit/states';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import { formatInZone } from '@shared/time/zone';
import { Button } from '@client/components/ui/button';
import { usePermitPipelines } from '../../api/get-pipelines';
import { useContractors } from '../../api/get-contractors';
import { useContractorLeads } from '../../api/get-contractor-leads';
import { formatRange, pipelineLabel } from '../../lib/positions';
import type { PermitFormApi } from './types';

function Group({ title, onEdit, children }: { title: string; onEdit: () => void; children: ReactNode }) {
  return (
    <section className="rounded-card border border-line p-3">
      <div className="mb-2 flex flex-wrap items-center justify-between gap-2">
        <h3 className="font-semibold">{title}</h3>
        <Button type="button" variant="ghost" onClick={onEdit} aria-label={`Change ${title.toLowerCase()}`}>
          Change
        </Button>
      </div>
      <dl className="grid grid-cols-1 gap-x-4 gap-y-1 text-sm sm:grid-cols-[12rem_1fr]">{children}</dl>
    </section>
  );
}

function Row({ label, value }: { label: string; value: ReactNode }) {
  return (
    <>
      <dt className="font-semibold text-ink-soft">{label}</dt>
      <dd className="min-w-0 break-words whitespace-pre-line">{value === '' || value === null || value === undefined ? '—' : value}</dd>
    </>
  );
}

/** Everything entered, grouped by step, before the draft is saved. */
export function ReviewStep({ form, unit, timeZone, goTo }: { form: PermitFormApi; unit: LocationUnit; timeZone: string; goTo: (step: number) => void }) {
  const v = useWatch({ control: form.control });
  const pipelines = usePermitPipelines();
  const contractors = useContractors();
  const leads = useContractorLeads(v.contractorOrganisationId || undefined);
  const line = pipelines.data?.items.find((p) => p.id === v.pipelineId);
  const kinds = (v.kinds ?? []) as WorkKind[];
  const from = Number(v.fromPosition);
  const to = Number(v.toPosition);

  return (
    <div className="flex flex-col gap-3">
      <Group title="Job" onEdit={() => goTo(0)}>
        <Row label="Kinds of work" value={kinds.map((k) => workKindLabels[k]).join(', ')} />
        <Row label="Title" value={v.title} />
        <Row label="Scope" value={v.scope} />
        <Row label="Job reference" value={v.jobReference} />
      </Group>
      <Group title="Place" onEdit={() => goTo(1)}>
        <Row label="Pipeline" value={line ? pipelineLabel(line) : v.pipelineId} />
        <Row label="Work range" value={Number.isFinite(from) && Number.isFinite(to) ? formatRange(from, to, unit) : ''} />
      </Group>
      <Group title="Time and crew" onEdit={() => goTo(2)}>
        <Row label="Valid from" value={formatInZone(v.validFrom, timeZone)} />
        <Row label="Valid to" value={formatInZone(v.validTo, timeZone)} />
        <Row label="Contractor" value={contractors.data?.find((o) => o.id === v.contractorOrganisationId)?.name} />
        <Row label="Contractor lead" value={v.contractorLeadUserId ? leads.data?.find((u) => u.userId === v.contractorLeadUserId)?.name : 'Named when the permit is accepted'} />
        {kinds.includes('hot_work') ? <Row label="Fire watch" value={`${String(v.fireWatchMinutes ?? 60)} minutes after hot work stops${v.fireWatchPerson ? `; ${v.fireWatchPerson}` : ''}`} /> : null}
        <Row label="Gas test window" value={v.gasTestWindowMinutes ? `${String(v.gasTestWindowMinutes)} minutes` : "The tenant's rule"} />
        <Row label="Repeat gas test" value={v.gasTestIntervalMinutes ? `every ${String(v.gasTestIntervalMinutes)} minutes` : "The tenant's rule"} />
      </Group>
      <Group title="Method, hazards and PPE" onEdit={() => goTo(3)}>
        <Row label="Method statement" value={v.methodStatement} />
        <Row label="Hazards" value={v.hazards} />
        <Row label="PPE" value={(v.ppe ?? []).join(', ')} />
      </Group>
    </div>
  );
}
