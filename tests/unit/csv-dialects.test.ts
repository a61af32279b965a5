import { describe, expect, it } from 'vitest';
import { parseCsv } from '@shared/csv/read-csv';
import { DEFAULT_ATMOSPHERE_LIMITS } from '@shared/calc';
import { guessMapping, readRows } from '@shared/gas-tests/csv-readings';
import { assessOptionsFor } from '@shared/gas-tests/permit-limits';
import { planAssetImport } from '@shared/assets/import-plan';

// Expected readings follow RFC 4180 (quoting, doubled quotes, CRLF), the Unicode byte-order mark U+FEFF
// as Excel writes it before "CSV UTF-8", and the CLDR number symbols of European locales (de, fr, nl …):
// decimal mark ",", list separator ";", group separator "." or a space.
const now = new Date('2026-12-02T20:00:00Z');
const chicago = 'America/Chicago';
const opts = { timeZone: chicago, now, limits: DEFAULT_ATMOSPHERE_LIMITS, assess: assessOptionsFor(['cold_work']) };
const read = (text: string) => {
  const csv = parseCsv(text);
  const mapping = guessMapping(csv.records[0].cells) as Parameters<typeof readRows>[1];
  return { csv, mapping, ...readRows(csv, mapping, opts) };
};

describe('finding 4: monitor logs as monitors in other locales write them', () => {
  it('when a log is semicolon-delimited with decimal commas and day-first dates, then every reading imports with its value', () => {
    const r = read('Date/Time;O2 %vol;LEL %;H2S ppm;CO ppm\n02.12.2026 07:15:00;20,9;0;0;1,5\n02.12.2026 07:16:00;20,8;0,5;0;2\n');
    expect(r.csv.delimiter).toBe(';');
    expect(r.mapping).toEqual({ timestamp: 'Date/Time', o2: 'O2 %vol', lel: 'LEL %', h2s: 'H2S ppm', co: 'CO ppm' });
    expect(r.invalid).toEqual([]);
    expect(r.valid.map((v) => [v.row, v.testedAt.toISOString(), v.readings])).toEqual([
      [2, '2026-12-02T13:15:00.000Z', { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1.5 }],
      [3, '2026-12-02T13:16:00.000Z', { o2Pct: 20.8, lelPct: 0.5, h2sPpm: 0, coPpm: 2 }],
    ]);
  });

  it('when a decimal-comma log writes "1.000", then the row is reported, not read as a thousand times too small', () => {
    const r = read('Time;O2;LEL;H2S;CO\n2026-12-02 07:15;20,9;0;0;1.000\n');
    expect(r.invalid).toEqual([{ row: 2, reasons: ['CO (ppm) "1.000" is not a number.'] }]);
  });

  it('when a semicolon log writes decimal points, then they are read as points', () => {
    expect(read('Time;O2;LEL;H2S;CO\n2026-12-02 07:15;20.9;0;0;1\n').valid[0].readings.o2Pct).toBe(20.9);
  });

  it('when a log starts with a byte-order mark and ends its lines with CRLF, then the first column is found and no value keeps a CR', () => {
    const r = read('\uFEFFTime,O2,LEL,H2S,CO\r\n2026-12-02 07:15,20.9,0,0,1\r\n2026-12-02 07:16,20.9,0,0,1\r\n');
    expect(r.csv.records[0].cells[0]).toBe('Time');
    expect(r.mapping.timestamp).toBe('Time');
    expect(r.valid.map((v) => v.row)).toEqual([2, 3]);
    expect(r.csv.records.flatMap((x) => x.cells).some((c) => c.includes('\r'))).toBe(false);
  });

  it('when header names and values are quoted and hold the delimiter, then each stays one value', () => {
    const comma = read('"Time, site","O2, %vol",LEL,H2S,CO\r\n2026-12-02 07:15,20.9,0,0,"1"\r\n');
    expect(comma.mapping).toMatchObject({ timestamp: 'Time, site', o2: 'O2, %vol' });
    expect(comma.valid).toHaveLength(1);
    const semi = parseCsv('Time;Note\n2026-12-02 07:15;"vent; north side"\n');
    expect(semi.records[1].cells).toEqual(['2026-12-02 07:15', 'vent; north side']);
  });

  it('when a row is broken or a reading is wrong, then the report lists row and reason as before', () => {
    const r = read('Time;O2;LEL;H2S;CO\n2026-12-02 07:15;20,9;;0;1\n2026-12-02 07:16;20,9;abc;0;1\n"2026-12-02 07:17"x;20,9;0;0;1\n');
    expect(r.invalid).toEqual([
      { row: 2, reasons: ['Flammable gas (% LEL) is empty.'] },
      { row: 3, reasons: ['Flammable gas (% LEL) "abc" is not a number.'] },
      { row: 4, reasons: ['Text follows a closing quote; a quoted value must end at a semicolon or the end of the line.'] },
    ]);
  });
});

describe('finding 4: the asset register file in other dialects', () => {
  const header = ['record_type', 'pipeline_code', 'name', 'product', 'nps', 'schedule', 'wall_thickness_in', 'inside_diameter_in', 'mop_psig', 'start_position', 'end_position', 'notes'];
  const empty = { pipelines: [], sites: [], points: [] };

  it('when the register is semicolon-delimited with a byte-order mark, CRLF and quoted values holding semicolons, then it plans without issues', () => {
    const text = '\uFEFF' + [header.join(';'), 'pipeline;IM-4;"Import Line Four; south";ngl;6;STD;;;1440;0;22.5;"Says ""hi""; then stops"', ''].join('\r\n');
    const { issues, plan } = planAssetImport(parseCsv(text), empty);
    expect(issues).toEqual([]);
    expect(plan.pipelines[0].input).toMatchObject({ code: 'IM-4', name: 'Import Line Four; south', notes: 'Says "hi"; then stops', endPosition: 22.5 });
  });
});
