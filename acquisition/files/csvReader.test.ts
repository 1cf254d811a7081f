import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import Papa from 'papaparse';
import { CsvText, csvNumber } from './csvReader';
import { parseRunCsv } from './runCsv';

/** Header and records as our reader gives them. */
function ours(text: string): string[][] {
  const opened = CsvText.open(text, 't.csv', 'the columns');
  if (!opened.ok) throw new Error(opened.error);
  const rows: string[][] = [opened.csv.header.names];
  const error = opened.csv.forEachRow((cells) => { rows.push([...cells]); return null; });
  if (error !== null) throw new Error(error);
  return rows;
}

/** papaparse 5.7.1, an independent RFC 4180 reader, on the same text (names lower-cased as ours are). */
function papa(text: string, delimiter: ',' | ';'): string[][] {
  const r = Papa.parse<string[]>(text, { delimiter, comments: '#', skipEmptyLines: 'greedy' });
  expect(r.errors).toEqual([]);
  return r.data.map((row, i) => (i === 0 ? row.map((c) => c.trim().toLowerCase()) : row.map((c) => c.trim())));
}

describe('the one CSV reader (RFC 4180)', () => {
  it('reads quoted fields holding the delimiter, doubled quotes and line breaks, with CRLF, as papaparse does', () => {
    const text = [
      '# exported by hand',
      'sample,time_s,absorbance,note',
      '"dye, batch 2",0,0.650,"said ""mixed"""',
      '"dye, batch 2",1.5,"0.640","two\r\nlines"',
      '',
      'plain,3,6.4e-1,',
    ].join('\r\n') + '\r\n';
    const rows = ours(text);
    expect(rows).toEqual(papa(text, ','));
    expect(rows[1]).toEqual(['dye, batch 2', '0', '0.650', 'said "mixed"']);
    expect(rows[2]![3]).toBe('two\r\nlines');
  });

  it('agrees with papaparse on any table written with RFC 4180 quoting (property)', () => {
    const field = fc.string({ unit: fc.constantFrom('a', '1', '.', ',', ';', '"', ' ', '\n', '\r\n', 'é', '#'), maxLength: 8 })
      .map((s) => s.trim()).filter((s) => s !== '' && !s.startsWith('#'));
    const quote = (s: string, d: string) => (/[",;\r\n#]/.test(s) || s !== s.trim() ? `"${s.replace(/"/g, '""')}"` : s);
    fc.assert(fc.property(fc.constantFrom(',', ';'), fc.integer({ min: 1, max: 4 }), fc.array(fc.array(field, { minLength: 4, maxLength: 4 }), { minLength: 1, maxLength: 6 }), (d, width, table) => {
      const header = Array.from({ length: width }, (_, j) => `col${j}${d === ';' ? ';x' : ''}`);
      const body = table.map((r) => r.slice(0, width));
      const text = [header, ...body].map((r) => r.map((c) => quote(c, d)).join(d)).join('\r\n') + '\r\n';
      const mine = ours(text);
      expect(mine).toEqual(papa(text, d));
      expect(mine.slice(1)).toEqual(body);
    }), { numRuns: 300 });
  });

  it('chooses the semicolon when the header has one outside quotes, and reads its decimal comma', () => {
    // the ; inside quotes does not count, so this header is comma-separated
    expect(ours('"a;b",time_s\n1,2\n')).toEqual([['a;b', 'time_s'], ['1', '2']]);
    expect(ours('time_s;absorbance\n0;0,650\n')[1]).toEqual(['0', '0,650']);
    expect(csvNumber('0,650', ';')).toEqual({ value: 0.65, decimalComma: true });
    expect(csvNumber('0,650', ',')).toBeNull();
    expect(csvNumber(' -1.5e-3 ', ',')).toEqual({ value: -0.0015, decimalComma: false });
  });

  it('refuses a comma-separated file whose numbers use a decimal comma, instead of reading every absorbance as 0', () => {
    const text = 'time_s,absorbance\n0,0,650\n1,0,648\n';
    expect(parseRunCsv(text, 'runs/dk.csv')).toEqual({
      ok: false,
      error: 'runs/dk.csv line 2: 0,0,650 has 3 fields where the header names 2 columns, as when numbers with a decimal comma are separated by commas; use a decimal point, or separate the columns with semicolons.',
    });
    // control: the field-by-field reading the check stops — papaparse reads the same text
    // as three fields a line, so a reader by column would take absorbance "0" on every line.
    const split = Papa.parse<string[]>(text, { skipEmptyLines: true }).data;
    expect(split.slice(1).map((row) => row[1])).toEqual(['0', '0']);
    // the same numbers with semicolons are read, and so are quoted ones
    expect(parseRunCsv('time_s;absorbance\n0;0,650\n1;0,648\n', 'ok.csv')).toMatchObject({ ok: true, run: { decimalComma: true } });
    expect(parseRunCsv('time_s,absorbance\n0,0.650,\n', 'trailing.csv').ok).toBe(true);
    expect(parseRunCsv('time_s,absorbance\n0,0.650,x\n', 'extra.csv')).toEqual({
      ok: false, error: 'extra.csv line 2: 3 fields, but the header names 2 columns; remove the extra fields or name their columns in the header.',
    });
  });

  it('names the file and line of a broken quote', () => {
    expect(CsvText.open('time_s,"absorbance\n', 'q.csv', 'the columns')).toEqual({ ok: false, error: 'q.csv line 1: a quoted field opened here is never closed; add the closing quote (").' });
    expect(parseRunCsv('time_s,absorbance\n0,"0.6"x\n', 'q.csv')).toEqual({ ok: false, error: 'q.csv line 2: text after the closing quote of field 2; put the whole field in quotes, with any quote inside doubled ("").' });
    expect(parseRunCsv('time_s,absorbance\n0,0.6"\n', 'q.csv')).toMatchObject({ ok: false, error: expect.stringMatching(/^q\.csv line 2: a quote inside unquoted field 2; /) });
    // a record that runs over lines keeps the line it started on
    expect(parseRunCsv('time_s,absorbance,note\n0,0.6,"a\nb"\n1,x,\n', 'q.csv')).toMatchObject({ ok: false, error: expect.stringMatching(/^q\.csv line 4: "x" in column absorbance/) });
  });
});
