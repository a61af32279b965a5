// Figures, targets and the printed report of `npm run bench`.

export type Verdict = 'PASS' | 'FAIL' | 'INFO' | 'SKIPPED';

export interface Figure {
  name: string;
  value: number | null;
  unit: string;
  /** "< 150" or ">= 0.6"; absent when the figure has no target. */
  target?: { op: '<' | '>='; value: number };
  verdict: Verdict;
  note?: string;
}

export interface LoadResult {
  name: string;
  path: string;
  connections: number;
  requests: number;
  seconds: number;
  rps: number;
  p50: number;
  p95: number;
  p99: number;
  max: number;
  non2xx: number;
  errors: number;
  bytesPerResponse: number;
  statusCodes: Record<string, number>;
  /** The server's peak resident memory during this run (null for the floor). */
  rssPeakMb: number | null;
}

/** Nearest-rank percentile of an unsorted list (copied, not changed). */
export function percentile(values: number[], p: number): number {
  if (!values.length) return NaN;
  const sorted = [...values].sort((a, b) => a - b);
  const rank = Math.min(sorted.length, Math.max(1, Math.ceil((p / 100) * sorted.length)));
  return sorted[rank - 1];
}

export function judge(name: string, value: number | null, unit: string, target?: Figure['target'], note?: string): Figure {
  if (value === null || !Number.isFinite(value)) return { name, value: null, unit, target, verdict: target ? 'FAIL' : 'INFO', note: note ?? 'not measured' };
  if (!target) return { name, value, unit, verdict: 'INFO', note };
  const ok = target.op === '<' ? value < target.value : value >= target.value;
  return { name, value, unit, target, verdict: ok ? 'PASS' : 'FAIL', note };
}

export const skipped = (name: string, note: string): Figure => ({ name, value: null, unit: '', verdict: 'SKIPPED', note });

const fmt = (v: number, unit: string) => {
  if (unit === 'ratio') return v.toFixed(2);
  if (unit === 'req/s') return `${v.toFixed(0)} req/s`;
  if (unit === 'ms') return `${v < 10 ? v.toFixed(1) : v.toFixed(0)} ms`;
  if (unit === 'MB') return `${v.toFixed(0)} MB`;
  return `${v}${unit ? ` ${unit}` : ''}`;
};

export function printLoad(r: LoadResult) {
  const errors = r.non2xx || r.errors ? `  (${r.non2xx} non-2xx, ${r.errors} errors: ${JSON.stringify(r.statusCodes)})` : '';
  const rss = r.rssPeakMb === null ? '' : `  RSS ${r.rssPeakMb.toFixed(0)} MB`;
  console.log(
    `  ${r.name.padEnd(44)} p50 ${fmt(r.p50, 'ms').padStart(7)}  p95 ${fmt(r.p95, 'ms').padStart(7)}  p99 ${fmt(r.p99, 'ms').padStart(7)}  ${fmt(r.rps, 'req/s').padStart(10)}  ${String(r.requests).padStart(6)} req  ${(r.bytesPerResponse / 1024).toFixed(0).padStart(6)} KB/resp${rss}${errors}`,
  );
}

export function printFigure(f: Figure) {
  const value = f.value === null ? '—' : fmt(f.value, f.unit);
  const target = f.target ? `${f.target.op} ${fmt(f.target.value, f.unit)}` : '';
  console.log(`  ${f.verdict.padEnd(7)} ${f.name.padEnd(52)} ${value.padStart(12)}   target ${target.padEnd(12) || '—'.padEnd(12)}${f.note ? `  ${f.note}` : ''}`);
}
