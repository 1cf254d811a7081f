/**
 * Reads a recorded run from disk by its kind. Today: CSV (see runCsv.ts). A small
 * dispatcher on purpose, so that other formats (the run record, .jsonl) slot in beside it.
 */
import { readFile } from 'node:fs/promises';
import { extname } from 'node:path';
import { parseRunCsv } from './runCsv';

export interface LoadedRun {
  time_s: Float64Array;
  absorbance: Float64Array;
  source: { path: string; format: 'csv'; delimiter: ',' | ';'; decimalComma: boolean };
}

/** Bad input a user can fix: one sentence naming the file (and line). */
export class RunFileError extends Error {
  override readonly name = 'RunFileError';
}

async function readText(path: string): Promise<string> {
  try {
    return await readFile(path, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') throw new RunFileError(`${path}: no such file; check the path.`);
    if (code === 'EISDIR') throw new RunFileError(`${path}: is a folder, not a run file; give the path of a .csv file.`);
    if (code === 'EACCES' || code === 'EPERM') throw new RunFileError(`${path}: not allowed to read it; check the file's permissions.`);
    throw new RunFileError(`${path}: cannot be read (${code ?? String(err)}).`);
  }
}

export async function loadRun(path: string): Promise<LoadedRun> {
  const ext = extname(path).toLowerCase();
  if (ext === '.jsonl') {
    throw new RunFileError(`${path}: run records (.jsonl) are not read by this version; export the run as CSV.`);
  }
  const parsed = parseRunCsv(await readText(path), path);
  if (!parsed.ok) throw new RunFileError(parsed.error);
  const { time_s, absorbance, delimiter, decimalComma } = parsed.run;
  return { time_s, absorbance, source: { path, format: 'csv', delimiter, decimalComma } };
}
