/**
 * A CSV of standards read and fitted to the Beer–Lambert line: for `rateline calibrate`,
 * and for `--calibration STANDARDS.csv` of `analyze` and `record`, which fit it on the spot.
 */
import { readUserText } from '../../../acquisition/files/runFile';
import { calibrate, type Calibration, type CalibrationStandard } from '../../../kinetics/calibration';
import { InputError } from './cliErrors';
import { readableAbsorbanceProblem } from '../../../acquisition/protocol/absorbance';
import { concentrationColumn, parseNumericTable, readHeader, type ConcentrationColumn } from '../../../acquisition/files/numericTable';

export interface FittedStandards {
  cal: Calibration;
  unit: ConcentrationColumn;
  rows: { line: number; values: (number | null)[] }[];
  standards: CalibrationStandard[];
}

/** Reads a CSV of standards and fits the Beer–Lambert line; every problem is one InputError naming the file and line. */
export async function fitStandardsFile(file: string, options: { pathLength_cm: number; intercept: boolean | 'auto' }): Promise<FittedStandards> {
  const text = await readUserText(file, 'a CSV of standards (.csv)');
  const read = readHeader(text, file, 'a concentration column (concentration_M, concentration_mM or concentration_uM) and absorbance');
  if (!read.ok) throw new InputError(read.error);
  const header = read.header;
  const unit = concentrationColumn(header.names, file, header.line);
  if ('error' in unit) throw new InputError(unit.error);
  const table = parseNumericTable(text, file, [{ name: unit.name }, { name: 'absorbance' }], `${unit.name} and absorbance`);
  if (!table.ok) throw new InputError(table.error);
  const rows = table.table.rows;
  if (rows.length === 0) throw new InputError(`${file}: no standards below the header (line ${table.table.headerLine}); add one line per reading of a standard.`);
  for (const r of rows) {
    const unreadable = readableAbsorbanceProblem(r.values[1]!);
    if (unreadable) throw new InputError(`${file} line ${r.line}: ${unreadable}; check that the column holds absorbance, or fix or remove the standard.`);
  }
  const standards: CalibrationStandard[] = rows.map((r) => ({ concentration_M: r.values[0]! * unit.toMolar, absorbance: r.values[1]! }));
  const outcome = calibrate(standards, options);
  if (!outcome.ok) {
    // The engine counts standards from 1; the user knows the file by its lines.
    const m = /^standard (\d+) \([^)]*\): (.*)$/.exec(outcome.error);
    throw new InputError(m ? `${file} line ${rows[Number(m[1]) - 1]!.line}: ${m[2]}` : `${file}: ${outcome.error}`);
  }
  return { cal: outcome.calibration, unit, rows, standards };
}
