/**
 * The calibration file: a Beer–Lambert line saved by `rateline calibrate --save` and
 * read back by `rateline analyze --calibration` and `rateline record --calibration`.
 * One small JSON object of Rateline's own. It is a run record's `calibration`
 * (runRecordFormat.ts: label, signal {name, unit}, slope, intercept, with the signal
 * = (A − intercept) / slope) plus what is needed to trust it later: ε and its interval,
 * the path length, the standards' range and the sums for the calibration-curve
 * standard error, the linear limit and the date. So the same object goes into a run
 * record's header unchanged.
 */
import { existsSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { TextDecodingError, decodeUserText } from './textDecoding';
import { z } from 'zod';
import type { Calibration } from '../../kinetics/calibration';
import { calibrationSchema, type RecordCalibration } from '../record/runRecordFormat';

export const CALIBRATION_FORMAT = 'rateline-calibration';
export const CALIBRATION_VERSION = 1;

/** Concentration units a calibration may carry, and their factor to mol/L. */
export const CONCENTRATION_UNITS: Readonly<Record<string, number>> = { M: 1, mM: 1e-3, 'µM': 1e-6 };

const finite = z.number();
const interval = z.tuple([finite, finite]);
const isoWithOffset = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d+)?(Z|[+-]\d{2}:\d{2})$/, 'must be ISO 8601 with an offset');

export const calibrationFileSchema = z.object({
  format: z.literal(CALIBRATION_FORMAT),
  version: z.literal(CALIBRATION_VERSION),
  label: z.string().min(1).max(10_000),
  signal: z.object({ name: z.literal('concentration'), unit: z.enum(['M', 'mM', 'µM']) }),
  /** AU per signal unit (ε b in that unit). */
  slope: finite.positive(),
  slopeStdErr: finite.nonnegative().nullable(),
  /** Blank offset a, AU (0 when the line goes through the origin). */
  intercept: finite,
  interceptStdErr: finite.nonnegative().nullable(),
  hasIntercept: z.boolean(),
  epsilon_perMperCm: finite.positive(),
  epsilonStdErr_perMperCm: finite.nonnegative().nullable(),
  epsilonCI95_perMperCm: interval.nullable(),
  pathLength_cm: finite.positive(),
  standards: z.object({
    file: z.string().max(10_000),
    n: z.number().int().min(2),
    dof: z.number().int().min(0),
    /** Range of the standards, in the signal unit and in AU. */
    concentrationRange: interval,
    absorbanceRange_AU: interval,
    /** Ā and Σ(c − c̄)² (or Σc² through the origin), signal unit², for inverse prediction. */
    meanAbsorbance_AU: finite,
    sxx: finite.positive(),
    residualSd_AU: finite.nonnegative().nullable(),
    /** Student t at 95% on the line's dof, or null with no dof. */
    t95: finite.positive().nullable(),
  }),
  /** Upper end of the trusted linear range, AU. */
  linearLimit_AU: finite.positive(),
  created: isoWithOffset,
  warnings: z.array(z.string().max(10_000)),
});
export type CalibrationFile = z.infer<typeof calibrationFileSchema>;

/** A calibration file or record calibration that cannot be used: one sentence naming the file. */
export class CalibrationFileError extends Error {
  override readonly name = 'CalibrationFileError';
}

/** The saved form of a fitted calibration, concentrations in `unit`. */
export function calibrationFile(cal: Calibration, unit: 'M' | 'mM' | 'µM', standardsFile: string, created: string): CalibrationFile {
  const f = CONCENTRATION_UNITS[unit]!; // M per unit: slope per unit = slope per M × f
  return {
    format: CALIBRATION_FORMAT,
    version: CALIBRATION_VERSION,
    label: `${standardsFile}: ε = ${cal.epsilon_perMperCm.toPrecision(5)} M⁻¹ cm⁻¹, ${cal.pathLength_cm} cm, ${cal.hasIntercept ? 'with blank offset' : 'through the origin'}`,
    signal: { name: 'concentration', unit },
    slope: cal.slope_perM * f,
    slopeStdErr: cal.slopeStdErr_perM === null ? null : cal.slopeStdErr_perM * f,
    intercept: cal.intercept_AU,
    interceptStdErr: cal.interceptStdErr_AU,
    hasIntercept: cal.hasIntercept,
    epsilon_perMperCm: cal.epsilon_perMperCm,
    epsilonStdErr_perMperCm: cal.epsilonStdErr_perMperCm,
    epsilonCI95_perMperCm: cal.epsilonCI_perMperCm,
    pathLength_cm: cal.pathLength_cm,
    standards: {
      file: standardsFile,
      n: cal.n,
      dof: cal.dof,
      concentrationRange: [cal.concentrationRange_M[0] / f, cal.concentrationRange_M[1] / f],
      absorbanceRange_AU: cal.absorbanceRange_AU,
      meanAbsorbance_AU: cal.fit.meanY,
      sxx: cal.fit.sxx / (f * f),
      residualSd_AU: cal.residualSd_AU,
      t95: cal.fit.tQuantile,
    },
    linearLimit_AU: 1,
    created,
    warnings: cal.warnings,
  };
}

/** Writes a calibration file; an existing file is never overwritten. */
export function saveCalibrationFile(path: string, cal: CalibrationFile): void {
  if (existsSync(path)) {
    const what = statSync(path).isDirectory() ? 'a folder' : 'a file';
    throw new CalibrationFileError(`${path} is already ${what}, and a calibration file is never overwritten; choose another --save name.`);
  }
  try {
    writeFileSync(path, JSON.stringify(cal, null, 2) + '\n', { flag: 'wx' });
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new CalibrationFileError(`${path}: cannot be written (${code ?? String(err)}); check the folder exists and may be written to.`);
  }
}

function firstIssue(error: z.ZodError): string {
  const i = error.issues[0]!;
  return `${i.path.length ? i.path.join('.') : 'the file'}: ${i.message}`;
}

/** Reads and checks a calibration file. */
export function readCalibrationFile(path: string): CalibrationFile {
  let text: string;
  try {
    text = decodeUserText(readFileSync(path), path).text;
  } catch (err) {
    if (err instanceof TextDecodingError) throw new CalibrationFileError(err.message);
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') throw new CalibrationFileError(`${path}: no such file; check the path of the calibration.`);
    if (code === 'EISDIR') throw new CalibrationFileError(`${path}: is a folder; give a calibration file (rateline calibrate --save) or a CSV of standards.`);
    throw new CalibrationFileError(`${path}: cannot be read (${code ?? String(err)}); check the path and the file's permissions.`);
  }
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    throw new CalibrationFileError(`${path}: not JSON, so not a calibration file; make one with rateline calibrate STANDARDS.csv --save ${path}, or give the CSV of standards.`);
  }
  return checkCalibration(value, path);
}

/** Checks a parsed calibration object (a file's content), naming the first problem. */
export function checkCalibration(value: unknown, where: string): CalibrationFile {
  const format = (value as { format?: unknown } | null)?.format;
  if (typeof value !== 'object' || value === null || format !== CALIBRATION_FORMAT) {
    throw new CalibrationFileError(`${where}: not a Rateline calibration file (no "format": "${CALIBRATION_FORMAT}"); make one with rateline calibrate STANDARDS.csv --save FILE.`);
  }
  const version = (value as { version?: unknown }).version;
  if (typeof version === 'number' && version > CALIBRATION_VERSION) {
    throw new CalibrationFileError(`${where}: calibration file version ${version} is newer than this Rateline reads (${CALIBRATION_VERSION}); update Rateline.`);
  }
  const parsed = calibrationFileSchema.safeParse(value);
  if (!parsed.success) throw new CalibrationFileError(`${where}: not a valid calibration file (${firstIssue(parsed.error)}); save it again with rateline calibrate --save.`);
  return parsed.data;
}

/**
 * The calibration a run record's header carries. A full calibration file (as
 * `rateline record --calibration` writes it) comes back whole; a bare line from another
 * writer (label, signal, slope, intercept only) comes back as `line` alone, enough to
 * convert but without the standards' range or uncertainty.
 */
export function recordCalibration(cal: RecordCalibration, where: string): { line: RecordCalibration; file: CalibrationFile | null } {
  const line = calibrationSchema.parse(cal);
  if (!(line.slope > 0)) throw new CalibrationFileError(`${where}: the header's calibration has slope ${line.slope}, not a positive number; analyse it with --calibration FILE or --calibration none.`);
  const full = calibrationFileSchema.safeParse(cal);
  return { line, file: full.success ? full.data : null };
}
