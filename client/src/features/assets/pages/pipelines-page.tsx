import { useMemo, useState } from 'react';
import { Link, useNavigate } from 'react-router-dom';
import type { ColumnDef } from '@tanstack/react-table';
import { pipelinesQuerySchema, productKinds, productLabels } from '@shared/schemas/assets.schema';
import { formatPosition, unitWord } from '@shared/assets/format';
import type { PipelineSummary } from '@shared/assets/types';
import { Can } from '@client/lib/ability';
import { useListQuery } from '@client/lib/list-query';
import { useMe } from '@client/features/auth';
import { DataTable } from '@client/components/ui/data-table';
import { Button } from '@client/components/ui/button';
import { SelectField, TextField } from '@client/components/ui/field';
import { Card, PageHeader } from '@client/components/ui/page';
import { useToast } from '@client/components/ui/toast';
import { usePipelines } from '../api/pipelines';
import { EXPORT_URL } from '../api/import-assets';
import { PipelineForm } from '../components/pipeline-form';
import { ImportPanel } from '../components/import-panel';
import { sizeText } from '../components/pipeline-facts';

export default function PipelinesPage() {
  const { query, set } = useListQuery(pipelinesQuerySchema);
  const { page, q, product } = query;
  const [open, setOpen] = useState<'add' | 'import' | null>(null);
  const navigate = useNavigate();
  const toast = useToast();
  const unit = useMe().data?.activeTenant?.locationUnit ?? 'mi';
  const pipelines = usePipelines(query);

  const columns = useMemo<ColumnDef<PipelineSummary, unknown>[]>(
    () => [
      {
        id: 'pipeline',
        header: 'Pipeline',
        cell: ({ row }) => (
          <Link to={`/pipelines/${row.original.id}`} className="inline-flex min-h-11 flex-col justify-center font-semibold">
            <span>{row.original.name}</span>
            <span className="text-xs font-normal text-ink-soft">{row.original.code}</span>
          </Link>
        ),
      },
      { id: 'product', header: 'Product', cell: ({ row }) => productLabels[row.original.product] },
      { id: 'size', header: 'Size', cell: ({ row }) => sizeText(row.original) },
      { id: 'mop', header: 'MOP', cell: ({ row }) => `${row.original.mopPsig.toLocaleString('en-US')} psig` },
      { id: 'extent', header: 'From – to', cell: ({ row }) => `${formatPosition(row.original.startPosition, row.original.unit)} – ${formatPosition(row.original.endPosition, row.original.unit)}` },
      { id: 'points', header: 'Valves / points', cell: ({ row }) => `${row.original.valveCount} / ${row.original.pointCount}` },
    ],
    [],
  );

  return (
    <>
      <PageHeader
        title="Pipelines"
        subtitle={`The lines of this tenant, their sites and the points where an isolation can be made. Positions are in ${unitWord[unit]}.`}
        actions={
          <>
            <a href={EXPORT_URL} download className="inline-flex min-h-11 items-center rounded-md border border-line bg-surface px-4 font-semibold text-ink no-underline hover:bg-brand-soft">
              Download CSV
            </a>
            <Can I="create" a="Pipeline">
              <Button variant="secondary" aria-expanded={open === 'import'} onClick={() => setOpen(open === 'import' ? null : 'import')}>
                Import CSV
              </Button>
              <Button aria-expanded={open === 'add'} onClick={() => setOpen(open === 'add' ? null : 'add')}>
                Add a pipeline
              </Button>
            </Can>
          </>
        }
      />
      <div className="flex flex-col gap-4">
        {open === 'import' ? (
          <Card>
            <h2 className="mb-3 text-lg font-semibold">Import pipelines and points</h2>
            <ImportPanel />
          </Card>
        ) : null}
        {open === 'add' ? (
          <Card>
            <h2 className="mb-3 text-lg font-semibold">Add a pipeline</h2>
            <PipelineForm
              unit={unit}
              onCancel={() => setOpen(null)}
              onDone={(p) => {
                toast('success', `${p.name} added.`);
                navigate(`/pipelines/${p.id}`);
              }}
            />
          </Card>
        ) : null}
        <div className="grid gap-3 sm:grid-cols-2">
          <TextField label="Search code or name" type="search" defaultValue={q} onChange={(e) => set({ q: e.target.value || undefined, page: undefined })} />
          <SelectField label="Product" value={product ?? ''} onChange={(e) => set({ product: e.target.value || undefined, page: undefined })}>
            <option value="">All products</option>
            {productKinds.map((p) => (
              <option key={p} value={p}>
                {productLabels[p]}
              </option>
            ))}
          </SelectField>
        </div>
        <DataTable
          caption="Pipelines"
          columns={columns}
          data={pipelines.data}
          isLoading={pipelines.isPending}
          page={page}
          onPage={(p) => set({ page: String(p) })}
          empty={{ title: 'No pipelines match.', hint: 'Clear the filters, or add a pipeline.' }}
          rowTestId="pipeline-row"
        />
      </div>
    </>
  );
}
