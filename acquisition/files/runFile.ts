/**
 * Reads a recorded run from disk by its kind. Today: CSV (see runCsv.ts). A small
 * dispatcher on purpose, so that other formats (the run record, .jsonl) slot in beside it.
 */
import { readFile } from 'node:fs/promises';
import { extname } from 'node:path';
import { parseRunCsv } from './runCsv';
import { TextDecodingError, decodeUserText } from './textDecoding';
import { runProblem } from './runPlausibility';
import { RunRecordError, analysisReadings, parseRunRecord } from '../record/journalReader';
import { recordFitSettings, type RecordedFitSettings } from '../record/recordTimeZero';
import { looksLikeRunRecordLine, type RecordCalibration } from '../record/runRecordFormat';

export interface LoadedRun {
  time_s: Float64Array;
  absorbance: Float64Array;
  source:
    | { path: string; format: 'csv'; delimiter: ',' | ';'; decimalComma: boolean }
    | { path: string; format: 'runRecord'; version: number; demo: boolean; calibration: RecordCalibration | null };
  /** The fit window, target and precision a recorded run was stopped with (record version 2), or absent. */
  fitSettings?: RecordedFitSettings;
  /** Something the user should be told about the file (a run record recovered after a crash), or absent. */
  notice?: string;
}

/** Bad input a user can fix: one sentence naming the file (and line). */
export class RunFileError extends Error {
  override readonly name = 'RunFileError';
}

/**
 * Reads a file the user named, as text; every way it can fail is one sentence naming
 * the file. `expected` says what it should have been, e.g. "a run file (.jsonl or .csv)".
 */
export async function readUserText(path: string, expected = 'a run file (.jsonl or .csv)'): Promise<string> {
  let bytes: Buffer;
  try {
    bytes = await readFile(path);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') throw new RunFileError(`${path}: no such file; check the path.`);
    if (code === 'EISDIR') throw new RunFileError(`${path}: is a folder, not ${expected}; give the path of the file.`);
    if (code === 'EACCES' || code === 'EPERM') throw new RunFileError(`${path}: not allowed to read it; check the file's permissions.`);
    throw new RunFileError(`${path}: cannot be read (${code ?? String(err)}); check the path and the file's permissions.`);
  }
  // A byte-order mark or UTF-16, as editors and spreadsheets save text, is read as the same text.
  try {
    return decodeUserText(bytes, path).text;
  } catch (err) {
    if (err instanceof TextDecodingError) throw new RunFileError(err.message);
    throw err;
  }
}

export async function loadRun(path: string): Promise<LoadedRun> {
  const run = await readRun(path);
  // A run that cannot be fitted as it is (times that do not advance, a swapped blank) is said now, in words.
  const problem = runProblem(run.time_s, run.absorbance, path);
  if (problem) throw new RunFileError(problem);
  return run;
}

async function readRun(path: string): Promise<LoadedRun> {
  const ext = extname(path).toLowerCase();
  const text = await readUserText(path);
  // A run record by its extension or by its header line (a record renamed to .txt is still one).
  if (ext === '.jsonl' || looksLikeRunRecordLine(text.slice(0, text.indexOf('\n') >>> 0))) return loadRunRecord(text, path);
  const parsed = parseRunCsv(text, path);
  if (!parsed.ok) throw new RunFileError(parsed.error);
  const { time_s, absorbance, delimiter, decimalComma } = parsed.run;
  return { time_s, absorbance, source: { path, format: 'csv', delimiter, decimalComma } };
}

/** A run record (acquisition/record/RUN_RECORD.md): the readings from time zero on, recovered if it was cut off. */
function loadRunRecord(text: string, path: string): LoadedRun {
  let record;
  try {
    record = parseRunRecord(text, path);
  } catch (err) {
    if (err instanceof RunRecordError) throw new RunFileError(err.message);
    throw err;
  }
  const readings = analysisReadings(record);
  const run: LoadedRun = {
    time_s: readings.time_s,
    absorbance: readings.absorbance,
    source: { path, format: 'runRecord', version: record.header.version, demo: record.header.demo, calibration: record.header.calibration },
  };
  const settings = recordFitSettings(record.events);
  if (settings) run.fitSettings = settings;
  if (record.recovery.message) run.notice = record.recovery.message;
  return run;
}
