import { useId, useState } from 'react';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import { SelectField } from '@client/components/ui/field';
import { SchematicStrip } from '@client/components/schematic/schematic-strip';
import { usePermitPipeline } from '@client/features/permits/api/get-pipeline';
import type { BoardItem } from '../api/get-board';
import { planRange } from '../lib/step-rules';
import { BoardRow, boardColumns, boardGrid } from './board-row';

interface Props {
  pipelineId: string;
  pipelineName: string;
  items: BoardItem[];
  tenantId: string;
  unit: LocationUnit;
  timeZone: string;
  now: Date;
  onAcknowledge: (item: BoardItem) => void;
}

/** The isolation envelope on the line: every point and plug in place, around one permit's work at a time. */
function PipelineStrip({ pipelineId, items }: { pipelineId: string; items: BoardItem[] }) {
  const pipeline = usePermitPipeline(pipelineId);
  const permits = [...new Map(items.map((i) => [i.permit.id, i.permit])).values()];
  const [permitId, setPermitId] = useState(permits[0]?.id ?? '');
  const shown = permits.find((p) => p.id === permitId) ?? permits[0];
  if (!pipeline.data || !shown) return null;
  const work: [number, number] = [shown.fromPosition, shown.toPosition];
  const overlays = {
    workRange: work,
    isolatedPointIds: items.filter((i) => i.pointId).map((i) => i.pointId as string),
    plugPositions: items.filter((i) => i.kind === 'plug').map((i) => i.position),
  };
  return (
    <div className="flex flex-col gap-2">
      {permits.length > 1 ? (
        <div className="max-w-sm">
          <SelectField label="Work range shown for" value={shown.id} onChange={(e) => setPermitId(e.target.value)}>
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

export function PipelineBoard({ pipelineId, pipelineName, items, tenantId, unit, timeZone, now, onAcknowledge }: Props) {
  const headingId = useId();
  const permits = new Set(items.map((i) => i.permit.id)).size;
  const unacknowledged = items.filter((i) => !i.controlRoomAckAppliedAt).length;
  return (
    <section aria-labelledby={headingId} className="flex min-w-0 flex-col gap-3 rounded-card border border-line bg-surface p-3" data-testid="board-pipeline" data-pipeline={pipelineName}>
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <h2 id={headingId} className="text-lg font-bold text-brand-strong">
          {pipelineName}
        </h2>
        <p className="text-sm text-ink-soft">
          {items.length} isolation{items.length === 1 ? '' : 's'} in place · {permits} permit{permits === 1 ? '' : 's'}
          {unacknowledged ? <span className="font-semibold text-ink"> · {unacknowledged} to acknowledge</span> : null}
        </p>
      </div>
      <PipelineStrip pipelineId={pipelineId} items={items} />
      <div className="min-w-0 overflow-hidden rounded-card border border-line">
        <div aria-hidden className={`hidden gap-x-4 bg-brand-soft px-3 py-2 text-sm font-semibold xl:grid ${boardGrid}`}>
          {boardColumns.map((c) => (
            <span key={c}>{c}</span>
          ))}
        </div>
        <ul aria-label={`Isolations in place on ${pipelineName}, by position`}>
          {items.map((item) => (
            <BoardRow key={item.stepId} item={item} tenantId={tenantId} unit={unit} timeZone={timeZone} now={now} onAcknowledge={onAcknowledge} />
          ))}
        </ul>
      </div>
    </section>
  );
}
