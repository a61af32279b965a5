import { useId } from 'react';
import { Area, AreaChart, Bar, BarChart, CartesianGrid, LabelList, XAxis, YAxis } from 'recharts';
import { stepKindLabels, type StepKind } from '@shared/isolations/step-kinds';
import { permitStateLabels, type PermitState } from '@shared/permit/states';
import { isolationAgeBandLabels, reportStageLabels, timelinessKindLabels, type ReportsOverview } from '@shared/types/reports';
import { qualificationWords, shortDayWords, statesShown, stepKindsShown, suspensionCauseWords, type FigureKey } from '../lib/report-figures';

/**
 * The charts of the report page, in a chunk of their own so the charting library loads only here. Each
 * series has a colour of the theme and a pattern of its own, so they stay apart without colour; the
 * table beside each chart holds the same numbers for a screen reader.
 */

type Tone = 'brand' | 'info' | 'safe' | 'caution' | 'danger' | 'signal' | 'ink-soft' | 'line';
type Pattern = 'solid' | 'stripes' | 'dots' | 'cross' | 'bars';
interface Series {
  key: string;
  name: string;
  tone: Tone;
  pattern: Pattern;
}

const toneFill: Record<Tone, string> = {
  brand: 'fill-brand',
  info: 'fill-info',
  safe: 'fill-safe',
  caution: 'fill-caution',
  danger: 'fill-danger',
  signal: 'fill-signal',
  'ink-soft': 'fill-ink-soft',
  line: 'fill-line',
};
// Marks drawn over a light colour are dark, over a dark colour light.
const lightTones: Tone[] = ['caution', 'signal', 'line'];

function PatternDefs({ prefix, series }: { prefix: string; series: Series[] }) {
  return (
    <defs>
      {series.map((s) => {
        const mark = lightTones.includes(s.tone) ? 'stroke-ink fill-ink' : 'stroke-white fill-white';
        return (
          <pattern key={s.key} id={`${prefix}-${s.key}`} width="8" height="8" patternUnits="userSpaceOnUse">
            <rect width="8" height="8" className={toneFill[s.tone]} />
            {s.pattern === 'stripes' ? <path d="M-2,2 l4,-4 M0,8 l8,-8 M6,10 l4,-4" className={mark} strokeWidth="1.6" /> : null}
            {s.pattern === 'cross' ? <path d="M0,0 l8,8 M8,0 l-8,8" className={mark} strokeWidth="1.4" /> : null}
            {s.pattern === 'bars' ? <path d="M0,2 h8 M0,6 h8" className={mark} strokeWidth="1.4" /> : null}
            {s.pattern === 'dots' ? <circle cx="4" cy="4" r="1.6" className={mark} stroke="none" /> : null}
          </pattern>
        );
      })}
    </defs>
  );
}

/** The legend under a chart, drawn with the series' own patterns so it matches the chart without colour. */
function SeriesLegend({ prefix, series }: { prefix: string; series: Series[] }) {
  return (
    <ul className="flex flex-wrap justify-center gap-x-4 gap-y-1 pt-2 text-sm">
      {series.map((s) => (
        <li key={s.key} className="flex items-center gap-1.5">
          <svg width="16" height="16" aria-hidden>
            <rect width="16" height="16" fill={`url(#${prefix}-${s.key})`} className="stroke-ink" strokeWidth="1" />
          </svg>
          {s.name}
        </li>
      ))}
    </ul>
  );
}

const stateSeries: Record<PermitState, Omit<Series, 'key' | 'name'>> = {
  draft: { tone: 'line', pattern: 'dots' },
  requested: { tone: 'info', pattern: 'solid' },
  approved: { tone: 'info', pattern: 'stripes' },
  accepted: { tone: 'info', pattern: 'dots' },
  isolated: { tone: 'caution', pattern: 'solid' },
  live: { tone: 'caution', pattern: 'stripes' },
  suspended: { tone: 'danger', pattern: 'solid' },
  work_complete: { tone: 'caution', pattern: 'dots' },
  returned_to_service: { tone: 'safe', pattern: 'solid' },
  closed: { tone: 'ink-soft', pattern: 'solid' },
  cancelled: { tone: 'ink-soft', pattern: 'stripes' },
  expired: { tone: 'danger', pattern: 'cross' },
};
const stepSeries: Record<StepKind, Omit<Series, 'key' | 'name'>> = {
  block_valve: { tone: 'brand', pattern: 'solid' },
  vent: { tone: 'info', pattern: 'stripes' },
  drain: { tone: 'info', pattern: 'dots' },
  plug: { tone: 'signal', pattern: 'solid' },
  blind: { tone: 'ink-soft', pattern: 'solid' },
  isolator: { tone: 'brand', pattern: 'stripes' },
  line_stop: { tone: 'ink-soft', pattern: 'cross' },
};

const tick = { fill: 'var(--color-ink)', fontSize: 13 };
const axisWidth = 132;

/** Horizontal bars, one row per category: long category names wrap beside the bars on a phone. */
function RowBars({ data, series, prefix, stacked = false, valueLabels = false, unit = '' }: { data: Record<string, string | number | null>[]; series: Series[]; prefix: string; stacked?: boolean; valueLabels?: boolean; unit?: string }) {
  const rowHeight = stacked ? 52 : 30 + series.length * 26;
  return (
    <>
      <BarChart layout="vertical" data={data} responsive style={{ width: '100%', height: data.length * rowHeight + 40 }} margin={{ top: 4, right: 40, bottom: 4, left: 4 }} accessibilityLayer={false}>
        <PatternDefs prefix={prefix} series={series} />
        <CartesianGrid horizontal={false} stroke="var(--color-line)" />
        <XAxis type="number" allowDecimals={false} tick={tick} unit={unit} />
        <YAxis type="category" dataKey="label" width={axisWidth} tick={tick} interval={0} />
        {series.map((s) => (
          <Bar key={s.key} dataKey={s.key} name={s.name} stackId={stacked ? 'all' : undefined} fill={`url(#${prefix}-${s.key})`} stroke="var(--color-ink)" strokeWidth={0.5} isAnimationActive={false}>
            {valueLabels ? <LabelList dataKey={s.key} position="right" fill="var(--color-ink)" fontSize={13} formatter={(v: unknown) => (typeof v === 'number' ? `${unit ? v.toFixed(1) : v}${unit}` : '')} /> : null}
          </Bar>
        ))}
      </BarChart>
      <SeriesLegend prefix={prefix} series={series} />
    </>
  );
}

/** The hours of a stage chart: hours, or days for the whole chart when some bar passes two days. */
function stageData(o: ReportsOverview) {
  const inDays = o.stageTimes.some((r) => (r.p90Hours ?? 0) > 48 || (r.medianHours ?? 0) > 48);
  const scale = (h: number | null) => (h === null ? null : Math.round((inDays ? h / 24 : h) * 10) / 10);
  return {
    unit: inDays ? ' d' : ' h',
    data: o.stageTimes.map((r) => ({ label: `${reportStageLabels[r.stage]} (${r.permits.toLocaleString('en-US')} permit${r.permits === 1 ? '' : 's'})`, median: scale(r.medianHours), p90: scale(r.p90Hours) })),
  };
}

export default function ReportChart({ figure, overview: o }: { figure: FigureKey; overview: ReportsOverview }) {
  const prefix = `chart${useId().replace(/[^a-zA-Z0-9]/g, '')}`;
  switch (figure) {
    case 'states': {
      // Stacked areas: one shape per state, however many days or weeks the period has.
      const series = statesShown(o).map((s) => ({ key: s, name: permitStateLabels[s], ...stateSeries[s] }));
      // A state a day did not hold counts 0 there, so its area closes instead of leaving a gap.
      const data = o.statesOverTime.map((r) => ({ label: shortDayWords(r.day), ...Object.fromEntries(series.map((x) => [x.key, r.counts[x.key] ?? 0])) }));
      return (
        <>
          <AreaChart data={data} responsive style={{ width: '100%', height: 280 }} margin={{ top: 8, right: 8, bottom: 4, left: 0 }} accessibilityLayer={false}>
            <PatternDefs prefix={prefix} series={series} />
            <CartesianGrid vertical={false} stroke="var(--color-line)" />
            <XAxis dataKey="label" tick={tick} minTickGap={12} />
            <YAxis allowDecimals={false} tick={tick} width={36} />
            {series.map((s) => (
              <Area
                key={s.key}
                dataKey={s.key}
                name={s.name}
                stackId="all"
                type="linear"
                fill={`url(#${prefix}-${s.key})`}
                fillOpacity={1}
                stroke="var(--color-ink)"
                strokeWidth={0.75}
                isAnimationActive={false}
              />
            ))}
          </AreaChart>
          <SeriesLegend prefix={prefix} series={series} />
        </>
      );
    }
    case 'stages': {
      const { unit, data } = stageData(o);
      const series: Series[] = [
        { key: 'median', name: 'Median', tone: 'brand', pattern: 'solid' },
        { key: 'p90', name: '90th percentile', tone: 'info', pattern: 'stripes' },
      ];
      return <RowBars data={data} series={series} prefix={prefix} valueLabels unit={unit} />;
    }
    case 'suspensions': {
      const data = o.suspensionsByCause.map((r) => ({ label: suspensionCauseWords(r.cause), suspensions: r.suspensions }));
      return <RowBars data={data} series={[{ key: 'suspensions', name: 'Suspensions', tone: 'danger', pattern: 'solid' }]} prefix={prefix} valueLabels />;
    }
    case 'timeliness': {
      const data = o.timeliness.map((r) => ({ label: timelinessKindLabels[r.kind], onTime: r.onTime, late: r.late, missed: r.missed }));
      const series: Series[] = [
        { key: 'onTime', name: 'On time', tone: 'safe', pattern: 'solid' },
        { key: 'late', name: 'Late', tone: 'caution', pattern: 'stripes' },
        { key: 'missed', name: 'Missed', tone: 'danger', pattern: 'cross' },
      ];
      return <RowBars data={data} series={series} prefix={prefix} stacked />;
    }
    case 'isolations': {
      const series = stepKindsShown(o).map((k) => ({ key: k, name: stepKindLabels[k], ...stepSeries[k] }));
      const data = o.isolationsByAge.map((r) => ({ label: isolationAgeBandLabels[r.band], ...Object.fromEntries(series.map((x) => [x.key, r.byKind[x.key] ?? 0])) }));
      return <RowBars data={data} series={series} prefix={prefix} stacked />;
    }
    case 'qualifications': {
      const data = o.qualificationsExpiring.map((r) => ({ label: qualificationWords(r.kind), within30: r.within30, within60: r.within60, within90: r.within90 }));
      const series: Series[] = [
        { key: 'within30', name: 'Within 30 days', tone: 'danger', pattern: 'solid' },
        { key: 'within60', name: 'In 31 to 60 days', tone: 'caution', pattern: 'stripes' },
        { key: 'within90', name: 'In 61 to 90 days', tone: 'info', pattern: 'dots' },
      ];
      return <RowBars data={data} series={series} prefix={prefix} stacked />;
    }
  }
}
