import { Link } from 'react-router-dom';
import { auditEventsQuerySchema, type AuditFilters } from '@shared/schemas/audit.schema';
import { permitEventLabels } from '@shared/permit/state-machine';
import { auditActionLabel } from '@shared/permit/record-words';
import { roleLabels, type Role } from '@shared/abilities/roles';
import { formatInZone, isoToWallTime, wallTimeToIso, zoneAbbreviation } from '@shared/time/zone';
import { useListQuery } from '@client/lib/list-query';
import { useMe } from '@client/features/auth';
import { Button } from '@client/components/ui/button';
import { SelectField, TextField } from '@client/components/ui/field';
import { EmptyState, Loading, PageHeader } from '@client/components/ui/page';
import { Notice } from '@client/components/ui/notice';
import { auditExportHref, useAuditActors, useAuditLog, useCheckpoints } from '../api/get-audit-log';
import { ChainCheckPanel } from '../components/chain-check-panel';

// The kinds the filter offers: the permit's own steps and the records kept beside them.
const kinds = [...Object.keys(permitEventLabels), 'created', 'edited', 'plan_saved', 'gas_test_recorded', 'check_overdue', 'attachment_added', 'lock_handed_over', 'certificate_issued', 'certificate_returned'];
const kindOptions = [...new Set(kinds)].map((k) => ({ value: k, label: auditActionLabel(k) })).sort((a, b) => a.label.localeCompare(b.label));

const linkClass = 'inline-flex min-h-11 items-center rounded-card border border-line bg-surface px-3 font-semibold text-brand underline';

export default function AuditPage() {
  const { query, set, clear } = useListQuery(auditEventsQuerySchema);
  const list = useAuditLog(query);
  const actors = useAuditActors();
  const checkpoints = useCheckpoints();
  const { data: me } = useMe();
  const timeZone = me?.activeTenant?.timeZone ?? 'UTC';
  // The zone's name as of the times chosen (or the newest entry): summer and winter names differ.
  const zone = zoneAbbreviation(new Date(query.from ?? list.data?.items[0]?.occurredAt ?? 0), timeZone);
  const pages = list.data ? Math.max(1, Math.ceil(list.data.total / list.data.pageSize)) : 1;
  const filters: AuditFilters = { actor: query.actor, kind: query.kind, permitId: query.permitId, entityId: query.entityId, from: query.from, to: query.to };
  const filtered = Object.values(filters).some(Boolean);
  const latest = checkpoints.data?.[0];
  return (
    <>
      <PageHeader title="Audit log" subtitle="Every entry of the audit trail, who made it and what changed. Each entry is chained to the one before it, so a change made behind Holdpoint's back shows." />
      <div className="flex flex-col gap-4">
        <ChainCheckPanel timeZone={timeZone} />
        {latest ? (
          <p className="text-sm break-words text-ink-soft" data-testid="latest-checkpoint">
            Last signed checkpoint: entry {latest.seq.toLocaleString('en-US')}, {formatInZone(latest.signedAt, timeZone)}, hash {latest.hash.slice(0, 16)}…{' '}
            <a className="inline-flex min-h-11 items-center text-brand underline" href="/api/audit/public-key" target="_blank" rel="noreferrer">
              Holdpoint's public key
            </a>
          </p>
        ) : null}
        <section aria-labelledby="audit-filters-heading" className="flex flex-col gap-3">
          <h2 id="audit-filters-heading" className="text-lg font-semibold">
            Filter
          </h2>
          <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4">
            <SelectField label="Who" value={query.actor ?? ''} onChange={(e) => set({ actor: e.target.value || undefined, page: undefined })}>
              <option value="">Everyone</option>
              {(actors.data ?? []).map((a) => (
                <option key={a.userId} value={a.userId}>
                  {a.name}
                </option>
              ))}
            </SelectField>
            <SelectField label="What happened" value={query.kind ?? ''} onChange={(e) => set({ kind: e.target.value || undefined, page: undefined })}>
              <option value="">Anything</option>
              {kindOptions.map((k) => (
                <option key={k.value} value={k.value}>
                  {k.label}
                </option>
              ))}
            </SelectField>
            <TextField
              label={`From (${zone})`}
              type="datetime-local"
              value={isoToWallTime(query.from, timeZone)}
              onChange={(e) => set({ from: wallTimeToIso(e.target.value, timeZone) || undefined, page: undefined })}
            />
            <TextField
              label={`To (${zone})`}
              type="datetime-local"
              value={isoToWallTime(query.to, timeZone)}
              onChange={(e) => set({ to: wallTimeToIso(e.target.value, timeZone) || undefined, page: undefined })}
            />
          </div>
          {query.permitId || query.entityId ? (
            <p>
              Showing one {query.permitId ? 'permit' : 'record'} only.{' '}
              <Button type="button" variant="secondary" onClick={() => set({ permitId: undefined, entityId: undefined, page: undefined })}>
                Show all records
              </Button>
            </p>
          ) : null}
          <div className="flex flex-wrap gap-2">
            {filtered ? (
              <Button type="button" variant="secondary" onClick={clear}>
                Clear the filters
              </Button>
            ) : null}
            <a className={linkClass} href={auditExportHref('csv', filters)} download data-testid="export-csv">
              Download as CSV
            </a>
            <a className={linkClass} href={auditExportHref('jsonl', filters)} download data-testid="export-jsonl">
              Download for the verifier (JSON Lines)
            </a>
          </div>
        </section>
        {list.isPending ? (
          <Loading />
        ) : list.isError ? (
          <Notice tone="danger" role="alert">
            {list.error.message}
          </Notice>
        ) : !list.data.items.length ? (
          <EmptyState title="No audit entry matches these filters." />
        ) : (
          <>
            <p aria-live="polite">{list.data.total.toLocaleString('en-US')} entries</p>
            <ol className="flex flex-col gap-2" aria-label="Audit entries">
              {list.data.items.map((e) => (
                <li key={e.seq} className="flex min-w-0 flex-col gap-1 rounded-card border border-line bg-surface p-3" data-testid="audit-row">
                  <div className="flex flex-wrap items-baseline justify-between gap-2">
                    <span className="font-semibold">
                      No. {e.seq.toLocaleString('en-US')} · {e.actionLabel}
                    </span>
                    <span className="text-sm">{formatInZone(e.occurredAt, timeZone)}</span>
                  </div>
                  <p className="break-words">
                    {e.actorName ?? 'Holdpoint'}
                    {e.actorRole ? ` (${roleLabels[e.actorRole as Role] ?? e.actorRole.replace(/_/g, ' ')})` : ''}
                    {e.permitNumber ? (
                      <>
                        {' · permit '}
                        <Link className="inline-flex min-h-11 items-center text-brand underline" to={`/permits/${e.permitId}`}>
                          {e.permitNumber}
                        </Link>
                      </>
                    ) : null}
                  </p>
                  {e.change ? <p>Change: {e.change}</p> : null}
                  {e.details.length ? (
                    <ul className="list-disc pl-5 text-sm break-words">
                      {e.details.map((d, i) => (
                        <li key={i}>{d}</li>
                      ))}
                    </ul>
                  ) : null}
                  {e.reason ? <p className="break-words">Reason: {e.reason}</p> : null}
                  <div className="flex flex-wrap gap-2">
                    {e.permitId && e.permitId !== query.permitId ? (
                      <Button type="button" variant="secondary" onClick={() => set({ permitId: e.permitId ?? undefined, entityId: undefined, page: undefined })}>
                        Only this permit
                      </Button>
                    ) : null}
                    {e.entityType !== 'permit' && e.entityId !== query.entityId ? (
                      <Button type="button" variant="secondary" onClick={() => set({ entityId: e.entityId, permitId: undefined, page: undefined })}>
                        Only this record
                      </Button>
                    ) : null}
                  </div>
                  <p className="font-mono text-xs break-all text-ink-soft">Hash {e.hash}</p>
                </li>
              ))}
            </ol>
          </>
        )}
        {pages > 1 ? (
          <nav className="flex items-center justify-between gap-2" aria-label="Pages">
            <Button type="button" variant="secondary" disabled={query.page <= 1} onClick={() => set({ page: String(query.page - 1) })}>
              Previous
            </Button>
            <span>
              Page {query.page} of {pages}
            </span>
            <Button type="button" variant="secondary" disabled={query.page >= pages} onClick={() => set({ page: String(query.page + 1) })}>
              Next
            </Button>
          </nav>
        ) : null}
      </div>
    </>
  );
}
