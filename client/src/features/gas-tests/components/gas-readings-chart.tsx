import { useId } from 'react';
import type { AtmosphereLimits } from '@shared/calc';
import type { GasTestRow } from '@shared/types/gas-tests';
import { formatInZone } from '@shared/time/zone';

// Hand-drawn SVG (no charting package is installed): one small chart per gas, because oxygen in
// % vol, flammable gas in % LEL and the toxics in ppm share no scale. The history table below is
// the same data as text.

interface Series {
  key: 'o2Pct' | 'lelPct' | 'h2sPpm' | 'coPpm';
  title: string;
  unit: string;
  lines: { value: number; label: string }[];
}

const W = 320;
const H = 170;
const PAD = { left: 40, right: 10, top: 12, bottom: 28 };

function seriesFor(limits: AtmosphereLimits, hotWork: boolean): Series[] {
  const lel = hotWork ? limits.hotWorkLel : limits.lel;
  return [
    { key: 'o2Pct', title: 'Oxygen', unit: '% vol', lines: [{ value: limits.o2.min, label: `min ${limits.o2.min}` }, { value: limits.o2.max, label: `max ${limits.o2.max}` }] },
    { key: 'lelPct', title: hotWork ? 'Flammable gas (hot-work limit)' : 'Flammable gas', unit: '% LEL', lines: [{ value: lel.max, label: `max ${lel.max}` }] },
    { key: 'h2sPpm', title: 'H₂S', unit: 'ppm', lines: [{ value: limits.h2s.max, label: `max ${limits.h2s.max}` }] },
    { key: 'coPpm', title: 'CO', unit: 'ppm', lines: [{ value: limits.co.max, label: `max ${limits.co.max}` }] },
  ];
}

function niceMax(v: number) {
  if (v <= 0) return 1;
  const p = 10 ** Math.floor(Math.log10(v));
  return [1, 2, 2.5, 5, 10].map((m) => m * p).find((x) => x >= v)!;
}

function MiniChart({ s, tests, timeZone }: { s: Series; tests: GasTestRow[]; timeZone: string }) {
  const id = useId();
  const values = tests.map((t) => t.readings[s.key]);
  const limitValues = s.lines.map((l) => l.value);
  const isO2 = s.key === 'o2Pct';
  const lo = isO2 ? Math.floor(Math.min(18, ...values, ...limitValues) - 0.5) : 0;
  const hi = isO2 ? Math.ceil(Math.max(24, ...values, ...limitValues) + 0.5) : niceMax(Math.max(...values, ...limitValues, 1) * 1.15);
  const times = tests.map((t) => new Date(t.testedAt).getTime());
  const t0 = Math.min(...times);
  const t1 = Math.max(...times);
  const x = (t: number) => PAD.left + (t1 === t0 ? (W - PAD.left - PAD.right) / 2 : ((t - t0) / (t1 - t0)) * (W - PAD.left - PAD.right));
  const y = (v: number) => PAD.top + (1 - (v - lo) / (hi - lo)) * (H - PAD.top - PAD.bottom);
  const outside = tests.filter((t) => t.assessment.gases[s.key === 'o2Pct' ? 'o2' : s.key === 'lelPct' ? 'lel' : s.key === 'h2sPpm' ? 'h2s' : 'co'].verdict === 'fail');
  const summary = `${tests.length} reading${tests.length === 1 ? '' : 's'} from ${formatInZone(new Date(t0), timeZone, 'time')} to ${formatInZone(new Date(t1), timeZone, 'time')}; lowest ${Math.min(...values)} ${s.unit}, highest ${Math.max(...values)} ${s.unit}; limit ${s.lines.map((l) => l.label).join(' and ')} ${s.unit}; ${outside.length} outside the limit.`;
  const points = tests.map((t) => `${x(new Date(t.testedAt).getTime()).toFixed(1)},${y(t.readings[s.key]).toFixed(1)}`).join(' ');
  return (
    <figure className="min-w-0 rounded-card border border-line bg-surface p-2" data-testid={`chart-${s.key}`}>
      <figcaption className="px-1 text-sm font-semibold">
        {s.title} <span className="font-normal text-ink-soft">({s.unit})</span>
      </figcaption>
      <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full" role="img" aria-labelledby={`${id}-t ${id}-d`}>
        <title id={`${id}-t`}>{`${s.title} over time`}</title>
        <desc id={`${id}-d`}>{summary}</desc>
        <line x1={PAD.left} x2={PAD.left} y1={PAD.top} y2={H - PAD.bottom} stroke="var(--color-line)" />
        <line x1={PAD.left} x2={W - PAD.right} y1={H - PAD.bottom} y2={H - PAD.bottom} stroke="var(--color-line)" />
        {[lo, hi].map((v) => (
          <text key={v} x={PAD.left - 4} y={y(v) + 4} textAnchor="end" fontSize="10" fill="var(--color-ink-soft)">
            {v}
          </text>
        ))}
        {s.lines.map((l) => (
          <g key={l.label}>
            <line x1={PAD.left} x2={W - PAD.right} y1={y(l.value)} y2={y(l.value)} stroke="var(--color-danger)" strokeDasharray="5 3" strokeWidth="1.5" />
            <text x={W - PAD.right} y={y(l.value) - 3} textAnchor="end" fontSize="10" fill="var(--color-danger)">
              {l.label}
            </text>
          </g>
        ))}
        <polyline points={points} fill="none" stroke="var(--color-brand)" strokeWidth="1.5" />
        {tests.map((t) => {
          const cx = x(new Date(t.testedAt).getTime());
          const cy = y(t.readings[s.key]);
          const bad = outside.includes(t);
          // Shape as well as colour: a cross for a reading outside its limit.
          return bad ? (
            <path key={t.id} d={`M${cx - 4},${cy - 4}L${cx + 4},${cy + 4}M${cx - 4},${cy + 4}L${cx + 4},${cy - 4}`} stroke="var(--color-danger)" strokeWidth="2.5" />
          ) : (
            <circle key={t.id} cx={cx} cy={cy} r="3" fill="var(--color-safe)" />
          );
        })}
        <text x={PAD.left} y={H - 8} fontSize="10" fill="var(--color-ink-soft)">
          {formatInZone(new Date(t0), timeZone, 'time')}
        </text>
        <text x={W - PAD.right} y={H - 8} textAnchor="end" fontSize="10" fill="var(--color-ink-soft)">
          {formatInZone(new Date(t1), timeZone, 'time')}
        </text>
      </svg>
    </figure>
  );
}

/** Readings over time, one chart per gas, with the permit's limits drawn as dashed red lines. */
export function GasReadingsChart({ tests, limits, hotWork, timeZone }: { tests: GasTestRow[]; limits: AtmosphereLimits; hotWork: boolean; timeZone: string }) {
  if (!tests.length) return null;
  return (
    <div className="grid gap-3 sm:grid-cols-2" data-testid="gas-chart">
      {seriesFor(limits, hotWork).map((s) => (
        <MiniChart key={s.key} s={s} tests={tests} timeZone={timeZone} />
      ))}
      <p className="text-xs text-ink-soft sm:col-span-2">● within the limit · ✕ outside the limit · dashed red line: the limit. The table lists every reading.</p>
    </div>
  );
}
