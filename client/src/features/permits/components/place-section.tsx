import type { LocationUnit } from '@shared/schemas/assets.schema';
import type { PipelineDetail } from '@shared/assets/types';
import { Card } from '@client/components/ui/page';
import type { PermitDetail } from '@shared/types/permits';
import { usePermitPipeline } from '../api/get-pipeline';
import { usePermitIsolations } from '../api/get-permit-isolations';
import { formatRange, pipelineLabel } from '../lib/positions';
import { schematicOverlays } from '../lib/schematic-overlays';
import { Detail, DetailList } from './detail-list';
import { SchematicStrip } from '@client/components/schematic/schematic-strip';

/** The stretch of line the drawing opens on: the work range with a margin each side (at least a tenth of the line), inside the line's ends. */
function aroundWork(work: { fromPosition: number; toPosition: number }, line: { startPosition: number; endPosition: number }): [number, number] {
  const length = line.endPosition - line.startPosition;
  const margin = Math.max((work.toPosition - work.fromPosition) * 2, length / 10);
  return [Math.max(line.startPosition, work.fromPosition - margin), Math.min(line.endPosition, work.toPosition + margin)];
}

/** The line drawn with the work range and whatever is isolated on it. */
function PlaceStrip({ permit, pipeline }: { permit: PermitDetail; pipeline: PipelineDetail }) {
  const isolations = usePermitIsolations(permit.id);
  const overlays = schematicOverlays(permit, isolations.data?.items ?? []);
  return (
    <div className="mt-3 min-w-0">
      <SchematicStrip
        pipeline={{ startPosition: pipeline.startPosition, endPosition: pipeline.endPosition, unit: pipeline.unit, name: pipeline.name }}
        points={pipeline.points}
        sites={pipeline.sites}
        overlays={overlays}
        initialRange={aroundWork(permit, pipeline)}
      />
    </div>
  );
}

/**
 * Where the work is. `showStrip` is for pages without an isolation plan section: that section draws
 * the same line with the isolation envelope, and one drawing of the line per page is enough.
 */
export function PlaceSection({ permit, unit, showStrip = true }: { permit: PermitDetail; unit: LocationUnit; showStrip?: boolean }) {
  const pipeline = usePermitPipeline(permit.pipelineId);
  const lineUnit = pipeline.data?.unit ?? unit;

  return (
    <Card>
      <h2 className="mb-2 text-lg font-semibold">Place</h2>
      <DetailList>
        <Detail label="Pipeline">{pipeline.data ? pipelineLabel(pipeline.data) : permit.pipelineName}</Detail>
        <Detail label="Work range">{formatRange(permit.fromPosition, permit.toPosition, lineUnit)}</Detail>
        {pipeline.data ? <Detail label="Line runs">{formatRange(pipeline.data.startPosition, pipeline.data.endPosition, lineUnit)}</Detail> : null}
      </DetailList>
      {!showStrip ? null : pipeline.data ? (
        <PlaceStrip permit={permit} pipeline={pipeline.data} />
      ) : pipeline.isPending ? (
        <p className="mt-3 text-sm text-ink-soft">Loading the line…</p>
      ) : (
        <p className="mt-3 text-sm text-ink-soft">The line drawing could not be loaded.</p>
      )}
    </Card>
  );
}
