/**
 * CSV writing and the shapes a CSV reader answers with. Reading is papaparse's job, in
 * `read-csv.ts`, kept apart so that pages which only write or guard cells do not load the parser.
 */

export interface CsvParseError {
  row: number;
  message: string;
}

export interface CsvParseResult {
  /** Each record with its spreadsheet row number (header = 1). */
  records: { row: number; cells: string[] }[];
  errors: CsvParseError[];
  /** The delimiter the file uses: ',' unless it was found to be ';', tab or '|'. */
  delimiter: string;
}

export type CsvParser = (text: string) => CsvParseResult;

export type CsvValue = string | number | boolean | null | undefined;

function quoteCell(value: CsvValue): string {
  if (value === null || value === undefined) return '';
  const s = String(value);
  return /[",\r\n]/.test(s) || /^\s|\s$/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** Writes records with CRLF line ends (RFC 4180), quoting only where needed. */
export function toCsv(rows: CsvValue[][]): string {
  return rows.map((r) => r.map(quoteCell).join(',')).join('\r\n') + '\r\n';
}

const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)$/;
const FORMULA_START = /^[=+\-@\t\r]/;

/**
 * Spreadsheet programs run a cell that starts with = + - @ as a formula. Text cells (never plain
 * numbers) that start so get a leading apostrophe on export; `unguardFormula` removes it on import
 * so an exported file imports back unchanged.
 */
export function guardFormula(value: string): string {
  return FORMULA_START.test(value) && !NUMBER.test(value) ? `'${value}` : value;
}

export function unguardFormula(value: string): string {
  return value.startsWith("'") && FORMULA_START.test(value.slice(1)) && !NUMBER.test(value.slice(1)) ? value.slice(1) : value;
}

export const isPlainNumber = (value: string) => NUMBER.test(value);
