import type { LocationUnit } from '@shared/schemas/assets.schema';
import { Card } from '@client/components/ui/page';
import type { PermitDetail } from '../api/get-permit';
import { usePermitPipeline } from '../api/get-pipeline';
import { usePermitIsolations } from '../api/get-permit-isolations';
import { formatRange, pipelineLabel } from '../lib/positions';
import { schematicOverlays } from '../lib/schematic-overlays';
import { Detail, DetailList } from './detail-list';

export function PlaceSection({ permit, unit }: { permit: PermitDetail; unit: LocationUnit }) {
  const pipeline = usePermitPipeline(permit.pipelineId);
  const isolations = usePermitIsolations(permit.id);
  const overlays = schematicOverlays(permit, isolations.data?.items ?? []);
  const lineUnit = pipeline.data?.unit ?? unit;

  return (
    <Card>
      <h2 className="mb-2 text-lg font-semibold">Place</h2>
      <DetailList>
        <Detail label="Pipeline">{pipeline.data ? pipelineLabel(pipeline.data) : permit.pipelineName}</Detail>
        <Detail label="Work range">{formatRange(permit.fromPosition, permit.toPosition, lineUnit)}</Detail>
        {pipeline.data ? <Detail label="Line runs">{formatRange(pipeline.data.startPosition, pipeline.data.endPosition, lineUnit)}</Detail> : null}
      </DetailList>
      {/*
        SCHEMATIC SLOT — client/src/components/schematic/schematic-strip.tsx is being written separately.
        When it lands, replace the placeholder below with:
          <SchematicStrip
            pipeline={{ startPosition: pipeline.data.startPosition, endPosition: pipeline.data.endPosition, unit: pipeline.data.unit }}
            points={pipeline.data.points}
            sites={pipeline.data.sites}
            overlays={overlays}
          />
        `overlays` is already built: workRange = [fromPosition, toPosition], isolatedPointIds, plugPositions.
      */}
      <div
        className="mt-3 rounded-md border border-dashed border-line bg-paper px-3 py-4 text-sm text-ink-soft"
        data-testid="schematic-slot"
        data-work-range={overlays.workRange.join(',')}
        data-isolated-points={overlays.isolatedPointIds.length}
        data-plugs={overlays.plugPositions.length}
      >
        Line schematic: work range {formatRange(overlays.workRange[0], overlays.workRange[1], lineUnit)}
        {overlays.isolatedPointIds.length ? `, ${overlays.isolatedPointIds.length} point(s) held isolated` : ''}
        {overlays.plugPositions.length ? `, ${overlays.plugPositions.length} plug(s) in place` : ''}.
      </div>
    </Card>
  );
}
