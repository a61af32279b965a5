/**
 * A small RFC 4180 CSV reader and writer. No CSV package is installed; callers depend on the
 * `CsvParser` type, not on this implementation, so a library parser can be dropped in behind it.
 *
 * Reading accepts: a UTF-8 byte-order mark, CRLF / LF / CR line ends, quoted fields holding commas,
 * quotes ("" inside quotes) and line breaks. A record that is entirely empty (a blank line) is skipped.
 * Row numbers count records as a spreadsheet shows them: the header is row 1.
 */

export interface CsvParseError {
  row: number;
  message: string;
}

export interface CsvParseResult {
  /** Each record with its spreadsheet row number (header = 1). */
  records: { row: number; cells: string[] }[];
  errors: CsvParseError[];
}

export type CsvParser = (text: string) => CsvParseResult;

const BOM = '\uFEFF';

export const parseCsv: CsvParser = (input) => {
  const text = input.startsWith(BOM) ? input.slice(1) : input;
  const records: CsvParseResult['records'] = [];
  const errors: CsvParseError[] = [];
  let cells: string[] = [];
  let cell = '';
  let row = 1;
  let quoted = false;
  // After a closing quote only a delimiter or line end may follow.
  let afterQuote = false;
  let recordBroken = false;
  let i = 0;

  const endCell = () => {
    cells.push(cell);
    cell = '';
    afterQuote = false;
  };
  const endRecord = () => {
    endCell();
    const blank = cells.length === 1 && cells[0] === '';
    if (!blank && !recordBroken) records.push({ row, cells });
    // A blank line is still a row in a spreadsheet, so it still counts.
    row += 1;
    cells = [];
    recordBroken = false;
  };

  while (i < text.length) {
    const ch = text[i];
    if (quoted) {
      if (ch === '"') {
        if (text[i + 1] === '"') {
          cell += '"';
          i += 2;
          continue;
        }
        quoted = false;
        afterQuote = true;
        i += 1;
        continue;
      }
      cell += ch;
      i += 1;
      continue;
    }
    if (ch === ',') {
      endCell();
      i += 1;
      continue;
    }
    if (ch === '\r' || ch === '\n') {
      endRecord();
      i += ch === '\r' && text[i + 1] === '\n' ? 2 : 1;
      continue;
    }
    if (afterQuote) {
      if (!recordBroken) errors.push({ row, message: 'Text follows a closing quote; a quoted value must end at a comma or the end of the line.' });
      recordBroken = true;
      cell += ch;
      i += 1;
      continue;
    }
    if (ch === '"' && cell === '') {
      quoted = true;
      i += 1;
      continue;
    }
    if (ch === '"') {
      if (!recordBroken) errors.push({ row, message: 'A quote appears inside an unquoted value; wrap the whole value in quotes and double the inner quote ("").' });
      recordBroken = true;
    }
    cell += ch;
    i += 1;
  }
  if (quoted) {
    errors.push({ row, message: 'A quoted value is never closed; the file ends inside quotes.' });
    return { records, errors };
  }
  if (cell !== '' || cells.length > 0) endRecord();
  return { records, errors };
};

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
