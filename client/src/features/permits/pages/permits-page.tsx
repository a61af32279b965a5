import { useMemo } from 'react';
import { Link } from 'react-router-dom';
import type { ColumnDef } from '@tanstack/react-table';
import { permitsQuerySchema } from '@shared/schemas/permit.schema';
import type { PermitSummary } from '@shared/types/permits';
import { liveStates, workKindLabels } from '@shared/permit/states';
import { formatInZone } from '@shared/time/zone';
import { Can } from '@client/lib/ability';
import { useListQuery } from '@client/lib/list-query';
import { DataTable } from '@client/components/ui/data-table';
import { Button } from '@client/components/ui/button';
import { EmptyState, Loading, PageHeader } from '@client/components/ui/page';
import { Notice } from '@client/components/ui/notice';
import { usePermits } from '../api/get-permits';
import { PermitStateBadge } from '../components/permit-state-badge';
import { GasTestDue } from '../components/gas-test-due';
import { PermitCards } from '../components/permit-cards';
import { PermitsFilters } from '../components/permits-filters';
import { linkButtonClass } from '../components/link-button';
import { hasFilters } from '../lib/list-params';
import { formatRange } from '../lib/positions';
import { useTenantSettings } from '../hooks/use-tenant-settings';

function RequestLink() {
  return (
    <Can I="create" a="Permit">
      <Link to="/permits/new" className={linkButtonClass.primary}>
        Request a permit
      </Link>
    </Can>
  );
}

export default function PermitsPage() {
  const { query, set, clear, pending } = useListQuery(permitsQuerySchema);
  const permits = usePermits(query);
  const { timeZone, unit } = useTenantSettings();

  const columns = useMemo<ColumnDef<PermitSummary, unknown>[]>(
    () => [
      {
        id: 'number',
        accessorKey: 'number',
        header: 'Number',
        cell: ({ row }) => (
          <Link to={`/permits/${row.original.id}`} className="inline-flex min-h-11 items-center font-semibold whitespace-nowrap">
            {row.original.number}
          </Link>
        ),
      },
      { id: 'title', accessorKey: 'title', header: 'Title', cell: ({ row }) => <span className="break-words">{row.original.title}</span> },
      { id: 'state', accessorKey: 'state', header: 'State', cell: ({ row }) => <PermitStateBadge state={row.original.state} /> },
      { id: 'kinds', header: 'Work', enableSorting: false, cell: ({ row }) => row.original.kinds.map((k) => workKindLabels[k]).join(', ') },
      {
        id: 'place',
        header: 'Where',
        enableSorting: false,
        cell: ({ row }) => (
          <>
            {row.original.pipelineName}
            <br />
            <span className="whitespace-nowrap text-ink-soft">{formatRange(row.original.fromPosition, row.original.toPosition, unit)}</span>
          </>
        ),
      },
      { id: 'contractor', header: 'Contractor', enableSorting: false, cell: ({ row }) => row.original.contractorName },
      {
        id: 'validFrom',
        accessorKey: 'validFrom',
        header: 'Valid',
        cell: ({ row }) => (
          <span className="whitespace-nowrap">
            {formatInZone(row.original.validFrom, timeZone)}
            <br />
            to {formatInZone(row.original.validTo, timeZone)}
          </span>
        ),
      },
      {
        id: 'gas',
        header: 'Gas test',
        enableSorting: false,
        cell: ({ row }) => (liveStates.includes(row.original.state) ? <GasTestDue due={row.original.nextGasTestDue} timeZone={timeZone} compact /> : <span className="text-ink-soft">—</span>),
      },
      { id: 'updatedAt', accessorKey: 'updatedAt', header: 'Changed', cell: ({ row }) => <span className="whitespace-nowrap">{formatInZone(row.original.updatedAt, timeZone)}</span> },
    ],
    [timeZone, unit],
  );

  const data = permits.data;
  const filtered = hasFilters(query);
  const pages = data ? Math.max(1, Math.ceil(data.total / data.pageSize)) : 1;

  return (
    <>
      <PageHeader title="Permits" subtitle="Permits to work in this tenant. Times are shown where the line is." actions={<RequestLink />} />
      <div className="flex flex-col gap-4">
        <PermitsFilters query={query} onChange={set} onClear={clear} />
        {permits.isError ? (
          <Notice tone="danger" role="alert" title="The permits could not be loaded.">
            {permits.error.message}{' '}
            <Button variant="secondary" onClick={() => permits.refetch()}>
              Try again
            </Button>
          </Notice>
        ) : permits.isPending ? (
          <Loading label="Loading permits…" />
        ) : data && data.total === 0 ? (
          <EmptyState title={filtered ? 'No permit matches these filters.' : 'No permits yet.'}>
            <p className="mb-3">{filtered ? 'Clear the filters to see every permit, or request a new one.' : 'Start with a request: the authoriser approves it before any work begins.'}</p>
            <div className="flex flex-wrap justify-center gap-2">
              {filtered ? (
                <Button variant="secondary" onClick={clear}>
                  Clear filters
                </Button>
              ) : null}
              <RequestLink />
            </div>
          </EmptyState>
        ) : (
          // While the rows of the previous filters stand in for the new ones (the new address not yet
          // rendered, or its page not yet arrived), the list says it is updating.
          <div data-testid="permit-list" aria-busy={pending || permits.isPlaceholderData}>
            <div className="hidden md:block">
              <DataTable
                caption="Permits to work"
                columns={columns}
                data={data}
                isLoading={false}
                page={query.page}
                onPage={(p) => set({ page: String(p) })}
                sorting={[{ id: query.sort, desc: query.dir !== 'asc' }]}
                onSorting={(s) => set({ sort: s[0]?.id, dir: s[0] ? (s[0].desc ? 'desc' : 'asc') : undefined, page: undefined })}
                empty={{ title: 'No permits.' }}
                rowTestId="permit-row"
              />
            </div>
            <div className="md:hidden">
              <PermitCards items={data?.items ?? []} timeZone={timeZone} unit={unit} />
              <nav aria-label="Pages" className="mt-3 flex flex-wrap items-center gap-2 text-sm">
                <Button variant="secondary" disabled={query.page <= 1} onClick={() => set({ page: String(query.page - 1) })}>
                  Previous
                </Button>
                <span>
                  Page {query.page} of {pages} · {data?.total ?? 0} in all
                </span>
                <Button variant="secondary" disabled={query.page >= pages} onClick={() => set({ page: String(query.page + 1) })}>
                  Next
                </Button>
              </nav>
            </div>
          </div>
        )}
      </div>
    </>
  );
}
