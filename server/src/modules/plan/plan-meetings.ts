/**
 * Where permits meet on the week-ahead plan: work ranges overlapping on one pipeline, or an isolation
 * on the same point, while both validity windows are open.
 *
 * Found here by a sweep rather than by pairing in SQL: a busy stretch of line with a few thousand open
 * permits makes about a million overlapping pairs, which PostgreSQL takes seconds to pair (even row by
 * row through an index, docs/performance.md), while this walks each pipeline once in order of position.
 * It keeps only what the answer shows: per permit the count of the permits it meets and the first few of
 * them by number, so the answer's size does not grow with the number of pairs.
 */

export interface MeetingPermit {
  id: string;
  number: string;
  pipelineId: string;
  fromPosition: number;
  toPosition: number;
  /** The validity window in microseconds since the epoch, as PostgreSQL compares it. */
  validFrom: number;
  validTo: number;
  /** Listed by the filters; meetings are answered only when one of the two permits is. */
  shown: boolean;
  /** The register points its isolations (planned or in place, not removed) are on, each once. */
  pointIds: readonly string[];
}

/** One meeting to list: two permits (indexes into the input, first the lower id) and the point they share. */
export interface Meeting {
  kind: 'work_range' | 'shared_point';
  first: number;
  second: number;
  pointId: string | null;
}

export interface Meetings {
  /** Per permit (by index): how many other permits' work ranges meet its own. */
  workOverlaps: Int32Array;
  /** Per permit (by index): how many other permits isolate one of its points at the same time. */
  sharedPoints: Int32Array;
  /** The meetings of each shown permit with the first `perPermit` others it meets, by number (one per shared point). */
  listed: Meeting[];
  /** Every meeting of a shown permit, listed or not (one per shared point). */
  total: number;
}

const bothOpen = (a: MeetingPermit, b: MeetingPermit) => a.validFrom < b.validTo && b.validFrom < a.validTo;

/** The first few others a permit meets, by number: a short list kept in order, with its count. */
class FirstOthers {
  readonly named: number[][];
  readonly counts: Int32Array;
  /** Per permit, the rank a newcomer must beat to be named: past the last once the list is full. */
  private readonly bar: Int32Array;
  constructor(
    size: number,
    private readonly rank: Int32Array,
    private readonly limit: number,
  ) {
    this.named = Array.from({ length: size }, () => []);
    this.counts = new Int32Array(size);
    this.bar = new Int32Array(size).fill(size);
  }
  add(of: number, other: number) {
    this.counts[of] += 1;
    const r = this.rank[other];
    // Most meetings on a busy stretch stop here, without touching the list.
    if (r >= this.bar[of]) return;
    const list = this.named[of];
    let at = list.length < this.limit ? list.length : list.length - 1;
    while (at > 0 && this.rank[list[at - 1]] > r) {
      list[at] = list[at - 1];
      at -= 1;
    }
    list[at] = other;
    if (list.length === this.limit) this.bar[of] = this.rank[list[this.limit - 1]];
  }
}

export function findMeetings(permits: readonly MeetingPermit[], perPermit: number): Meetings {
  const n = permits.length;
  // A permit's place in number order (numbers are unique per tenant), so "first by number" compares integers.
  const byNumber = permits.map((_, i) => i).sort((a, b) => (permits[a].number < permits[b].number ? -1 : permits[a].number > permits[b].number ? 1 : 0));
  const rank = new Int32Array(n);
  byNumber.forEach((p, i) => (rank[p] = i));
  const pair = (a: number, b: number) => (permits[a].id < permits[b].id ? [a, b] : [b, a]);
  let total = 0;

  // Work ranges: per pipeline in order of where the work starts. A permit still open at this start
  // (its range reaches it) overlaps this one along the line, closed ranges as on the permit page.
  const work = new FirstOthers(n, rank, perPermit);
  const lines = new Map<string, number[]>();
  permits.forEach((p, i) => {
    const line = lines.get(p.pipelineId);
    if (line) line.push(i);
    else lines.set(p.pipelineId, [i]);
  });
  const shown = Uint8Array.from(permits, (p) => (p.shown ? 1 : 0));
  const validFrom = Float64Array.from(permits, (p) => p.validFrom);
  const validTo = Float64Array.from(permits, (p) => p.validTo);
  const toPosition = Float64Array.from(permits, (p) => p.toPosition);
  for (const line of lines.values()) {
    line.sort((a, b) => permits[a].fromPosition - permits[b].fromPosition);
    // The permits whose range reaches the current start, kept in place (those left behind drop out for good).
    const open = new Int32Array(line.length);
    let size = 0;
    for (const a of line) {
      const start = permits[a].fromPosition;
      let kept = 0;
      for (let k = 0; k < size; k += 1) {
        const b = open[k];
        if (toPosition[b] < start) continue;
        open[kept++] = b;
        if (!(validFrom[a] < validTo[b] && validFrom[b] < validTo[a])) continue;
        work.add(a, b);
        work.add(b, a);
        if (shown[a] || shown[b]) total += 1;
      }
      open[kept++] = a;
      size = kept;
    }
  }

  // Shared points: per point, every two permits planning an isolation on it while both are open.
  const onPoint = new Map<string, number[]>();
  permits.forEach((p, i) => {
    for (const pointId of p.pointIds) {
      const list = onPoint.get(pointId);
      if (list) list.push(i);
      else onPoint.set(pointId, [i]);
    }
  });
  const sharedBy = new Map<number, { a: number; b: number; points: string[] }>();
  for (const [pointId, list] of onPoint) {
    for (let x = 0; x < list.length; x += 1) {
      for (let y = x + 1; y < list.length; y += 1) {
        if (!bothOpen(permits[list[x]], permits[list[y]])) continue;
        const [a, b] = pair(list[x], list[y]);
        const key = a * n + b;
        const found = sharedBy.get(key);
        if (found) found.points.push(pointId);
        else sharedBy.set(key, { a, b, points: [pointId] });
        if (permits[a].shown || permits[b].shown) total += 1;
      }
    }
  }
  const shared = new FirstOthers(n, rank, perPermit);
  for (const { a, b } of sharedBy.values()) {
    shared.add(a, b);
    shared.add(b, a);
  }

  const listed: Meeting[] = [];
  const seen = new Set<number>();
  permits.forEach((p, i) => {
    if (!p.shown) return;
    for (const other of work.named[i]) {
      const [a, b] = pair(i, other);
      if (seen.has(a * n + b)) continue;
      seen.add(a * n + b);
      listed.push({ kind: 'work_range', first: a, second: b, pointId: null });
    }
  });
  seen.clear();
  permits.forEach((p, i) => {
    if (!p.shown) return;
    for (const other of shared.named[i]) {
      const [a, b] = pair(i, other);
      if (seen.has(a * n + b)) continue;
      seen.add(a * n + b);
      for (const pointId of sharedBy.get(a * n + b)!.points) listed.push({ kind: 'shared_point', first: a, second: b, pointId });
    }
  });
  return { workOverlaps: work.counts, sharedPoints: shared.counts, listed, total };
}
