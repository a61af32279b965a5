import { format, parseISO } from 'date-fns';
import type { CsvValue } from '@shared/csv/csv';
import { qualificationLabels, type QualificationKind } from '@shared/abilities/roles';
import { stepKindLabels, stepKinds, type StepKind } from '@shared/isolations/step-kinds';
import { permitStateLabels, permitStates, type PermitState } from '@shared/permit/states';
import { suspendedByLabels } from '@shared/permit/suspension';
import {
  isolationAgeBandLabels,
  reportStageLabels,
  timelinessKindLabels,
  type ReportsOverview,
} from '@shared/types/reports';

export const figureKeys = ['states', 'stages', 'suspensions', 'timeliness', 'isolations', 'qualifications'] as const;
export type FigureKey = (typeof figureKeys)[number];

/** One figure as a table: what the screen shows, and the same rows for the CSV file (hours with one decimal). */
export interface Figure {
  key: FigureKey;
  title: string;
  /** The words of the file name: holdpoint-<slug>-<days>-days-<site day>.csv */
  slug: string;
  /** Said instead of a chart and table when there is nothing to draw. */
  empty: string | null;
  head: string[];
  rows: { key: string; cells: string[] }[];
  csvHead: string[];
  csvRows: CsvValue[][];
}

const capitalised = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);
/** A count as the screen shows it: 20,000 (the file keeps 20000). */
const countWords = (n: number) => n.toLocaleString('en-US');

/** "2026-12-03" → "3 Dec 2026". */
export const dayWords = (day: string) => format(parseISO(day), 'd MMM yyyy');
/** "2026-12-03" → "3 Dec", under a chart's bars. */
export const shortDayWords = (day: string) => format(parseISO(day), 'd MMM');

/** A duration as the screen shows it: hours up to two days, days beyond. */
export function durationWords(hours: number | null): string {
  if (hours === null) return '—';
  return hours > 48 ? `${(hours / 24).toFixed(1)} days` : `${hours.toFixed(1)} h`;
}

/** Hours with one decimal, as the CSV file holds them (empty when no permit finished the stage). */
export const csvHours = (hours: number | null) => (hours === null ? '' : hours.toFixed(1));

export const suspensionCauseWords = (cause: keyof typeof suspendedByLabels) => capitalised(suspendedByLabels[cause]);
export const qualificationWords = (kind: string) => qualificationLabels[kind as QualificationKind] ?? capitalised(kind.replace(/_/g, ' '));

/** The states that held a permit on some day of the period, in the permit's own order. */
export const statesShown = (o: ReportsOverview): PermitState[] => permitStates.filter((s) => o.statesOverTime.some((r) => (r.counts[s] ?? 0) > 0));
/** The kinds of step that have an isolation in place in some band. */
export const stepKindsShown = (o: ReportsOverview): StepKind[] => stepKinds.filter((k) => o.isolationsByAge.some((r) => (r.byKind[k] ?? 0) > 0));

/** Weekly buckets for 90 and 365 days, daily ones for 30 (shared/types/reports.ts). */
export const bucketHead = (o: ReportsOverview) => (o.days <= 30 ? 'Day' : 'Week ending');

/** Rows of a label and its counts: the screen's cells and the file's values. */
function countRows(rows: { key: string; label: string; counts: number[] }[]): Pick<Figure, 'rows' | 'csvRows'> {
  return {
    rows: rows.map((r) => ({ key: r.key, cells: [r.label, ...r.counts.map(countWords)] })),
    csvRows: rows.map((r) => [r.label, ...r.counts]),
  };
}

function statesFigure(o: ReportsOverview): Figure {
  const states = statesShown(o);
  const head = [bucketHead(o), ...states.map((s) => permitStateLabels[s])];
  const rows = o.statesOverTime.map((r) => [r.day, ...states.map((s) => r.counts[s] ?? 0)] as const);
  return {
    key: 'states',
    title: 'Permits by state over time',
    slug: 'permits-by-state',
    empty: states.length ? null : 'No permit changed state in this period.',
    head,
    rows: rows.map(([day, ...counts]) => ({ key: day, cells: [dayWords(day), ...counts.map(countWords)] })),
    csvHead: head,
    csvRows: rows.map(([day, ...counts]) => [day, ...counts]),
  };
}

function stagesFigure(o: ReportsOverview): Figure {
  return {
    key: 'stages',
    title: 'Time from request to return to service',
    slug: 'stage-times',
    empty: o.stageTimes.some((r) => r.permits > 0) ? null : 'No permit finished a stage in this period.',
    head: ['Stage', 'Permits', 'Median', '90th percentile'],
    rows: o.stageTimes.map((r) => ({ key: r.stage, cells: [reportStageLabels[r.stage], countWords(r.permits), durationWords(r.medianHours), durationWords(r.p90Hours)] })),
    csvHead: ['Stage', 'Permits', 'Median (hours)', '90th percentile (hours)'],
    csvRows: o.stageTimes.map((r) => [reportStageLabels[r.stage], r.permits, csvHours(r.medianHours), csvHours(r.p90Hours)]),
  };
}

function suspensionsFigure(o: ReportsOverview): Figure {
  return {
    key: 'suspensions',
    title: 'Suspensions by who stopped the work',
    slug: 'suspensions-by-cause',
    empty: o.suspensionsByCause.some((r) => r.suspensions > 0) ? null : 'No work was suspended in this period.',
    head: ['Stopped by', 'Suspensions'],
    csvHead: ['Stopped by', 'Suspensions'],
    ...countRows(o.suspensionsByCause.map((r) => ({ key: r.cause, label: suspensionCauseWords(r.cause), counts: [r.suspensions] }))),
  };
}

function timelinessFigure(o: ReportsOverview): Figure {
  const head = ['What was due', 'On time', 'Late', 'Missed'];
  return {
    key: 'timeliness',
    title: 'Gas tests and checks: on time or late',
    slug: 'checks-on-time',
    empty: o.timeliness.some((r) => r.onTime + r.late + r.missed > 0) ? null : 'No gas test or check fell due in this period.',
    head,
    csvHead: head,
    ...countRows(o.timeliness.map((r) => ({ key: r.kind, label: timelinessKindLabels[r.kind], counts: [r.onTime, r.late, r.missed] }))),
  };
}

function isolationsFigure(o: ReportsOverview): Figure {
  const kinds = stepKindsShown(o);
  const head = ['In place for', ...kinds.map((k) => stepKindLabels[k]), 'All'];
  return {
    key: 'isolations',
    title: 'Isolations in place by age',
    slug: 'isolations-by-age',
    empty: o.isolationsByAge.some((r) => r.total > 0) ? null : 'No isolation is in place now.',
    head,
    csvHead: head,
    ...countRows(o.isolationsByAge.map((r) => ({ key: r.band, label: isolationAgeBandLabels[r.band], counts: [...kinds.map((k) => r.byKind[k] ?? 0), r.total] }))),
  };
}

function qualificationsFigure(o: ReportsOverview): Figure {
  const head = ['Qualification', 'Within 30 days', 'In 31 to 60 days', 'In 61 to 90 days'];
  return {
    key: 'qualifications',
    title: 'Qualifications running out in the next 90 days',
    slug: 'qualifications-expiring',
    empty: o.qualificationsExpiring.some((r) => r.within30 + r.within60 + r.within90 > 0) ? null : 'No qualification runs out in the next 90 days.',
    head,
    csvHead: head,
    ...countRows(o.qualificationsExpiring.map((r) => ({ key: r.kind, label: qualificationWords(r.kind), counts: [r.within30, r.within60, r.within90] }))),
  };
}

/** Every figure of the overview, in the order the page shows them. */
export const reportFigures = (o: ReportsOverview): Figure[] => [statesFigure(o), stagesFigure(o), suspensionsFigure(o), timelinessFigure(o), isolationsFigure(o), qualificationsFigure(o)];

/** holdpoint-stage-times-90-days-2026-12-03.csv: the figure, the period and the site day it was made. */
export const csvFileName = (figure: Figure, days: number, siteDayMade: string) => `holdpoint-${figure.slug}-${days}-days-${siteDayMade}.csv`;
