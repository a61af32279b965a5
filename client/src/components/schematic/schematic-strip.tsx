import { useEffect, useId, useRef, useState } from 'react';
import { pointKindLabels, valveTypeLabels, type IsolationPointKind, type LocationUnit, type NormalPosition, type ValveType } from '@shared/schemas/assets.schema';
import { formatPosition } from '@shared/assets/format';
import { GLYPH_BOTTOM, GLYPH_TOP, IsolatedMark, PlugMark, PointGlyph } from './schematic-glyphs';
import { SchematicControls } from './schematic-controls';
import { assignLanes, clampRange, isolationEnvelope, linearScale, niceTicks, panRange, zoomRange, type Range } from './schematic-layout';

export interface SchematicPoint {
  id: string;
  tagCode: string;
  kind: IsolationPointKind;
  position: number;
  description?: string | null;
  valveType?: ValveType | null;
  normalPosition?: NormalPosition | null;
  remotelyOperable?: boolean | null;
}

export interface SchematicSite {
  id?: string;
  name: string;
  position: number;
}

/** What later screens lay over the line: where the work is, which points are isolated, where plugs stand. */
export interface SchematicOverlays {
  workRange?: [number, number];
  isolatedPointIds?: string[];
  plugPositions?: number[];
}

export interface SchematicStripProps {
  pipeline: { startPosition: number; endPosition: number; unit: LocationUnit; name?: string };
  points: SchematicPoint[];
  sites: SchematicSite[];
  overlays?: SchematicOverlays;
  /** The section shown first; the whole line when left out. */
  initialRange?: [number, number];
}

const MARGIN = 30;
const LANE = 30;
const SITE_LANE = 18;
const CHAR_W = 6.8;
// A thin outline in the background colour keeps a label readable where a leader line crosses it.
const halo = { strokeWidth: 3, paintOrder: 'stroke', strokeLinejoin: 'round' } as const;

function useWidth(initial: number) {
  const ref = useRef<HTMLDivElement>(null);
  const [width, setWidth] = useState(initial);
  useEffect(() => {
    const el = ref.current;
    if (!el || typeof ResizeObserver === 'undefined') return;
    const observer = new ResizeObserver(([entry]) => setWidth(Math.max(280, Math.round(entry.contentRect.width))));
    observer.observe(el);
    return () => observer.disconnect();
  }, []);
  return [width, ref] as const;
}

function describePoint(p: SchematicPoint, unit: LocationUnit, isolated: boolean) {
  const parts = [`${pointKindLabels[p.kind]} ${p.tagCode} at ${formatPosition(p.position, unit)}`];
  if (p.kind === 'block_valve') {
    if (p.valveType) parts.push(`${valveTypeLabels[p.valveType].toLowerCase()} valve`);
    if (p.normalPosition) parts.push(`normally ${p.normalPosition}`);
    parts.push(p.remotelyOperable ? 'can be operated from the control room' : 'operated by hand on site');
  }
  if (p.description) parts.push(p.description);
  if (isolated) parts.push('ISOLATED');
  return parts.join('; ');
}

/** The line drawn to scale from start to end, with its points and sites; zoomable to a section. Reused wherever an isolation is shown. */
export function SchematicStrip({ pipeline, points, sites, overlays, initialRange }: SchematicStripProps) {
  const titleId = useId();
  const bounds: Range = [pipeline.startPosition, pipeline.endPosition];
  const minSpan = Math.max(0.05, (bounds[1] - bounds[0]) / 400);
  const [requested, setRequested] = useState<Range>(initialRange ?? bounds);
  const view = clampRange(requested, bounds, minSpan);
  const [width, boxRef] = useWidth(960);
  const [selectedId, setSelectedId] = useState<string | null>(null);
  const { unit } = pipeline;
  const scale = linearScale(view, MARGIN, width - MARGIN);
  const inView = (p: number) => p >= view[0] - 1e-9 && p <= view[1] + 1e-9;
  const clampX = (x: number, w: number) => Math.min(Math.max(x, w / 2 + 2), width - w / 2 - 2);

  const shown = points.filter((p) => inView(p.position)).sort((a, b) => a.position - b.position || a.tagCode.localeCompare(b.tagCode));
  const isolated = new Set(overlays?.isolatedPointIds ?? []);
  const labelled = shown.map((p) => {
    const w = Math.max(p.tagCode.length, formatPosition(p.position, unit).length) * CHAR_W + 4;
    return { p, width: w, x: clampX(scale.x(p.position), w), above: p.kind === 'block_valve' };
  });
  const valves = labelled.filter((l) => l.above);
  const others = labelled.filter((l) => !l.above);
  const valveLanes = assignLanes(valves);
  const otherLanes = assignLanes(others);
  const visibleSites = sites.filter((s) => inView(s.position)).sort((a, b) => a.position - b.position);
  const siteLabels = visibleSites.map((s) => {
    const w = s.name.length * CHAR_W + 4;
    return { s, width: w, x: clampX(scale.x(s.position), w) };
  });
  const siteLanes = assignLanes(siteLabels, 10);

  const nSite = siteLabels.length ? Math.max(...siteLanes) + 1 : 0;
  const nValve = valves.length ? Math.max(...valveLanes) + 1 : 0;
  const nOther = others.length ? Math.max(...otherLanes) + 1 : 0;
  const siteTop = 6;
  const valveTop = siteTop + nSite * SITE_LANE + 4;
  const pipeY = valveTop + nValve * LANE + GLYPH_TOP + 6;
  const otherTop = pipeY + GLYPH_BOTTOM + 8;
  const work = overlays?.workRange;
  const plugs = overlays?.plugPositions ?? [];
  const overlayY = otherTop + nOther * LANE + 10;
  const hasOverlayRow = Boolean(work);
  const axisY = overlayY + (hasOverlayRow ? 30 : 0) + 4;
  const height = axisY + 30;

  const lineFrom = Math.max(bounds[0], view[0]);
  const lineTo = Math.min(bounds[1], view[1]);
  const ticks = niceTicks(view, Math.max(2, Math.floor(width / 110)));
  const barriers = [...points.filter((p) => isolated.has(p.id)).map((p) => p.position), ...plugs];
  const envelope = work ? isolationEnvelope(work, barriers) : null;
  const selected = shown.find((p) => p.id === selectedId) ?? null;

  return (
    <figure className="flex flex-col gap-3" data-testid="schematic">
      <SchematicControls
        view={view}
        bounds={bounds}
        unit={unit}
        onZoom={(f) => setRequested(zoomRange(view, f, bounds, minSpan))}
        onPan={(f) => setRequested(panRange(view, f, bounds, minSpan))}
        onRange={(r) => setRequested(clampRange(r, bounds, minSpan))}
      />
      <div ref={boxRef} className="w-full overflow-hidden rounded-card border border-line bg-surface">
        <svg
          viewBox={`0 0 ${width} ${height}`}
          width="100%"
          className="block h-auto"
          role="group"
          aria-labelledby={titleId}
          data-testid="schematic-strip"
          data-from={view[0]}
          data-to={view[1]}
          fontFamily="inherit"
        >
          <title id={titleId}>
            {`${pipeline.name ?? 'Pipeline'}: schematic from ${formatPosition(view[0], unit)} to ${formatPosition(view[1], unit)}, ${shown.length} points in view`}
          </title>

          {work && work[1] >= view[0] && work[0] <= view[1] ? (
            <rect
              data-testid="overlay-work"
              data-from={work[0]}
              data-to={work[1]}
              x={scale.x(Math.max(work[0], view[0]))}
              y={pipeY - 28}
              width={Math.max(3, scale.x(Math.min(work[1], view[1])) - scale.x(Math.max(work[0], view[0])))}
              height={56}
              className="fill-caution-soft stroke-caution"
              strokeWidth={2}
              strokeDasharray="6 3"
            >
              <title>{`Work from ${formatPosition(work[0], unit)} to ${formatPosition(work[1], unit)}`}</title>
            </rect>
          ) : null}

          {siteLabels.map(({ s, x }, i) => {
            const sx = scale.x(s.position);
            const ly = siteTop + siteLanes[i] * SITE_LANE + 12;
            return (
              <g key={s.id ?? s.name} data-testid="schematic-site" data-kind="site" data-position={s.position}>
                <title>{`${s.name} at ${formatPosition(s.position, unit)}`}</title>
                <line x1={sx} y1={ly + 3} x2={sx} y2={pipeY - 8} className="stroke-line" strokeWidth={1.5} strokeDasharray="2 3" />
                <rect x={sx - 10} y={pipeY - 8} width={20} height={16} rx={3} className="fill-brand-soft stroke-brand" strokeWidth={1} />
                <text x={x} y={ly} textAnchor="middle" fontSize={12} fontWeight={600} className="fill-brand-strong">
                  {s.name}
                </text>
              </g>
            );
          })}

          <line x1={scale.x(lineFrom)} y1={pipeY} x2={scale.x(lineTo)} y2={pipeY} className="stroke-brand" strokeWidth={7} strokeLinecap={'round'} data-testid="schematic-pipe" />
          {view[0] > bounds[0] ? <path d={`M ${MARGIN - 8} ${pipeY} l 8 -7 v 14 z`} className="fill-brand" aria-hidden /> : null}
          {view[1] < bounds[1] ? <path d={`M ${width - MARGIN + 8} ${pipeY} l -8 -7 v 14 z`} className="fill-brand" aria-hidden /> : null}

          {plugs.filter(inView).map((pos) => (
            <g key={`plug-${pos}`} transform={`translate(${scale.x(pos)} ${pipeY})`} data-testid="overlay-plug" data-position={pos}>
              <title>{`Plug at ${formatPosition(pos, unit)}`}</title>
              <PlugMark />
            </g>
          ))}

          {labelled.map(({ p, x, above }) => {
            const px = scale.x(p.position);
            const lane = above ? valveLanes[valves.findIndex((v) => v.p === p)] : otherLanes[others.findIndex((o) => o.p === p)];
            const top = above ? valveTop + (nValve - 1 - lane) * LANE : otherTop + lane * LANE;
            const isIso = isolated.has(p.id);
            return (
              <g
                key={p.id}
                data-testid="schematic-point"
                data-kind={p.kind}
                data-position={p.position}
                data-tag={p.tagCode}
                data-isolated={isIso ? 'true' : undefined}
                className="cursor-pointer"
                onClick={() => setSelectedId(p.id === selectedId ? null : p.id)}
              >
                <rect x={px - 12} y={pipeY - GLYPH_TOP} width={24} height={GLYPH_TOP + GLYPH_BOTTOM} className="fill-transparent" />
                <title>{describePoint(p, unit, isIso)}</title>
                <line
                  x1={x}
                  y1={above ? top + LANE - 4 : top}
                  x2={px}
                  y2={above ? pipeY - GLYPH_TOP : pipeY + GLYPH_BOTTOM}
                  className="stroke-line"
                  strokeWidth={1}
                />
                <g transform={`translate(${px} ${pipeY})`}>
                  <PointGlyph point={p} />
                  {isIso ? <IsolatedMark /> : null}
                </g>
                {p.id === selectedId ? <circle cx={px} cy={pipeY} r={17} className="fill-none stroke-signal" strokeWidth={3} /> : null}
                <text x={x} y={top + 11} textAnchor="middle" fontSize={11.5} fontWeight={700} className={`${isIso ? 'fill-danger' : 'fill-ink'} stroke-surface`} {...halo}>
                  {p.tagCode}
                </text>
                <text x={x} y={top + 23} textAnchor="middle" fontSize={11} className="fill-ink-soft stroke-surface" {...halo}>
                  {formatPosition(p.position, unit)}
                </text>
              </g>
            );
          })}

          {work && envelope ? (
            <g data-testid="overlay-envelope" data-from={envelope.from ?? ''} data-to={envelope.to ?? ''}>
              <title>
                {envelope.from !== null && envelope.to !== null
                  ? `Work shut in between ${formatPosition(envelope.from, unit)} and ${formatPosition(envelope.to, unit)}`
                  : `Work not shut in toward the ${envelope.from === null ? 'start' : 'end'} of the line`}
              </title>
              {(() => {
                const a = scale.x(Math.max(view[0], envelope.from ?? view[0]));
                const b = scale.x(Math.min(view[1], envelope.to ?? view[1]));
                const closed = envelope.from !== null && envelope.to !== null;
                return (
                  <>
                    <path d={`M ${a} ${overlayY} v 8 H ${b} v -8`} className={closed ? 'fill-none stroke-safe' : 'fill-none stroke-danger'} strokeWidth={2.5} strokeDasharray={closed ? undefined : '5 4'} />
                    <text x={(a + b) / 2} y={overlayY + 24} textAnchor="middle" fontSize={11.5} fontWeight={700} className={closed ? 'fill-safe' : 'fill-danger'}>
                      {closed ? 'Isolated section' : `Open toward the ${envelope.from === null ? 'start' : 'end'}`}
                    </text>
                  </>
                );
              })()}
            </g>
          ) : null}

          <g aria-hidden>
            <line x1={MARGIN} y1={axisY} x2={width - MARGIN} y2={axisY} className="stroke-ink-soft" strokeWidth={1} />
            {ticks.map((t) => (
              <g key={t} transform={`translate(${scale.x(t)} ${axisY})`}>
                <line y1={0} y2={5} className="stroke-ink-soft" strokeWidth={1} />
                <text y={18} textAnchor="middle" fontSize={11} className="fill-ink-soft">
                  {formatPosition(t, unit)}
                </text>
              </g>
            ))}
          </g>
        </svg>
      </div>
      <p role="status" className="min-h-6 text-sm" data-testid="schematic-selected">
        {selected ? describePoint(selected, unit, isolated.has(selected.id)) : null}
      </p>
      <figcaption className="text-xs text-ink-soft">
        Drawn to scale by position. Valves above the line (letter: gate, ball, plug or check; solid body: normally closed; round head: can be operated from the control room),
        vents, drains, plug and blind places and isolators below. Select a symbol to read its details.
      </figcaption>
    </figure>
  );
}
