import type { FormEvent } from 'react';
import { positionPrefix, type LocationUnit } from '@shared/schemas/assets.schema';
import { formatPosition } from '@shared/assets/format';
import type { Range } from './schematic-layout';

interface Props {
  view: Range;
  bounds: Range;
  unit: LocationUnit;
  onZoom: (factor: number) => void;
  onPan: (fraction: number) => void;
  onRange: (range: Range) => void;
}

const button = 'min-h-11 min-w-11 rounded-md border border-line bg-surface px-3 text-sm font-semibold hover:bg-brand-soft disabled:opacity-50';

/** Zoom and pan for the strip: buttons for quick moves, a from/to pair for an exact section. */
export function SchematicControls({ view, bounds, unit, onZoom, onPan, onRange }: Props) {
  const whole = view[0] <= bounds[0] && view[1] >= bounds[1];
  const prefix = positionPrefix[unit];
  const submit = (e: FormEvent<HTMLFormElement>) => {
    e.preventDefault();
    const data = new FormData(e.currentTarget);
    const from = Number(data.get('from'));
    const to = Number(data.get('to'));
    if (Number.isFinite(from) && Number.isFinite(to) && to > from) onRange([from, to]);
  };
  return (
    <div className="flex flex-wrap items-end gap-2">
      <div className="flex flex-wrap gap-2" role="group" aria-label="Zoom the strip">
        <button type="button" className={button} onClick={() => onZoom(0.5)} aria-label="Zoom in">
          +
        </button>
        <button type="button" className={button} onClick={() => onZoom(2)} disabled={whole} aria-label="Zoom out">
          −
        </button>
        <button type="button" className={button} onClick={() => onPan(-0.5)} disabled={view[0] <= bounds[0]} aria-label="Move toward the start">
          ◀
        </button>
        <button type="button" className={button} onClick={() => onPan(0.5)} disabled={view[1] >= bounds[1]} aria-label="Move toward the end">
          ▶
        </button>
        <button type="button" className={button} onClick={() => onRange(bounds)} disabled={whole}>
          Whole line
        </button>
      </div>
      {/* Keyed by the view so the boxes show the section in view after any button move. */}
      <form key={`${view[0]}:${view[1]}`} onSubmit={submit} className="flex flex-wrap items-end gap-2" aria-label="Show a section">
        <label className="flex flex-col text-xs font-semibold">
          From ({prefix})
          <input name="from" type="number" step="any" min={bounds[0]} max={bounds[1]} defaultValue={formatPosition(view[0], unit, false)} className="min-h-11 w-24 rounded-md border border-line bg-surface px-2 text-base font-normal" />
        </label>
        <label className="flex flex-col text-xs font-semibold">
          To ({prefix})
          <input name="to" type="number" step="any" min={bounds[0]} max={bounds[1]} defaultValue={formatPosition(view[1], unit, false)} className="min-h-11 w-24 rounded-md border border-line bg-surface px-2 text-base font-normal" />
        </label>
        <button type="submit" className={button}>
          Show
        </button>
      </form>
    </div>
  );
}
