// Holdpoint's own symbols for the schematic strip, drawn around (0, 0) = the point on the pipe's centre line.
import type { IsolationPointKind, NormalPosition, ValveType } from '@shared/schemas/assets.schema';

export interface GlyphPoint {
  kind: IsolationPointKind;
  valveType?: ValveType | null;
  normalPosition?: NormalPosition | null;
  remotelyOperable?: boolean | null;
}

/** How far each glyph reaches above and below the centre line, for placing labels clear of it. */
export const GLYPH_TOP = 24;
export const GLYPH_BOTTOM = 22;

const typeLetter: Record<ValveType, string> = { gate: 'G', ball: 'B', plug: 'P', check: 'C' };

/**
 * Block valve: a rounded body astride the pipe with the valve type's letter, solid when the valve
 * normally stands closed, hollow when open. The stem ends in a hand bar (worked by hand on site) or
 * a round actuator head (can be worked from the control room).
 */
function Valve({ p }: { p: GlyphPoint }) {
  const closed = p.normalPosition === 'closed';
  return (
    <g>
      <line x1={0} y1={-10} x2={0} y2={-17} className="stroke-ink" strokeWidth={2} />
      {p.remotelyOperable ? (
        <circle cx={0} cy={-20} r={4.5} className="fill-info stroke-ink" strokeWidth={1} />
      ) : (
        <line x1={-6} y1={-17} x2={6} y2={-17} className="stroke-ink" strokeWidth={3} strokeLinecap="round" />
      )}
      <rect x={-8} y={-10} width={16} height={20} rx={4} className={closed ? 'fill-ink stroke-ink' : 'fill-surface stroke-ink'} strokeWidth={2} />
      {p.valveType ? (
        <text x={0} y={4} textAnchor="middle" fontSize={10} fontWeight={700} className={closed ? 'fill-surface' : 'fill-ink'}>
          {typeLetter[p.valveType]}
        </text>
      ) : null}
    </g>
  );
}

/** Vent: a riser off the top of the pipe ending in an open, upward-pointing cap. */
function Vent() {
  return (
    <g>
      <line x1={0} y1={-4} x2={0} y2={-14} className="stroke-info" strokeWidth={2} />
      <path d="M -6 -14 L 6 -14 L 0 -22 Z" className="fill-surface stroke-info" strokeWidth={2} strokeLinejoin="round" />
    </g>
  );
}

/** Drain: a leg off the bottom of the pipe ending in a solid drop. */
function Drain() {
  return (
    <g>
      <line x1={0} y1={4} x2={0} y2={12} className="stroke-info" strokeWidth={2} />
      <path d="M 0 12 C 6 17 5 22 0 22 C -5 22 -6 17 0 12 Z" className="fill-info" />
    </g>
  );
}

/** Places where a temporary isolation goes: a dashed marker ring with a letter (M mud plug, B blind, S stopple or mechanical plug). */
function TemporaryPlace({ letter, square }: { letter: string; square?: boolean }) {
  return (
    <g>
      {square ? (
        <rect x={-8} y={-8} width={16} height={16} transform="rotate(45)" className="fill-surface stroke-ink-soft" strokeWidth={1.5} strokeDasharray="3 2" />
      ) : (
        <circle r={8.5} className="fill-surface stroke-ink-soft" strokeWidth={1.5} strokeDasharray="3 2" />
      )}
      <text x={0} y={3.5} textAnchor="middle" fontSize={10} fontWeight={700} className="fill-ink-soft">
        {letter}
      </text>
    </g>
  );
}

/** Energy isolator: a box hung under the pipe with an open switch blade drawn in it. */
function Isolator() {
  return (
    <g>
      <line x1={0} y1={4} x2={0} y2={9} className="stroke-ink-soft" strokeWidth={1.5} strokeDasharray="2 2" />
      <rect x={-7} y={9} width={14} height={13} rx={2} className="fill-surface stroke-ink" strokeWidth={1.5} />
      <path d="M -4 19 L 3 12" className="stroke-ink" strokeWidth={1.5} strokeLinecap="round" />
      <circle cx={-4} cy={19} r={1.3} className="fill-ink" />
    </g>
  );
}

export function PointGlyph({ point }: { point: GlyphPoint }) {
  switch (point.kind) {
    case 'block_valve':
      return <Valve p={point} />;
    case 'vent':
      return <Vent />;
    case 'drain':
      return <Drain />;
    case 'plug_position':
      return <TemporaryPlace letter="M" />;
    case 'blind_position':
      return <TemporaryPlace letter="B" square />;
    case 'mechanical_plug_position':
      return <TemporaryPlace letter="S" />;
    case 'isolator':
      return <Isolator />;
  }
}

/** Marks an isolated point: a heavy ring and a small padlock beside it. */
export function IsolatedMark() {
  return (
    <g data-testid="overlay-isolated" aria-hidden>
      <circle r={14} className="fill-none stroke-danger" strokeWidth={2.5} />
      <g transform="translate(11 -13)">
        <path d="M -3 0 V -3 A 3 3 0 0 1 3 -3 V 0" className="fill-none stroke-danger" strokeWidth={1.6} />
        <rect x={-4.5} y={0} width={9} height={7} rx={1.2} className="fill-danger" />
      </g>
    </g>
  );
}

/** A plug standing in the pipe: a solid bar across it. */
export function PlugMark() {
  return <rect x={-3} y={-13} width={6} height={26} rx={1.5} className="fill-danger" />;
}
