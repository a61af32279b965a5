import { describe, expect, it } from 'vitest';
import { parseCsv } from '@shared/csv/read-csv';
import { DEFAULT_ATMOSPHERE_LIMITS } from '@shared/calc';
import { guessMapping, mappingProblems, parseLogTime, readRows } from '@shared/gas-tests/csv-readings';
import { instrumentStatus } from '@shared/gas-tests/instrument-status';
import { assessOptionsFor } from '@shared/gas-tests/permit-limits';

const now = new Date('2026-12-02T20:00:00Z');
const chicago = 'America/Chicago';

describe('parseLogTime', () => {
  it('when a log time has no zone, then it is read as site time (Chicago in December is UTC−6)', () => {
    expect(parseLogTime('2026-12-02 07:15:00', chicago)?.toISOString()).toBe('2026-12-02T13:15:00.000Z');
    expect(parseLogTime('2026/12/02 07:15', chicago)?.toISOString()).toBe('2026-12-02T13:15:00.000Z');
  });
  it('when a log time carries Z or an offset, then that wins', () => {
    expect(parseLogTime('2026-12-02T07:15:00Z', chicago)?.toISOString()).toBe('2026-12-02T07:15:00.000Z');
    expect(parseLogTime('2026-12-02 07:15:00-05:00', chicago)?.toISOString()).toBe('2026-12-02T12:15:00.000Z');
  });
  it('when a time is not a date Holdpoint can read, then null', () => {
    for (const t of ['02/12/2026 07:15', '2026-02-31 07:15', 'yesterday', '2026-12-02']) expect(parseLogTime(t, chicago)).toBeNull();
  });
});

describe('reading a monitor log', () => {
  const csv = parseCsv('Date/Time,O2 %vol,LEL %,H2S ppm,CO ppm,CO2 %\n2026-12-02 07:15,20.9,0,0,1,0.04\n2026-12-02 07:16,20.9,,0,1,0.04\n2026-12-02 07:17,20.8,3,0,1,0.04\n');
  const mapping = { timestamp: 'Date/Time', o2: 'O2 %vol', lel: 'LEL %', h2s: 'H2S ppm', co: 'CO ppm' };

  it('when the header names the gases, then the mapping is guessed (and CO2 is not taken for CO)', () => {
    expect(guessMapping(csv.records[0].cells)).toEqual(mapping);
    expect(mappingProblems(csv.records[0].cells, { ...mapping, co: 'O2 %vol' })[0].message).toContain('already chosen');
  });

  it('when a row has an empty reading, then it is invalid with the reason; a hot-work reading of 3 %LEL fails against 0 %LEL (operator practice)', () => {
    const r = readRows(csv, mapping, { timeZone: chicago, now, limits: DEFAULT_ATMOSPHERE_LIMITS, assess: assessOptionsFor(['hot_work']) });
    expect(r.invalid).toEqual([{ row: 3, reasons: ['Flammable gas (% LEL) is empty.'] }]);
    expect(r.valid.map((v) => [v.row, v.assessment.verdict])).toEqual([[2, 'pass'], [4, 'fail']]);
  });

  it('when the instrument may not be used at a row’s time, then that row carries the reason', () => {
    const r = readRows(csv, mapping, { timeZone: chicago, now, limits: DEFAULT_ATMOSPHERE_LIMITS, assess: assessOptionsFor(['cold_work']), instrumentReasons: () => ['not bump-tested'] });
    expect(r.valid).toHaveLength(0);
    expect(r.invalid.map((i) => i.row)).toEqual([2, 3, 4]);
  });
});

describe('instrumentStatus (calibration due date and the daily bump test, common practice)', () => {
  const base = { model: 'Test monitor', serial: 'T-1', lastCalibratedOn: '2026-06-01', calibrationDueOn: '2026-12-02', lastBumpTestAt: '2026-12-02T13:00:00Z' };
  it('when used on its calibration due date after the day’s bump test, then it is usable', () => {
    expect(instrumentStatus(base, new Date('2026-12-02T14:00:00Z'), chicago, true)).toMatchObject({ usable: true, calibration: 'due_soon', bump: 'today' });
  });
  it('when the calibration due date has passed at the site, then it is not usable', () => {
    const s = instrumentStatus(base, new Date('2026-12-03T14:00:00Z'), chicago, false);
    expect(s.usable).toBe(false);
    expect(s.reasons[0]).toContain('was due for calibration on 2026-12-02');
  });
  it('when the bump test was the evening before at the site, then a morning test is refused only under the daily rule', () => {
    const inst = { ...base, calibrationDueOn: '2027-06-01', lastBumpTestAt: '2026-12-02T03:00:00Z' }; // 21:00 on 1 Dec in Chicago
    expect(instrumentStatus(inst, new Date('2026-12-02T14:00:00Z'), chicago, true).bump).toBe('not_today');
    expect(instrumentStatus(inst, new Date('2026-12-02T14:00:00Z'), chicago, true).usable).toBe(false);
    expect(instrumentStatus(inst, new Date('2026-12-02T14:00:00Z'), chicago, false).usable).toBe(true);
  });
  it('when the bump test came after the test on the same day, then it does not count', () => {
    expect(instrumentStatus(base, new Date('2026-12-02T12:30:00Z'), chicago, true).bump).toBe('after_test');
  });
});
