import { describe, expect, it } from 'vitest';
import { toCsv } from '@shared/csv/csv';
import { permitStates } from '@shared/permit/states';
import { stepKinds } from '@shared/isolations/step-kinds';
import { suspendedByKinds } from '@shared/permit/suspension';
import { qualificationKinds } from '@shared/abilities/roles';
import { isolationAgeBands, reportStages, timelinessKinds, type ReportsOverview } from '@shared/types/reports';
import { csvFileName, durationWords, reportFigures } from '@client/features/reports/lib/report-figures';

const empty: ReportsOverview = {
  days: 90,
  since: '2026-09-04T17:55:00.000Z',
  timeZone: 'America/Chicago',
  stageTimes: reportStages.map((stage) => ({ stage, permits: 0, medianHours: null, p90Hours: null })),
  suspensionsByCause: suspendedByKinds.map((cause) => ({ cause, suspensions: 0 })),
  qualificationsExpiring: [],
  statesOverTime: [],
  timeliness: [],
  isolationsByAge: [],
  generatedAt: '2026-12-03T17:55:00.000Z',
};

/** Every state, kind, band and cause with a count, so each label is used once. */
const full: ReportsOverview = {
  ...empty,
  stageTimes: [
    { stage: 'request_to_approval', permits: 12, medianHours: 5.25, p90Hours: 30.04 },
    { stage: 'approval_to_live', permits: 9, medianHours: 20, p90Hours: 72.6 },
    { stage: 'live_to_return', permits: 1, medianHours: 0.04, p90Hours: 0.04 },
  ],
  suspensionsByCause: suspendedByKinds.map((cause, i) => ({ cause, suspensions: i + 1 })),
  qualificationsExpiring: qualificationKinds.map((kind, i) => ({ kind, within30: i, within60: 1, within90: 2 })),
  statesOverTime: [
    { day: '2026-11-26', counts: Object.fromEntries(permitStates.map((s, i) => [s, i + 1])) },
    { day: '2026-12-03', counts: { live: 3 } },
  ],
  timeliness: timelinessKinds.map((kind) => ({ kind, onTime: 5, late: 2, missed: 1 })),
  isolationsByAge: isolationAgeBands.map((band) => ({ band, byKind: Object.fromEntries(stepKinds.map((k) => [k, 1])), total: stepKinds.length })),
};

describe('issue 21 part 4: the report page figures', () => {
  it('when a stage took up to two days, then the screen shows hours, beyond that days, both with one decimal; no permit shows a dash', () => {
    expect(durationWords(5.25)).toBe('5.3 h');
    expect(durationWords(48)).toBe('48.0 h');
    expect(durationWords(72.6)).toBe('3.0 days');
    expect(durationWords(null)).toBe('—');
  });

  it('when the stage times go to a CSV file, then the head is in words and hours have one decimal, whatever the screen shows', () => {
    const stages = reportFigures(full).find((f) => f.key === 'stages')!;
    const csv = toCsv([stages.csvHead, ...stages.csvRows]).split('\r\n');
    expect(csv[0]).toBe('Stage,Permits,Median (hours),90th percentile (hours)');
    expect(csv[1]).toBe('Sent for approval to approved,12,5.3,30.0');
    expect(csv[2]).toBe('Approved to work started,9,20.0,72.6');
    expect(stages.rows[1].cells).toEqual(['Approved to work started', '9', '20.0 h', '3.0 days']);
    expect(csvFileName(stages, 90, '2026-12-03')).toBe('holdpoint-stage-times-90-days-2026-12-03.csv');
    // Counts carry a thousands separator on screen, never in the file.
    const big = reportFigures({ ...full, suspensionsByCause: [{ cause: 'system', suspensions: 12500 }] }).find((f) => f.key === 'suspensions')!;
    expect(big.rows[0].cells[1]).toBe('12,500');
    expect(toCsv([big.csvHead, ...big.csvRows])).toContain('\r\n"Holdpoint (a failed gas test or check, or time running out)",12500\r\n');
  });

  it('when nothing happened in the period, then each figure says so in words instead of drawing', () => {
    expect(Object.fromEntries(reportFigures(empty).map((f) => [f.key, f.empty]))).toEqual({
      states: 'No permit changed state in this period.',
      stages: 'No permit finished a stage in this period.',
      suspensions: 'No work was suspended in this period.',
      timeliness: 'No gas test or check fell due in this period.',
      isolations: 'No isolation is in place now.',
      qualifications: 'No qualification runs out in the next 90 days.',
    });
  });

  it('when every state, kind, band and cause has a count, then no table head or row shows a raw code', () => {
    const figures = reportFigures(full);
    expect(figures.every((f) => f.empty === null)).toBe(true);
    const words = figures.flatMap((f) => [...f.head, ...f.csvHead, ...f.rows.flatMap((r) => r.cells), ...f.csvRows.flat().map(String)]);
    const codes = [...permitStates, ...stepKinds, ...suspendedByKinds, ...qualificationKinds, ...isolationAgeBands, ...reportStages, ...timelinessKinds];
    expect(words.filter((w) => codes.includes(w as never))).toEqual([]);
    const states = figures.find((f) => f.key === 'states')!;
    expect(states.head).toEqual(['Week ending', 'Draft', 'Requested', 'Approved', 'Accepted', 'Isolated', 'Live work', 'Suspended', 'Work complete', 'Returned to service', 'Closed', 'Cancelled', 'Expired']);
    // A state a day did not hold counts 0 there; the screen names the day in words, the file keeps the date.
    expect(states.rows[1].cells.slice(0, 3)).toEqual(['3 Dec 2026', '0', '0']);
    expect(states.csvRows[1].slice(0, 2)).toEqual(['2026-12-03', 0]);
    expect(reportFigures({ ...full, days: 30 }).find((f) => f.key === 'states')!.head[0]).toBe('Day');
    expect(figures.find((f) => f.key === 'suspensions')!.rows.map((r) => r.cells[0])).toEqual([
      'The contractor lead',
      'An authoriser',
      'The control room',
      'Holdpoint (a failed gas test or check, or time running out)',
    ]);
  });
});
