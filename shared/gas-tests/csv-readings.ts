/**
 * Reads a multi-gas monitor's CSV log into gas readings: which column holds what, and every row
 * either valid (time and four readings, judged against the permit's limits) or invalid with its
 * reasons. Parsing the CSV itself is shared/csv's job (papaparse). Pure: the server runs it for the preview
 * and for the import, so both say the same.
 */
import type { CsvParseResult } from '../csv/csv';
import { CalcInputError, assessAtmosphere, type AssessOptions, type AtmosphereAssessment, type AtmosphereLimits, type AtmosphereReadings } from '../calc';
import { wallTimeToInstant } from '../time/zone';

export const readingColumns = ['timestamp', 'o2', 'lel', 'h2s', 'co'] as const;
export type ReadingColumn = (typeof readingColumns)[number];
export type ColumnMapping = Record<ReadingColumn, string>;

export const readingColumnLabels: Record<ReadingColumn, string> = {
  timestamp: 'Date and time',
  o2: 'Oxygen, O₂ (% vol)',
  lel: 'Flammable gas (% LEL)',
  h2s: 'H₂S (ppm)',
  co: 'CO (ppm)',
};

/** At most this many readings in one file: a day of one-minute logging, with room to spare. */
export const MAX_IMPORT_ROWS = 5000;

const tokens = (header: string) => header.toLowerCase().replace(/[^a-z0-9%]+/g, ' ').trim().split(' ').filter(Boolean);

const matchers: Record<ReadingColumn, (t: string[], raw: string) => boolean> = {
  timestamp: (t) => t.some((x) => ['time', 'timestamp', 'datetime', 'date', 'logged', 'when'].includes(x)),
  o2: (t) => t.includes('o2') || t.includes('oxygen'),
  lel: (t) => t.some((x) => ['lel', '%lel', 'lfl', 'flammable', 'combustible', 'ex', 'comb'].includes(x)),
  h2s: (t, raw) => t.includes('h2s') || /hydrogen\s+sul/i.test(raw),
  co: (t, raw) => t.includes('co') || /carbon\s+monoxide/i.test(raw),
};

/** A first guess at the mapping from the header names; the person confirms or changes it. */
export function guessMapping(headers: string[]): Partial<ColumnMapping> {
  const out: Partial<ColumnMapping> = {};
  const taken = new Set<string>();
  for (const col of readingColumns) {
    const hit = headers.find((h) => !taken.has(h) && matchers[col](tokens(h), h));
    if (hit !== undefined) {
      out[col] = hit;
      taken.add(hit);
    }
  }
  return out;
}

// 2026-12-02T07:15:00Z, 2026-12-02 07:15:00-06:00 (exact), or 2026-12-02 07:15[:00] / 2026/12/02 07:15 (site time).
const STAMP = /^(\d{4})[-/](\d{1,2})[-/](\d{1,2})[T ](\d{1,2}):(\d{2})(?::(\d{2})(?:\.\d+)?)?\s*(Z|[+-]\d{2}:?\d{2})?$/i;
// 02.12.2026 07:15[:00]: day first with dots, as monitors set to a European locale write it. Slashes
// stay refused: 02/12/2026 is 2 December or 12 February depending on the locale.
const DOTTED = /^(\d{1,2})\.(\d{1,2})\.(\d{4})[T ](\d{1,2}):(\d{2})(?::(\d{2})(?:[.,]\d+)?)?\s*(Z|[+-]\d{2}:?\d{2})?$/i;

/** A log time → the instant; times without a zone are read as wall time at the site. */
export function parseLogTime(text: string, timeZone: string): Date | null {
  const iso = STAMP.exec(text.trim());
  const dotted = iso ? null : DOTTED.exec(text.trim());
  if (!iso && !dotted) return null;
  const m = iso ?? [dotted![0], dotted![3], dotted![2], dotted![1], dotted![4], dotted![5], dotted![6], dotted![7]];
  const [year, month, day, hour, minute, second] = [m[1], m[2], m[3], m[4], m[5], m[6] ?? '0'].map(Number);
  const zone = m[7];
  if (!zone) return wallTimeToInstant({ year, month, day, hour, minute, second }, timeZone);
  const local = wallTimeToInstant({ year, month, day, hour, minute, second }, 'UTC');
  if (!local) return null;
  if (zone.toUpperCase() === 'Z') return local;
  const sign = zone.startsWith('-') ? -1 : 1;
  const digits = zone.slice(1).replace(':', '');
  const offset = sign * (Number(digits.slice(0, 2)) * 60 + Number(digits.slice(2)));
  return new Date(local.getTime() - offset * 60_000);
}

const DECIMAL = /^[+-]?(\d+(\.\d*)?|\.\d+)$/;
const DECIMAL_COMMA = /^[+-]?(\d+(,\d*)?|,\d+)$/;

/**
 * A file delimited by something other than commas whose readings use a decimal comma ("20,9") comes
 * from a European locale. There a dot may be a thousands separator ("1.000" ppm), so it is not read
 * as a decimal point: such a cell is reported rather than read as a thousand times too small.
 */
function usesDecimalComma(csv: CsvParseResult, index: Record<ReadingColumn, number>): boolean {
  if (csv.delimiter === ',') return false;
  return csv.records.slice(1).some((r) => (['o2', 'lel', 'h2s', 'co'] as const).some((c) => /\d,\d|^,\d/.test((r.cells[index[c]] ?? '').trim())));
}

export interface ReadingRow {
  row: number;
  testedAt: Date;
  readings: { o2Pct: number; lelPct: number; h2sPpm: number; coPpm: number };
  assessment: AtmosphereAssessment;
}

export interface InvalidRow {
  row: number;
  reasons: string[];
}

export interface ReadRowsOptions {
  timeZone: string;
  now: Date;
  limits: AtmosphereLimits;
  assess: AssessOptions;
  /** Judges a row instead of `assess` against `limits` (a log taken at a vent outlet has its own limit). */
  judge?: (readings: AtmosphereReadings) => AtmosphereAssessment;
  /** Reasons the instrument may not be used at that time (empty when it may). */
  instrumentReasons?: (at: Date) => string[];
}

const FIELD: Record<Exclude<ReadingColumn, 'timestamp'>, keyof ReadingRow['readings']> = { o2: 'o2Pct', lel: 'lelPct', h2s: 'h2sPpm', co: 'coPpm' };

/** The mapping must name five different columns that exist in the header. */
export function mappingProblems(headers: string[], mapping: Partial<ColumnMapping>): { path: string; message: string }[] {
  const problems: { path: string; message: string }[] = [];
  const used = new Map<string, ReadingColumn>();
  for (const col of readingColumns) {
    const name = mapping[col];
    if (!name) problems.push({ path: `mapping.${col}`, message: `Choose the column that holds ${readingColumnLabels[col]}.` });
    else if (!headers.includes(name)) problems.push({ path: `mapping.${col}`, message: `The file has no column called "${name}".` });
    else if (used.has(name)) problems.push({ path: `mapping.${col}`, message: `"${name}" is already chosen for ${readingColumnLabels[used.get(name)!]}.` });
    else used.set(name, col);
  }
  return problems;
}

/** Every data row (after the header), valid or with its reasons. Rows the CSV reader refused are invalid too. */
export function readRows(csv: CsvParseResult, mapping: ColumnMapping, opts: ReadRowsOptions): { headers: string[]; valid: ReadingRow[]; invalid: InvalidRow[] } {
  const [header, ...data] = csv.records;
  const headers = header?.cells.map((h) => h.trim()) ?? [];
  const index = Object.fromEntries(readingColumns.map((c) => [c, headers.indexOf(mapping[c])])) as Record<ReadingColumn, number>;
  const decimalComma = usesDecimalComma(csv, index);
  const valid: ReadingRow[] = [];
  const invalid: InvalidRow[] = csv.errors.map((e) => ({ row: e.row, reasons: [e.message] }));
  for (const record of data) {
    const reasons: string[] = [];
    const cell = (c: ReadingColumn) => (record.cells[index[c]] ?? '').trim();
    const stamp = cell('timestamp');
    const testedAt = stamp ? parseLogTime(stamp, opts.timeZone) : null;
    if (!stamp) reasons.push('The date and time is empty.');
    else if (!testedAt) reasons.push(`"${stamp}" is not a date and time Holdpoint can read; use 2026-12-02 07:15:00 (site time) or 2026-12-02T13:15:00Z.`);
    else if (testedAt.getTime() > opts.now.getTime() + 2 * 60_000) reasons.push(`${stamp} is in the future.`);
    const readings = {} as ReadingRow['readings'];
    for (const col of ['o2', 'lel', 'h2s', 'co'] as const) {
      const text = cell(col);
      if (!text) reasons.push(`${readingColumnLabels[col]} is empty.`);
      else if (!(decimalComma ? DECIMAL_COMMA : DECIMAL).test(text)) reasons.push(`${readingColumnLabels[col]} "${text}" is not a number.`);
      else readings[FIELD[col]] = Number(decimalComma ? text.replace(',', '.') : text);
    }
    if (testedAt && opts.instrumentReasons) reasons.push(...opts.instrumentReasons(testedAt));
    let assessment: AtmosphereAssessment | null = null;
    if (!reasons.length) {
      try {
        assessment = opts.judge ? opts.judge(readings) : assessAtmosphere(readings, opts.limits, opts.assess);
      } catch (err) {
        if (!(err instanceof CalcInputError)) throw err;
        reasons.push(err.message);
      }
    }
    if (reasons.length || !assessment || !testedAt) invalid.push({ row: record.row, reasons });
    else valid.push({ row: record.row, testedAt, readings, assessment });
  }
  invalid.sort((a, b) => a.row - b.row);
  return { headers, valid, invalid };
}
