/**
 * A small table of numbers as CSV text, for the files the calibrate and combine
 * commands read (standards, per-run summaries): a header row naming the columns, then
 * one row a line. The same conventions as a run CSV (acquisition/files/runCsv.ts): comma or
 * semicolon separated, a decimal comma accepted with semicolons, lines starting with #
 * are comments, a byte-order mark is ignored. The run reader is bound to time_s and
 * absorbance, so this one takes the wanted columns by name. Pure: text in, rows (with
 * their 1-based line numbers) or one sentence naming the file and line out.
 */

export interface NumericTable {
  /** Column names as written in the header, lower-cased and trimmed. */
  names: string[];
  /** 1-based line of the header. */
  headerLine: number;
  /** Values of the requested columns per data row (null for an empty optional cell). */
  rows: { line: number; values: (number | null)[] }[];
}

export type NumericTableParse = { ok: true; table: NumericTable } | { ok: false; error: string };

export interface ColumnRequest {
  name: string;
  /** An optional column may be absent or have empty cells (null). */
  optional?: boolean;
}

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

function unquote(cell: string): string {
  const c = cell.trim();
  return c.length >= 2 && c.startsWith('"') && c.endsWith('"') ? c.slice(1, -1).trim() : c;
}

/** The header row: its line and column names (lower-cased), or null when the file has none. */
export function readHeader(text: string): { line: number; names: string[]; delimiter: ',' | ';' } | null {
  const lines = text.split(/\r\n|\n|\r/);
  for (let i = 0; i < lines.length; i++) {
    const l = lines[i]!.replace(/^\uFEFF/, '').trim();
    if (l === '' || l.startsWith('#')) continue;
    const delimiter: ',' | ';' = l.includes(';') ? ';' : ',';
    return { line: i + 1, names: l.split(delimiter).map((c) => unquote(c).toLowerCase()), delimiter };
  }
  return null;
}

export function parseNumericTable(text: string, file: string, columns: readonly ColumnRequest[], hint: string): NumericTableParse {
  const header = readHeader(text);
  if (!header) return { ok: false, error: `${file}: the file has no header row; the first line should name the columns (${hint}).` };
  const { names, delimiter, line: headerLine } = header;
  const index: number[] = [];
  for (const c of columns) {
    const at = names.indexOf(c.name.toLowerCase());
    if (at < 0 && !c.optional) {
      return { ok: false, error: `${file} line ${headerLine}: no "${c.name}" column (the header has ${names.map((n) => `"${n}"`).join(', ')}); name the columns ${hint}.` };
    }
    index.push(at);
  }
  const lines = text.split(/\r\n|\n|\r/);
  const rows: NumericTable['rows'] = [];
  for (let i = headerLine; i < lines.length; i++) {
    const raw = lines[i]!;
    const trimmed = raw.trim();
    if (trimmed === '' || trimmed.startsWith('#')) continue;
    const line = i + 1;
    const cells = raw.split(delimiter);
    const values: (number | null)[] = [];
    for (let j = 0; j < columns.length; j++) {
      const col = columns[j]!;
      const at = index[j]!;
      if (at < 0) { values.push(null); continue; }
      if (at >= cells.length && !col.optional) {
        return { ok: false, error: `${file} line ${line}: ${cells.length} column(s), but the header needs ${at + 1}; fix or remove the line.` };
      }
      let cell = at < cells.length ? unquote(cells[at]!) : '';
      if (cell === '' && col.optional) { values.push(null); continue; }
      // With semicolons as separators a comma can only be the decimal sign.
      if (delimiter === ';' && cell.includes(',') && !cell.includes('.')) cell = cell.replace(',', '.');
      if (!NUMBER.test(cell)) {
        const shown = cell === '' ? 'an empty cell' : `"${cell.length > 20 ? cell.slice(0, 20) + '…' : cell}"`;
        return { ok: false, error: `${file} line ${line}: ${shown} in column ${col.name} is not a number; fix or remove the line.` };
      }
      values.push(Number(cell));
    }
    rows.push({ line, values });
  }
  return { ok: true, table: { names, headerLine, rows } };
}

/** Concentration columns a file may carry, and the factor to mol/L. */
export const CONCENTRATION_COLUMNS = [
  { name: 'concentration_m', unit: 'M', toMolar: 1 },
  { name: 'concentration_mm', unit: 'mM', toMolar: 1e-3 },
  { name: 'concentration_um', unit: 'µM', toMolar: 1e-6 },
] as const;
export type ConcentrationColumn = (typeof CONCENTRATION_COLUMNS)[number];

/** The one concentration column of a header, or an error sentence when there is none or more than one. */
export function concentrationColumn(names: readonly string[], file: string, headerLine: number): ConcentrationColumn | { error: string } {
  const found = CONCENTRATION_COLUMNS.filter((c) => names.includes(c.name));
  if (found.length === 1) return found[0]!;
  if (found.length === 0) {
    return { error: `${file} line ${headerLine}: no concentration column (the header has ${names.map((n) => `"${n}"`).join(', ')}); name one concentration_M, concentration_mM or concentration_uM.` };
  }
  return { error: `${file} line ${headerLine}: ${found.length} concentration columns (${found.map((c) => c.name).join(', ')}); keep one.` };
}
