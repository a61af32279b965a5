import { useState } from 'react';
import { Link, useParams } from 'react-router-dom';
import { productLabels } from '@shared/schemas/assets.schema';
import type { IsolationPoint } from '@shared/assets/types';
import { ApiError } from '@client/lib/api-client';
import { Can } from '@client/lib/ability';
import { Button } from '@client/components/ui/button';
import { SafetyCaution } from '@client/components/ui/notice';
import { Card, EmptyState, Loading, PageHeader } from '@client/components/ui/page';
import { useToast } from '@client/components/ui/toast';
import { SchematicStrip } from '@client/components/schematic/schematic-strip';
import { usePipeline } from '../api/pipelines';
import { PipelineForm } from '../components/pipeline-form';
import { PointForm } from '../components/point-form';
import { PipelineFacts } from '../components/pipeline-facts';
import { PointsTable, SegmentsTable } from '../components/points-table';

type Panel = { kind: 'edit' } | { kind: 'point'; point?: IsolationPoint } | null;

export default function PipelinePage() {
  const { id = '' } = useParams();
  const pipeline = usePipeline(id);
  const toast = useToast();
  const [panel, setPanel] = useState<Panel>(null);
  const [focus, setFocus] = useState<[number, number] | undefined>(undefined);

  if (pipeline.isPending) return <Loading />;
  if (!pipeline.data) {
    const missing = pipeline.error instanceof ApiError && (pipeline.error.status === 404 || pipeline.error.status === 400);
    return (
      <EmptyState title={missing ? 'That pipeline is not in this register.' : 'The pipeline could not be loaded.'}>
        <Link to="/pipelines">Back to the pipelines</Link>
      </EmptyState>
    );
  }
  const p = pipeline.data;
  const range: [number, number] = [p.startPosition, p.endPosition];
  const openPanel = (next: Panel) => {
    setPanel(next);
    requestAnimationFrame(() => document.getElementById('asset-panel')?.scrollIntoView({ behavior: 'smooth', block: 'start' }));
  };
  const showSection = ([a, b]: [number, number]) => {
    const pad = Math.max((b - a) * 0.1, 0.05);
    setFocus([a - pad, b + pad]);
    document.getElementById('strip')?.scrollIntoView({ behavior: 'smooth', block: 'start' });
  };

  return (
    <>
      <PageHeader
        title={p.name}
        subtitle={`${p.code} · ${productLabels[p.product]}`}
        actions={
          <>
            <Link to="/pipelines" className="inline-flex min-h-11 items-center px-2">
              All pipelines
            </Link>
            <Can I="update" a="Pipeline">
              <Button variant="secondary" aria-expanded={panel?.kind === 'edit'} onClick={() => setPanel(panel?.kind === 'edit' ? null : { kind: 'edit' })}>
                Edit pipeline
              </Button>
            </Can>
            <Can I="create" a="IsolationPoint">
              <Button onClick={() => openPanel({ kind: 'point' })}>Add a point</Button>
            </Can>
          </>
        }
      />
      <div className="flex flex-col gap-4">
        <SafetyCaution>Positions and tag codes come from this register: confirm each point in the field before an isolation relies on it. </SafetyCaution>

        <div id="asset-panel" className="scroll-mt-4" />
        {panel?.kind === 'edit' ? (
          <Card>
            <h2 className="mb-3 text-lg font-semibold">Edit pipeline</h2>
            <PipelineForm
              key={p.updatedAt}
              initial={p}
              unit={p.unit}
              onCancel={() => setPanel(null)}
              onDone={() => {
                toast('success', 'Pipeline saved.');
                setPanel(null);
              }}
            />
          </Card>
        ) : null}
        {panel?.kind === 'point' ? (
          <Card>
            <h2 className="mb-3 text-lg font-semibold">{panel.point ? `Edit ${panel.point.tagCode}` : 'Add a point'}</h2>
            <PointForm
              key={panel.point?.id ?? 'new'}
              pipelineId={p.id}
              unit={p.unit}
              range={range}
              initial={panel.point}
              onCancel={() => setPanel(null)}
              onDone={(saved) => {
                toast('success', `${saved.tagCode} saved.`);
                setPanel(null);
              }}
            />
          </Card>
        ) : null}

        <Card>
          <h2 id="strip" className="mb-3 text-lg font-semibold">
            The line
          </h2>
          <SchematicStrip key={focus ? focus.join(':') : 'whole'} pipeline={{ ...p }} points={p.points} sites={p.sites} initialRange={focus} />
        </Card>

        <Card>
          <h2 className="mb-3 text-lg font-semibold">Details</h2>
          <PipelineFacts pipeline={p} />
        </Card>

        <section className="flex flex-col gap-2">
          <h2 className="text-lg font-semibold">Segments between block valves</h2>
          <p className="text-sm text-ink-soft">Worked out from the valves; they change when a valve is added or moved.</p>
          {p.segments.length ? <SegmentsTable pipeline={p} onShow={showSection} /> : <EmptyState title="Fewer than two block valves, so no segments yet." />}
        </section>

        <section className="flex flex-col gap-2">
          <h2 className="text-lg font-semibold">Isolation points</h2>
          {p.points.length ? (
            <PointsTable pipeline={p} onEdit={(point) => openPanel({ kind: 'point', point })} />
          ) : (
            <EmptyState title="No points on this line yet." />
          )}
        </section>
      </div>
    </>
  );
}
