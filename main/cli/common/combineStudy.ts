/**
 * `rateline combine` and the study file (acquisition/files/studyFile.ts): reading the
 * runs a study names, with their conditions, and writing the runs just combined as a
 * new version of a study. Only file handling and conditions live here; the statistics
 * are in kinetics/seriesCombination.ts.
 */
import { basename, dirname } from 'node:path';
import { readFileSync } from 'node:fs';
import { InputError } from './cliErrors';
import { loadStudy, saveStudy, sha256Hex, studyRelativePath, StudyFileError, type LoadedStudy, type StudyDraft, type StudyRun } from '../../../acquisition/files/studyFile';
import { decodeUserText } from '../../../acquisition/files/textDecoding';

/** The conditions of one run as combine found them (record header, --value), for a study. */
export interface RunConditions {
  concentrations: { name: string; concentration_M: number }[];
  temperature_C: number | null;
}

/** A study file's run as combine reads it: its text and where its x comes from. */
export interface StudyRunInput {
  file: string;
  text: string;
  run: StudyRun;
}

function studyError<T>(f: () => T): T {
  try { return f(); } catch (err) {
    if (err instanceof StudyFileError) throw new InputError(err.message);
    throw err;
  }
}

export function readStudy(file: string): LoadedStudy & { inputs: StudyRunInput[] } {
  const loaded = studyError(() => loadStudy(file));
  const inputs = loaded.runs.map((r) => ({ file: r.path, text: decodeUserText(r.bytes, r.path).text, run: r.run }));
  return { ...loaded, inputs };
}

/** A named concentration in a run's conditions (case-insensitive), or null. */
export function conditionConcentration(c: RunConditions, name: string | undefined): number | null {
  if (name === undefined) return null;
  const q = c.concentrations.find((x) => x.name.toLowerCase() === name.toLowerCase());
  return q ? q.concentration_M : null;
}

/** The x of a study run: its excess reagent's concentration or its temperature, or one sentence. */
export function studyRunX(study: LoadedStudy, input: StudyRunInput): number {
  const c = input.run.conditions;
  if (study.study.by === 'temperature') {
    if (c.temperature_C === null) throw new InputError(`${study.path}: ${input.run.path} has no temperature in its conditions; save the study again with the run's temperature.`);
    return c.temperature_C;
  }
  const x = conditionConcentration(c, study.study.excessReagent);
  if (x === null) throw new InputError(`${study.path}: ${input.run.path} has no concentration of "${study.study.excessReagent}" in its conditions; save the study again with it.`);
  return x;
}

export interface SavedRun {
  file: string;
  conditions: RunConditions;
  included: boolean;
  leftOutReason: string | null;
}

/**
 * Writes [DIR/]NAME.v(N+1).study.json for the runs given; returns its path. The runs and
 * the calibration must lie in DIR or below it (they are named relative to the study).
 */
export function saveCombinedStudy(target: string, by: 'concentration' | 'temperature', runs: SavedRun[], meta: {
  followedSpecies: string; excessReagent: string; stoichiometry: number; safetyNote: string; calibration: string | undefined;
}): string {
  const folder = dirname(target);
  const name = basename(target);
  return studyError(() => {
    const hashOf = (file: string): string => {
      try { return sha256Hex(readFileSync(file)); } catch { throw new StudyFileError(`${file}: cannot be read to take its SHA-256; check the path.`); }
    };
    const draft: StudyDraft = {
      by,
      followedSpecies: meta.followedSpecies,
      excessReagent: meta.excessReagent,
      stoichiometry: meta.stoichiometry,
      calibration: meta.calibration === undefined ? null : { path: studyRelativePath(folder, meta.calibration), sha256: hashOf(meta.calibration) },
      safetyNote: meta.safetyNote,
      runs: runs.map((r) => ({ path: studyRelativePath(folder, r.file), sha256: hashOf(r.file), conditions: r.conditions, included: r.included, leftOutReason: r.leftOutReason })),
    };
    return saveStudy(folder, name, draft, localIsoWithOffset(new Date()));
  });
}

/** The local time with its offset, as run records write it. */
function localIsoWithOffset(d: Date): string {
  const off = -d.getTimezoneOffset();
  const pad = (n: number, w = 2) => String(Math.abs(n)).padStart(w, '0');
  const local = new Date(d.getTime() + off * 60_000).toISOString().slice(0, 23);
  return `${local}${off >= 0 ? '+' : '-'}${pad(Math.trunc(off / 60))}:${pad(off % 60)}`;
}
