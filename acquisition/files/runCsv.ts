/**
 * A run as CSV text: a header row naming `time_s` and `absorbance` (other columns are
 * ignored), then one reading a line. Comma or semicolon separated; with semicolons a
 * decimal comma is accepted (the usual spreadsheet export where the comma is the
 * decimal sign). Lines starting with # are comments. Pure: text in, readings or one
 * error sentence naming the file and line out.
 */

export interface CsvRun {
  time_s: Float64Array;
  absorbance: Float64Array;
  delimiter: ',' | ';';
  decimalComma: boolean;
}

export type CsvParse = { ok: true; run: CsvRun } | { ok: false; error: string };

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

function unquote(cell: string): string {
  const c = cell.trim();
  return c.length >= 2 && c.startsWith('"') && c.endsWith('"') ? c.slice(1, -1).trim() : c;
}

export function parseRunCsv(text: string, file: string): CsvParse {
  const lines = text.split(/\r\n|\n|\r/);
  let headerAt = -1;
  for (let i = 0; i < lines.length; i++) {
    const l = lines[i].replace(/^\uFEFF/, '').trim();
    if (l === '' || l.startsWith('#')) continue;
    headerAt = i;
    break;
  }
  if (headerAt < 0) return { ok: false, error: `${file}: the file has no header row; the first line should name the columns time_s and absorbance.` };
  const header = lines[headerAt].replace(/^\uFEFF/, '');
  const delimiter: ',' | ';' = header.includes(';') ? ';' : ',';
  const names = header.split(delimiter).map((c) => unquote(c).toLowerCase());
  const ti = names.indexOf('time_s');
  const ai = names.indexOf('absorbance');
  const headerLine = headerAt + 1;
  for (const [col, idx] of [['time_s', ti], ['absorbance', ai]] as const) {
    if (idx < 0) {
      return { ok: false, error: `${file} line ${headerLine}: no "${col}" column (the header has ${names.map((n) => `"${n}"`).join(', ')}); name the columns time_s and absorbance.` };
    }
  }
  const need = Math.max(ti, ai) + 1;
  let time = new Float64Array(1024), abs = new Float64Array(1024);
  let n = 0;
  let decimalComma = false;
  for (let i = headerAt + 1; i < lines.length; i++) {
    const raw = lines[i];
    const trimmed = raw.trim();
    if (trimmed === '' || trimmed.startsWith('#')) continue;
    const line = i + 1;
    const cells = raw.split(delimiter);
    if (cells.length < need) {
      return { ok: false, error: `${file} line ${line}: ${cells.length} column(s), but the header needs ${need}; fix or remove the line.` };
    }
    const values: number[] = [];
    for (const [col, idx] of [['time_s', ti], ['absorbance', ai]] as const) {
      let cell = unquote(cells[idx]);
      if (delimiter === ';' && cell.includes(',') && !cell.includes('.')) { cell = cell.replace(',', '.'); decimalComma = true; }
      if (!NUMBER.test(cell)) {
        const shown = cell === '' ? 'an empty cell' : `"${cell.length > 20 ? cell.slice(0, 20) + '…' : cell}"`;
        return { ok: false, error: `${file} line ${line}: ${shown} in column ${col} is not a number; fix or remove the line.` };
      }
      values.push(Number(cell));
    }
    const [t, a] = values;
    if (n > 0 && t < time[n - 1]) {
      return { ok: false, error: `${file} line ${line}: time goes backwards (${t} s after ${time[n - 1]} s); sort the file or remove the line.` };
    }
    if (n === time.length) {
      const t2 = new Float64Array(n * 2); t2.set(time); time = t2;
      const a2 = new Float64Array(n * 2); a2.set(abs); abs = a2;
    }
    time[n] = t; abs[n] = a; n++;
  }
  return { ok: true, run: { time_s: time.slice(0, n), absorbance: abs.slice(0, n), delimiter, decimalComma } };
}
