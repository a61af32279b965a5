import { useId, useState } from 'react';
import { permitStateLabels, permitStates, workKindLabels, workKinds, type PermitState } from '@shared/permit/states';
import type { PermitsQuery } from '@shared/schemas/permit.schema';
import { SelectField, TextField } from '@client/components/ui/field';
import { Button } from '@client/components/ui/button';
import { usePermitPipelines } from '../api/get-pipelines';
import { useContractors } from '../api/get-contractors';
import { hasFilters } from '../lib/list-params';
import { pipelineLabel } from '../lib/positions';

interface Props {
  query: PermitsQuery;
  onChange: (patch: Record<string, string | undefined>) => void;
  onClear: () => void;
}

/** Filters for the permits list; every change goes to the address bar and back to page 1. */
export function PermitsFilters({ query, onChange, onClear }: Props) {
  const pipelines = usePermitPipelines();
  const contractors = useContractors();
  const statesId = useId();
  // Bumped on "Clear filters" so the uncontrolled search box empties too (typing must not remount it).
  const [generation, setGeneration] = useState(0);
  // On a phone the filters fold away behind one button so the permits come first.
  const [open, setOpen] = useState(false);
  const active = [query.q, query.pipelineId, query.contractorOrganisationId, query.kind, query.from, query.to, query.state?.length ? 'state' : undefined].filter(Boolean).length;
  const panelId = useId();
  // The address bar is the truth, but the router applies it in a transition that can lag on a slow
  // tablet; the boxes show the tap at once and give way as soon as the address catches up.
  const fromAddress = query.state ?? [];
  const basis = fromAddress.join(',');
  const [tapped, setTapped] = useState<{ basis: string; states: PermitState[] } | null>(null);
  const chosen = tapped?.basis === basis ? tapped.states : fromAddress;
  const set = (patch: Record<string, string | undefined>) => onChange({ ...patch, page: undefined });
  const toggleState = (s: PermitState, on: boolean) => {
    const next = on ? [...chosen, s] : chosen.filter((x) => x !== s);
    setTapped({ basis, states: next });
    set({ state: next.length ? next.join(',') : undefined });
  };

  return (
    <div className="flex flex-col gap-3 rounded-card border border-line bg-surface p-3" role="search" aria-label="Filter permits">
      <button type="button" className="flex min-h-11 items-center justify-between font-semibold md:hidden" aria-expanded={open} aria-controls={panelId} onClick={() => setOpen((o) => !o)}>
        <span>Filters{active ? ` (${active} set)` : ''}</span>
        <span aria-hidden>{open ? '▲' : '▼'}</span>
      </button>
      <div id={panelId} className={`${open ? 'flex' : 'hidden'} flex-col gap-3 md:flex`}>
        <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4">
          <TextField
            key={generation}
            label="Search number or title"
            type="search"
            defaultValue={query.q ?? ''}
            onChange={(e) => set({ q: e.target.value.trim() || undefined })}
          />
          <SelectField label="Pipeline" value={query.pipelineId ?? ''} onChange={(e) => set({ pipelineId: e.target.value || undefined })}>
            <option value="">All pipelines</option>
            {pipelines.data?.items.map((p) => (
              <option key={p.id} value={p.id}>
                {pipelineLabel(p)}
              </option>
            ))}
          </SelectField>
          <SelectField label="Contractor" value={query.contractorOrganisationId ?? ''} onChange={(e) => set({ contractorOrganisationId: e.target.value || undefined })}>
            <option value="">All contractors</option>
            {contractors.data?.map((o) => (
              <option key={o.id} value={o.id}>
                {o.name}
              </option>
            ))}
          </SelectField>
          <SelectField label="Kind of work" value={query.kind ?? ''} onChange={(e) => set({ kind: e.target.value || undefined })}>
            <option value="">All kinds</option>
            {workKinds.map((k) => (
              <option key={k} value={k}>
                {workKindLabels[k]}
              </option>
            ))}
          </SelectField>
          <TextField label="Valid on or after" type="date" value={query.from ?? ''} onChange={(e) => set({ from: e.target.value || undefined })} />
          <TextField label="Valid on or before" type="date" value={query.to ?? ''} onChange={(e) => set({ to: e.target.value || undefined })} />
        </div>
        <details className="group">
          <summary className="flex min-h-11 cursor-pointer items-center font-semibold" aria-describedby={statesId}>
            State
            <span id={statesId} className="ml-2 text-sm font-normal text-ink-soft">
              {chosen.length ? chosen.map((s) => permitStateLabels[s]).join(', ') : 'all states'}
            </span>
          </summary>
          <fieldset className="mt-2">
            <legend className="sr-only">Show permits in these states</legend>
            <div className="grid grid-cols-1 gap-x-4 sm:grid-cols-2 lg:grid-cols-4">
              {permitStates.map((s) => (
                <label key={s} className="flex min-h-11 items-center gap-2">
                  <input type="checkbox" className="size-5" checked={chosen.includes(s)} onChange={(e) => toggleState(s, e.target.checked)} />
                  {permitStateLabels[s]}
                </label>
              ))}
            </div>
          </fieldset>
        </details>
        {hasFilters(query) ? (
          <div>
            <Button
              type="button"
              variant="secondary"
              onClick={() => {
                setGeneration((g) => g + 1);
                onClear();
              }}
            >
              Clear filters
            </Button>
          </div>
        ) : null}
      </div>
    </div>
  );
}
