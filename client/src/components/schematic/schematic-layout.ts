/** Pure geometry for the schematic strip: scale, ticks, label lanes, zoom and the isolation envelope. */

export type Range = readonly [number, number];

export interface Scale {
  x: (position: number) => number;
  from: number;
  to: number;
}

export function linearScale(range: Range, left: number, right: number): Scale {
  const [from, to] = range;
  const span = to - from || 1;
  return { from, to, x: (p) => left + ((p - from) / span) * (right - left) };
}

/** Tick positions at a round step (1, 2 or 5 × a power of ten) with about `target` ticks in view. */
export function niceTicks(range: Range, target: number): number[] {
  const [from, to] = range;
  const span = to - from;
  if (!(span > 0) || target < 1) return [from];
  const raw = span / target;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * power).find((s) => s >= raw) ?? 10 * power;
  const ticks: number[] = [];
  for (let t = Math.ceil(from / step) * step; t <= to + step * 1e-9; t += step) ticks.push(Number(t.toFixed(6)));
  return ticks;
}

/**
 * Puts labels into the fewest lanes so none overlap: each label (centred on x, `width` wide) goes
 * into the first lane whose last label ends `gap` before it starts. Input must be sorted by x.
 */
export function assignLanes(items: readonly { x: number; width: number }[], gap = 6): number[] {
  const laneEnds: number[] = [];
  return items.map(({ x, width }) => {
    const start = x - width / 2;
    let lane = laneEnds.findIndex((end) => end + gap <= start);
    if (lane === -1) lane = laneEnds.push(0) - 1;
    laneEnds[lane] = x + width / 2;
    return lane;
  });
}

/** Keeps a view inside the line and no narrower than `minSpan`. */
export function clampRange(range: Range, bounds: Range, minSpan: number): Range {
  const full = bounds[1] - bounds[0];
  let span = Math.min(Math.max(range[1] - range[0], Math.min(minSpan, full)), full);
  if (!(span > 0)) span = full;
  const from = Math.min(Math.max(range[0], bounds[0]), bounds[1] - span);
  return [from, from + span];
}

export function zoomRange(range: Range, factor: number, bounds: Range, minSpan: number): Range {
  const centre = (range[0] + range[1]) / 2;
  const half = ((range[1] - range[0]) * factor) / 2;
  return clampRange([centre - half, centre + half], bounds, minSpan);
}

export function panRange(range: Range, fraction: number, bounds: Range, minSpan: number): Range {
  const shift = (range[1] - range[0]) * fraction;
  return clampRange([range[0] + shift, range[1] + shift], bounds, minSpan);
}

/**
 * The stretch of line a work range is shut into: from the nearest barrier (an isolated point or a
 * plug) at or before the work to the nearest at or after it. A side with no barrier is null: the
 * work is open to the line that way.
 */
export function isolationEnvelope(work: Range, barriers: readonly number[]): { from: number | null; to: number | null } {
  const [a, b] = work[0] <= work[1] ? work : [work[1], work[0]];
  const before = barriers.filter((p) => p <= a);
  const after = barriers.filter((p) => p >= b);
  return { from: before.length ? Math.max(...before) : null, to: after.length ? Math.min(...after) : null };
}
