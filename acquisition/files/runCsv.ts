/**
 * A run as CSV text: a header row naming `time_s` and `absorbance` (other columns are
 * ignored), then one reading a line, read by the one CSV reader (csvReader.ts: RFC 4180
 * quoting, comma or semicolon separated, with semicolons a decimal comma, # comments).
 * Pure: text in, readings or one error sentence naming the file and line out.
 */
import { CsvText, csvNumber, notANumber, shownNames, type CsvDelimiter } from './csvReader';
import { readableAbsorbanceProblem } from '../protocol/absorbance';

export interface CsvRun {
  time_s: Float64Array;
  absorbance: Float64Array;
  delimiter: CsvDelimiter;
  decimalComma: boolean;
}

export type CsvParse = { ok: true; run: CsvRun } | { ok: false; error: string };

export function parseRunCsv(text: string, file: string): CsvParse {
  const opened = CsvText.open(text, file, 'the columns time_s and absorbance');
  if (!opened.ok) return opened;
  const { csv } = opened;
  const { names, delimiter, line: headerLine } = csv.header;
  const ti = names.indexOf('time_s');
  const ai = names.indexOf('absorbance');
  for (const [col, idx] of [['time_s', ti], ['absorbance', ai]] as const) {
    if (idx < 0) {
      return { ok: false, error: `${file} line ${headerLine}: no "${col}" column (the header has ${shownNames(names)}); name the columns time_s and absorbance.` };
    }
  }
  const need = Math.max(ti, ai) + 1;
  let time = new Float64Array(1024), abs = new Float64Array(1024);
  let n = 0;
  let decimalComma = false;
  const error = csv.forEachRow((cells, line) => {
    if (cells.length < need) return `${file} line ${line}: ${cells.length} column(s), but the header needs ${need}; fix or remove the line.`;
    const t = csvNumber(cells[ti]!, delimiter);
    if (!t) return notANumber(file, line, cells[ti]!, 'time_s');
    const a = csvNumber(cells[ai]!, delimiter);
    if (!a) return notANumber(file, line, cells[ai]!, 'absorbance');
    const unreadable = readableAbsorbanceProblem(a.value);
    if (unreadable) return `${file} line ${line}: ${unreadable}; check that the column holds absorbance (not %T or counts), or fix or remove the line.`;
    decimalComma ||= t.decimalComma || a.decimalComma;
    if (n > 0 && t.value < time[n - 1]!) {
      return `${file} line ${line}: time goes backwards (${t.value} s after ${time[n - 1]} s); sort the file or remove the line.`;
    }
    if (n === time.length) {
      const t2 = new Float64Array(n * 2); t2.set(time); time = t2;
      const a2 = new Float64Array(n * 2); a2.set(abs); abs = a2;
    }
    time[n] = t.value; abs[n] = a.value; n++;
    return null;
  });
  if (error !== null) return { ok: false, error };
  return { ok: true, run: { time_s: time.slice(0, n), absorbance: abs.slice(0, n), delimiter, decimalComma } };
}
