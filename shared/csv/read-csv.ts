/**
 * Reads CSV text with papaparse. The delimiter is found from the first rows (comma, semicolon, tab or
 * vertical bar: monitors and spreadsheets set to a European locale write semicolons because the comma
 * is their decimal mark). Quoted values may hold delimiters, doubled quotes and line breaks; a UTF-8
 * byte-order mark and CRLF, LF or lone CR line ends are accepted. A blank line is skipped but still
 * counts: row numbers are those a spreadsheet shows, the header being row 1. A record the reader could
 * not make sense of is left out and reported on its row.
 */
import Papa from 'papaparse';
import type { CsvParseError, CsvParser } from './csv';

const DELIMITERS = [',', ';', '\t', '|'];
const delimiterNames: Record<string, string> = { ',': 'comma', ';': 'semicolon', '\t': 'tab', '|': 'vertical bar' };

function message(code: string, delimiter: string): string | null {
  if (code === 'MissingQuotes') return 'A quoted value is never closed; the file ends inside quotes.';
  if (code === 'InvalidQuotes') return `Text follows a closing quote; a quoted value must end at a ${delimiterNames[delimiter] ?? 'delimiter'} or the end of the line.`;
  return null;
}

export const parseCsv: CsvParser = (input) => {
  // One kind of line end, so a file saved with a mix of them still splits on every one.
  const text = (input.startsWith('\uFEFF') ? input.slice(1) : input).replace(/\r\n?/g, '\n');
  if (text.trim() === '') return { records: [], errors: [], delimiter: ',' };
  // Blank lines are left out of the guess: papaparse judges a delimiter by how evenly it splits the rows.
  const guessed = Papa.parse<string[]>(text, { preview: 20, skipEmptyLines: 'greedy', delimitersToGuess: DELIMITERS }).meta.delimiter;
  const delimiter = DELIMITERS.includes(guessed) ? guessed : ',';
  const parsed = Papa.parse<string[]>(text, { delimiter, newline: '\n', quoteChar: '"', skipEmptyLines: false });

  const errors: CsvParseError[] = [];
  const broken = new Set<number>();
  for (const e of parsed.errors) {
    const text = e.row === undefined ? null : message(e.code, delimiter);
    if (text === null || broken.has(e.row!)) continue;
    broken.add(e.row!);
    errors.push({ row: e.row! + 1, message: text });
  }
  const records = parsed.data
    .map((cells, i) => ({ row: i + 1, cells }))
    .filter((r) => !broken.has(r.row - 1) && !(r.cells.length === 1 && r.cells[0] === ''));
  return { records, errors, delimiter };
};
