/**
 * The one CSV reader for the files users bring: run CSVs, CSVs of standards, summaries
 * of runs. Pure: text in, header and rows (with their 1-based line numbers) out, or one
 * sentence naming the file and line.
 *
 * The text is RFC 4180 CSV, read leniently where spreadsheets differ: a field in double
 * quotes may hold the delimiter, a line break or a doubled quote ("" for "); records end
 * in CRLF, LF or CR; spaces around a field are dropped; a byte-order mark is ignored;
 * lines starting with # and blank lines are skipped. The delimiter is a semicolon when the
 * header row has one outside quotes, else a comma. With semicolons a comma in a number
 * can only be the decimal sign (the usual export where the comma is the decimal sign),
 * so `csvNumber` reads 0,650 as 0.65.
 *
 * A comma-separated file whose numbers use a decimal comma splits each number in two
 * (0,650 becomes the fields 0 and 650); read by column it would give an absorbance of 0 on
 * every line. So a record with more fields than the header names is refused, with the
 * likely reason when its fields are all digits.
 */

export type CsvDelimiter = ',' | ';';

export interface CsvHeader {
  delimiter: CsvDelimiter;
  /** 1-based line of the header row. */
  line: number;
  /** Column names as written, trimmed and lower-cased. */
  names: string[];
}

/** Called for each data record; returns an error sentence to stop reading, or null. */
export type CsvRowVisitor = (cells: readonly string[], line: number) => string | null;

export type CsvOpen = { ok: true; csv: CsvText } | { ok: false; error: string };

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
const DIGITS = /^\d+$/;

/** A number cell; with semicolons as the delimiter a single comma (and no point) is the decimal sign. */
export function csvNumber(cell: string, delimiter: CsvDelimiter): { value: number; decimalComma: boolean } | null {
  let c = cell.trim();
  let decimalComma = false;
  if (delimiter === ';' && c.includes(',') && !c.includes('.')) { c = c.replace(',', '.'); decimalComma = true; }
  // 1e999 is written like a number but is none a computer holds (it would read as Infinity).
  return NUMBER.test(c) && Number.isFinite(Number(c)) ? { value: Number(c), decimalComma } : null;
}

/** The sentence for a cell that should be a number. */
export function notANumber(file: string, line: number, cell: string, column: string): string {
  const c = cell.trim();
  const shown = c === '' ? 'an empty cell' : `"${c.length > 20 ? c.slice(0, 20) + '…' : c}"`;
  const what = NUMBER.test(c.replace(',', '.')) ? 'is too large to be a number a computer holds' : 'is not a number';
  return `${file} line ${line}: ${shown} in column ${column} ${what}; fix or remove the line.`;
}

/** A header's names as a message shows them: quoted, each cut to 24 characters, at most eight. */
export function shownNames(names: readonly string[]): string {
  const cut = (n: string): string => `"${n.length > 24 ? n.slice(0, 24) + '…' : n}"`;
  const shown = names.slice(0, 8).map(cut).join(', ');
  return names.length > 8 ? `${shown} and ${names.length - 8} more` : shown;
}

export class CsvText {
  private constructor(
    private readonly lines: string[],
    /** The line break after each line (a quoted field keeps its own: CRLF, LF or CR). */
    private readonly breaks: string[],
    private readonly file: string,
    readonly header: CsvHeader,
  ) {}

  /**
   * Finds the header row. `names` completes "the first line should name …" when there is
   * none (e.g. "the columns time_s and absorbance").
   */
  static open(text: string, file: string, names: string): CsvOpen {
    const parts = text.replace(/^\uFEFF/, '').split(/(\r\n|\n|\r)/);
    const lines: string[] = [], breaks: string[] = [];
    for (let i = 0; i < parts.length; i += 2) { lines.push(parts[i]!); breaks.push(parts[i + 1] ?? ''); }
    for (let i = 0; i < lines.length; i++) {
      const l = lines[i]!.trim();
      if (l === '' || l.startsWith('#')) continue;
      const delimiter: CsvDelimiter = l.replace(/"[^"]*"/g, '').includes(';') ? ';' : ',';
      const reader = new CsvText(lines, breaks, file, { delimiter, line: i + 1, names: [] });
      const record = reader.record(i);
      if ('error' in record) return { ok: false, error: record.error };
      reader.header.names = record.cells.map((c) => c.toLowerCase());
      reader.next = record.next;
      return { ok: true, csv: reader };
    }
    return { ok: false, error: `${file}: the file has no header row; the first line should name ${names}.` };
  }

  /** Index of the line after the header record. */
  private next = 0;

  /** Visits every data record in order; returns the first error sentence (the reader's or the visitor's), or null. */
  forEachRow(visit: CsvRowVisitor): string | null {
    const { delimiter, names } = this.header;
    for (let i = this.next; i < this.lines.length;) {
      const raw = this.lines[i]!;
      const trimmed = raw.trim();
      if (trimmed === '' || trimmed.startsWith('#')) { i++; continue; }
      const line = i + 1;
      let cells: string[];
      if (!raw.includes('"')) {
        cells = raw.split(delimiter).map((c) => c.trim());
        i++;
      } else {
        const record = this.record(i);
        if ('error' in record) return record.error;
        cells = record.cells;
        i = record.next;
      }
      if (cells.length > names.length) {
        let last = cells.length;
        while (last > names.length && cells[last - 1] === '') last--; // a trailing delimiter adds empty fields, nothing more
        if (last > names.length) return this.tooManyFields(line, cells.slice(0, last));
        cells = cells.slice(0, last);
      }
      const problem = visit(cells, line);
      if (problem !== null) return problem;
    }
    return null;
  }

  private tooManyFields(line: number, cells: string[]): string {
    const n = this.header.names.length;
    if (this.header.delimiter === ',' && cells.every((c) => DIGITS.test(c) || /^[+-]\d+$/.test(c))) {
      const shown = cells.join(',');
      return `${this.file} line ${line}: ${shown.length > 40 ? shown.slice(0, 40) + '…' : shown} has ${cells.length} fields where the header names ${n} columns, ` +
        'as when numbers with a decimal comma are separated by commas; use a decimal point, or separate the columns with semicolons.';
    }
    return `${this.file} line ${line}: ${cells.length} fields, but the header names ${n} columns; remove the extra fields or name their columns in the header.`;
  }

  /** One record starting at line index `start`, which may run over several lines inside quotes. */
  private record(start: number): { cells: string[]; next: number } | { error: string } {
    const d = this.header.delimiter;
    const cells: string[] = [];
    let i = start;
    let text = this.lines[i]!;
    let p = 0;
    for (;;) {
      // One field from p.
      while (p < text.length && (text[p] === ' ' || text[p] === '\t')) p++;
      if (text[p] === '"') {
        let value = '';
        p++;
        for (;;) {
          const q = text.indexOf('"', p);
          if (q < 0) {
            value += text.slice(p) + this.breaks[i];
            if (++i >= this.lines.length) {
              return { error: `${this.file} line ${start + 1}: a quoted field opened here is never closed; add the closing quote (").` };
            }
            text = this.lines[i]!;
            p = 0;
            continue;
          }
          value += text.slice(p, q);
          if (text[q + 1] === '"') { value += '"'; p = q + 2; continue; }
          p = q + 1;
          break;
        }
        while (p < text.length && (text[p] === ' ' || text[p] === '\t')) p++;
        if (p < text.length && text[p] !== d) {
          return { error: `${this.file} line ${i + 1}: text after the closing quote of field ${cells.length + 1}; put the whole field in quotes, with any quote inside doubled ("").` };
        }
        cells.push(value);
      } else {
        const end = text.indexOf(d, p);
        const raw = end < 0 ? text.slice(p) : text.slice(p, end);
        if (raw.includes('"')) {
          return { error: `${this.file} line ${i + 1}: a quote inside unquoted field ${cells.length + 1}; put the whole field in quotes, with the quote doubled ("").` };
        }
        cells.push(raw.trim());
        p = end < 0 ? text.length : end;
      }
      if (p >= text.length) return { cells, next: i + 1 };
      p++; // the delimiter
    }
  }
}
