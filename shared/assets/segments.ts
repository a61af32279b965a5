/**
 * Segments of a line between adjacent block valves, derived from the points, never stored: when a
 * valve is added or moved the segments follow by themselves.
 */
import type { IsolationPointKind, ValveType } from '../schemas/assets.schema';

export interface SegmentPointInput {
  id: string;
  tagCode: string;
  kind: IsolationPointKind;
  position: number;
  valveType?: ValveType | null;
  remotelyOperable?: boolean | null;
}

export interface SegmentEnd {
  pointId: string;
  tagCode: string;
  position: number;
  valveType: ValveType | null;
  remotelyOperable: boolean;
}

export interface PipelineSegment {
  /** 1-based, in position order. */
  index: number;
  from: SegmentEnd;
  to: SegmentEnd;
  length: number;
  /** Every other point lying between the two valves; a point at a valve's own position counts in both neighbouring segments. */
  pointIds: string[];
  ventIds: string[];
  drainIds: string[];
  /** A check valve at either end holds flow one way only, so it is no block on its own. */
  oneWayEnd: boolean;
  /** A valve at either end can be opened from the control room. */
  remoteEnd: boolean;
}

const byPosition = (a: SegmentPointInput, b: SegmentPointInput) => a.position - b.position || a.tagCode.localeCompare(b.tagCode);

// Positions are stored with three decimals; compare them at that resolution so float noise cannot
// move a point across a valve.
const milli = (x: number) => Math.round(x * 1000);

function endOf(p: SegmentPointInput): SegmentEnd {
  return { pointId: p.id, tagCode: p.tagCode, position: p.position, valveType: p.valveType ?? null, remotelyOperable: p.remotelyOperable === true };
}

export function deriveSegments(points: readonly SegmentPointInput[]): PipelineSegment[] {
  const sorted = [...points].sort(byPosition);
  const valves = sorted.filter((p) => p.kind === 'block_valve');
  const others = sorted.filter((p) => p.kind !== 'block_valve');
  const segments: PipelineSegment[] = [];
  for (let i = 0; i + 1 < valves.length; i++) {
    const from = valves[i];
    const to = valves[i + 1];
    const inside = others.filter((p) => milli(p.position) >= milli(from.position) && milli(p.position) <= milli(to.position));
    segments.push({
      index: i + 1,
      from: endOf(from),
      to: endOf(to),
      length: (milli(to.position) - milli(from.position)) / 1000,
      pointIds: inside.map((p) => p.id),
      ventIds: inside.filter((p) => p.kind === 'vent').map((p) => p.id),
      drainIds: inside.filter((p) => p.kind === 'drain').map((p) => p.id),
      oneWayEnd: from.valveType === 'check' || to.valveType === 'check',
      remoteEnd: from.remotelyOperable === true || to.remotelyOperable === true,
    });
  }
  return segments;
}

/**
 * The segment holding a position (for example a repair at MP 17.3). A position exactly on a valve
 * lies on the boundary of two segments; the one downstream of that valve is returned. Outside the
 * outermost valves there is no segment: null.
 */
export function segmentAt(segments: readonly PipelineSegment[], position: number): PipelineSegment | null {
  const at = milli(position);
  return segments.find((s) => at >= milli(s.from.position) && at < milli(s.to.position)) ?? segments.find((s) => at === milli(s.to.position)) ?? null;
}
