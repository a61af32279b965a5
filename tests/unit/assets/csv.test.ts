import { describe, expect, it } from 'vitest';
import { guardFormula, toCsv, unguardFormula } from '@shared/csv/csv';
import { parseCsv } from '@shared/csv/read-csv';

// Expected readings follow RFC 4180 ("Common Format and MIME Type for CSV Files"), sections 2.1–2.7.
const cells = (text: string) => parseCsv(text).records.map((r) => r.cells);

describe('parseCsv', () => {
  it('when values are plain, then records split on commas and line ends', () => {
    expect(cells('a,b,c\n1,2,3\n')).toEqual([['a', 'b', 'c'], ['1', '2', '3']]);
  });

  it('when lines end in CRLF, LF or a lone CR, then each is one line end', () => {
    expect(cells('a,b\r\n1,2\r3,4\n5,6')).toEqual([['a', 'b'], ['1', '2'], ['3', '4'], ['5', '6']]);
  });

  it('when the file starts with a UTF-8 byte-order mark, then the first header is read without it', () => {
    expect(cells('\uFEFFrecord_type,pipeline_code\r\n')[0][0]).toBe('record_type');
  });

  it('when a quoted value holds commas, doubled quotes and a line break, then they are part of the value (the line break read as LF)', () => {
    const parsed = parseCsv('name,notes\r\n"Line, north","Says ""hi""\r\nthen stops"\r\nnext,row\r\n');
    expect(parsed.errors).toEqual([]);
    expect(parsed.records.map((r) => r.cells)).toEqual([['name', 'notes'], ['Line, north', 'Says "hi"\nthen stops'], ['next', 'row']]);
  });

  it('when a quoted value spans lines or a blank line sits between records, then row numbers still match a spreadsheet', () => {
    const parsed = parseCsv('h\n"a\nb"\n\nc\n');
    expect(parsed.records.map((r) => [r.row, r.cells[0]])).toEqual([[1, 'h'], [2, 'a\nb'], [4, 'c']]);
  });

  it('when a record ends in an empty value or values are empty, then those empties are kept', () => {
    expect(cells('a,,c,\n,,,\n')).toEqual([['a', '', 'c', ''], ['', '', '', '']]);
    expect(cells('""\n')).toEqual([]);
  });

  it('when a quote is never closed, then the row where it opened is reported', () => {
    const parsed = parseCsv('h\nok\n"never closed\nmore');
    expect(parsed.errors).toEqual([{ row: 3, message: expect.stringContaining('never closed') }]);
  });

  it('when text follows a closing quote, then that row is reported and left out', () => {
    const parsed = parseCsv('h,i\nok,1\n"a"b,c\n');
    expect(parsed.errors).toEqual([{ row: 3, message: 'Text follows a closing quote; a quoted value must end at a comma or the end of the line.' }]);
    expect(parsed.records.map((r) => r.row)).toEqual([1, 2]);
  });

  it('when a quote sits inside a bare value, then it is kept as written, as spreadsheet programs read it', () => {
    expect(cells('h,i\nx"y,z\n')).toEqual([['h', 'i'], ['x"y', 'z']]);
  });

  it('when the file is empty, then there are no records and no errors', () => {
    expect(parseCsv('')).toEqual({ records: [], errors: [], delimiter: ',' });
  });
});

describe('toCsv', () => {
  it('when values hold commas, quotes, line breaks or edge spaces, then they are quoted, and reading back gives them unchanged', () => {
    const rows = [['plain', 'a,b', 'say "hi"', 'two\nlines', ' padded', 14.9, true, null, undefined]];
    const text = toCsv(rows);
    expect(text).toBe('plain,"a,b","say ""hi""","two\nlines"," padded",14.9,true,,\r\n');
    expect(cells(text)).toEqual([['plain', 'a,b', 'say "hi"', 'two\nlines', ' padded', '14.9', 'true', '', '']]);
  });
});

describe('formula guard', () => {
  it('when text starts like a spreadsheet formula, then it gets an apostrophe on export and loses it on import', () => {
    for (const risky of ['=SUM(A1)', '+call', '-cmd', '@x']) {
      expect(guardFormula(risky)).toBe(`'${risky}`);
      expect(unguardFormula(guardFormula(risky))).toBe(risky);
    }
  });
  it('when the value is a number or ordinary text, then it is left as it is', () => {
    for (const safe of ['-12.5', '+3', 'Cedar Run', "'quoted already"]) {
      expect(guardFormula(safe)).toBe(safe);
      expect(unguardFormula(safe)).toBe(safe);
    }
  });
});
