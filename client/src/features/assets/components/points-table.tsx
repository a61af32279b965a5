import { pointKindLabels, valveTypeLabels } from '@shared/schemas/assets.schema';
import { formatPosition } from '@shared/assets/format';
import type { IsolationPoint, PipelineDetail } from '@shared/assets/types';
import { Can } from '@client/lib/ability';
import { Button } from '@client/components/ui/button';

function valveText(p: IsolationPoint) {
  if (p.kind !== 'block_valve') return '';
  return [p.valveType ? valveTypeLabels[p.valveType] : null, p.normalPosition ? `normally ${p.normalPosition}` : null, p.remotelyOperable ? 'remotely operable' : 'hand-operated'].filter(Boolean).join(', ');
}

export function PointsTable({ pipeline, onEdit }: { pipeline: PipelineDetail; onEdit: (p: IsolationPoint) => void }) {
  return (
    <div className="relative overflow-x-auto rounded-card border border-line bg-surface">
      <table className="w-full text-left text-sm">
        <caption className="sr-only">Isolation points of {pipeline.name}, in position order</caption>
        <thead className="bg-brand-soft">
          <tr>
            <th scope="col" className="px-3 py-2">Position</th>
            <th scope="col" className="px-3 py-2">Tag code</th>
            <th scope="col" className="px-3 py-2">Kind</th>
            <th scope="col" className="px-3 py-2">Valve</th>
            <th scope="col" className="px-3 py-2">Description</th>
            <th scope="col" className="px-3 py-2">
              <span className="sr-only">Actions</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {pipeline.points.map((p) => (
            <tr key={p.id} className="border-t border-line" data-testid="point-row">
              <td className="px-3 py-2 whitespace-nowrap">{formatPosition(p.position, pipeline.unit)}</td>
              <td className="px-3 py-2 font-semibold whitespace-nowrap">{p.tagCode}</td>
              <td className="px-3 py-2">{pointKindLabels[p.kind]}</td>
              <td className="px-3 py-2">{valveText(p)}</td>
              <td className="px-3 py-2">{p.description}</td>
              <td className="px-3 py-1 text-right">
                <Can I="update" a="IsolationPoint">
                  <Button variant="ghost" onClick={() => onEdit(p)} aria-label={`Edit ${p.tagCode}`}>
                    Edit
                  </Button>
                </Can>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

export function SegmentsTable({ pipeline, onShow }: { pipeline: PipelineDetail; onShow: (range: [number, number]) => void }) {
  const tag = (id: string) => pipeline.points.find((p) => p.id === id)?.tagCode ?? '';
  const unitLabel = pipeline.unit === 'mi' ? 'mi' : 'km';
  return (
    <div className="relative overflow-x-auto rounded-card border border-line bg-surface">
      <table className="w-full text-left text-sm">
        <caption className="sr-only">Segments between adjacent block valves</caption>
        <thead className="bg-brand-soft">
          <tr>
            <th scope="col" className="px-3 py-2">Segment</th>
            <th scope="col" className="px-3 py-2">Between</th>
            <th scope="col" className="px-3 py-2">Length</th>
            <th scope="col" className="px-3 py-2">Vents</th>
            <th scope="col" className="px-3 py-2">Drains</th>
            <th scope="col" className="px-3 py-2">Note</th>
            <th scope="col" className="px-3 py-2">
              <span className="sr-only">Actions</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {pipeline.segments.map((s) => (
            <tr key={s.index} className="border-t border-line" data-testid="segment-row">
              <td className="px-3 py-2">{s.index}</td>
              <td className="px-3 py-2 whitespace-nowrap">
                {s.from.tagCode} ({formatPosition(s.from.position, pipeline.unit)}) – {s.to.tagCode} ({formatPosition(s.to.position, pipeline.unit)})
              </td>
              <td className="px-3 py-2 whitespace-nowrap">
                {s.length.toFixed(3).replace(/\.?0+$/, '')} {unitLabel}
              </td>
              <td className="px-3 py-2">{s.ventIds.map(tag).join(', ') || 'none'}</td>
              <td className="px-3 py-2">{s.drainIds.map(tag).join(', ') || 'none'}</td>
              <td className="px-3 py-2">
                {[s.oneWayEnd ? 'Check valve at an end: holds one way only' : null, s.remoteEnd ? 'Remotely operable end valve' : null].filter(Boolean).join('; ')}
              </td>
              <td className="px-3 py-1 text-right">
                <Button variant="ghost" onClick={() => onShow([s.from.position, s.to.position])}>
                  Show on strip
                </Button>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
