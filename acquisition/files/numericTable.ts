/**
 * A small table of numbers as CSV text, for the files the calibrate and combine
 * commands read (standards, per-run summaries): a header row naming the columns, then
 * one row a line, read by the one CSV reader (csvReader.ts, the same conventions as a
 * run CSV). The run reader is bound to time_s and absorbance, so this one takes the
 * wanted columns by name. Pure: text in, rows (with their 1-based line numbers) or one
 * sentence naming the file and line out.
 */
import { CsvText, csvNumber, notANumber, shownNames, type CsvHeader } from './csvReader';

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

/** The header row, or why there is none; `names` completes "the first line should name …". */
export function readHeader(text: string, file: string, names: string): { ok: true; header: CsvHeader } | { ok: false; error: string } {
  const opened = CsvText.open(text, file, names);
  return opened.ok ? { ok: true, header: opened.csv.header } : opened;
}

export function parseNumericTable(text: string, file: string, columns: readonly ColumnRequest[], hint: string): NumericTableParse {
  const opened = CsvText.open(text, file, `the columns ${hint}`);
  if (!opened.ok) return opened;
  const { csv } = opened;
  const { names, delimiter, line: headerLine } = csv.header;
  const index: number[] = [];
  for (const c of columns) {
    const at = names.indexOf(c.name.toLowerCase());
    if (at < 0 && !c.optional) {
      return { ok: false, error: `${file} line ${headerLine}: no "${c.name}" column (the header has ${shownNames(names)}); name the columns ${hint}.` };
    }
    index.push(at);
  }
  const rows: NumericTable['rows'] = [];
  const error = csv.forEachRow((cells, line) => {
    const values: (number | null)[] = [];
    for (let j = 0; j < columns.length; j++) {
      const col = columns[j]!;
      const at = index[j]!;
      if (at < 0) { values.push(null); continue; }
      if (at >= cells.length && !col.optional) return `${file} line ${line}: ${cells.length} column(s), but the header needs ${at + 1}; fix or remove the line.`;
      const cell = at < cells.length ? cells[at]! : '';
      if (cell.trim() === '' && col.optional) { values.push(null); continue; }
      const x = csvNumber(cell, delimiter);
      if (!x) return notANumber(file, line, cell, col.name);
      values.push(x.value);
    }
    rows.push({ line, values });
    return null;
  });
  if (error !== null) return { ok: false, error };
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
    return { error: `${file} line ${headerLine}: no concentration column (the header has ${shownNames(names)}); name one concentration_M, concentration_mM or concentration_uM.` };
  }
  return { error: `${file} line ${headerLine}: ${found.length} concentration columns (${found.map((c) => c.name).join(', ')}); keep one.` };
}
