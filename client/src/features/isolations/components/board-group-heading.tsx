import { memo } from 'react';
import { SelectField } from '@client/components/ui/field';
import { SchematicStrip } from '@client/components/schematic/schematic-strip';
import { usePermitPipeline } from '@client/features/permits';
import type { BoardItem } from '@shared/types/board';
import type { BoardGroup } from '../lib/board-entries';
import { planRange } from '../lib/step-rules';
import { boardColumns, boardGrid } from './board-row';
import { slotClass, slotProps, type VirtualSlot } from './virtual-slot';

interface Props extends VirtualSlot {
  group: BoardGroup;
  /** The permit whose work range the strip is drawn around; kept by the list so scrolling away and back does not lose it. */
  shownPermitId: string | undefined;
  onShowPermit: (pipelineId: string, permitId: string) => void;
}

/** The isolation envelope on the line: every point and plug in place, around one permit's work at a time. */
function PipelineStrip({ pipelineId, items, shownPermitId, onShowPermit }: { pipelineId: string; items: BoardItem[]; shownPermitId: string | undefined; onShowPermit: Props['onShowPermit'] }) {
  const pipeline = usePermitPipeline(pipelineId);
  const permits = [...new Map(items.map((i) => [i.permit.id, i.permit])).values()];
  const shown = permits.find((p) => p.id === shownPermitId) ?? permits[0];
  if (!pipeline.data || !shown) return null;
  const work: [number, number] = [shown.fromPosition, shown.toPosition];
  const overlays = {
    workRange: work,
    isolatedPointIds: items.filter((i) => i.pointId).map((i) => i.pointId as string),
    plugPositions: items.filter((i) => i.kind === 'plug').map((i) => i.position),
  };
  return (
    <div className="flex min-w-0 flex-col gap-2">
      {permits.length > 1 ? (
        <div className="max-w-sm">
          <SelectField label="Work range shown for" value={shown.id} onChange={(e) => onShowPermit(pipelineId, e.target.value)}>
            {permits.map((p) => (
              <option key={p.id} value={p.id}>
                {p.number}
              </option>
            ))}
          </SelectField>
        </div>
      ) : null}
      <SchematicStrip
        key={shown.id}
        pipeline={{ startPosition: pipeline.data.startPosition, endPosition: pipeline.data.endPosition, unit: pipeline.data.unit, name: pipeline.data.name }}
        points={pipeline.data.points}
        sites={pipeline.data.sites}
        overlays={overlays}
        initialRange={planRange(work, items.filter((i) => i.permit.id === shown.id))}
      />
    </div>
  );
}

/** A pipeline's heading on the board: its counts, the strip, and (on wide screens) the column names of the rows under it. */
export const BoardGroupHeading = memo(function BoardGroupHeading({ group, shownPermitId, onShowPermit, ...slot }: Props) {
  const { pipelineId, pipelineName, items } = group;
  const permits = new Set(items.map((i) => i.permit.id)).size;
  const unacknowledged = items.filter((i) => !i.controlRoomAckAppliedAt).length;
  return (
    <li {...slotProps(slot)} className={`${slotClass} ${slot.index ? 'pt-4' : ''}`} data-testid="board-pipeline" data-pipeline={pipelineName}>
      <div className="min-w-0 rounded-t-card border-x border-t border-line bg-surface">
        <div className="flex min-w-0 flex-col gap-3 p-3">
          <div className="flex flex-wrap items-baseline justify-between gap-2">
            <h2 className="text-lg font-bold break-words text-brand-strong">
              {pipelineName}
            </h2>
            <p className="text-sm text-ink-soft">
              {items.length} isolation{items.length === 1 ? '' : 's'} in place · {permits} permit{permits === 1 ? '' : 's'}
              {unacknowledged ? <span className="font-semibold text-ink"> · {unacknowledged} to acknowledge</span> : null}
            </p>
          </div>
          <PipelineStrip pipelineId={pipelineId} items={items} shownPermitId={shownPermitId} onShowPermit={onShowPermit} />
        </div>
        <div aria-hidden className={`hidden gap-x-4 border-t border-line bg-brand-soft px-3 py-2 text-sm font-semibold xl:grid ${boardGrid}`}>
          {boardColumns.map((c) => (
            <span key={c}>{c}</span>
          ))}
        </div>
      </div>
    </li>
  );
});
