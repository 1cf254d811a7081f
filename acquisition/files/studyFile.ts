/**
 * The study file: which runs make up a series and under what conditions, so a rate law
 * or an activation energy can be had again from the same runs. Our own JSON format,
 * described in acquisition/record/STUDY_FILE.md. A study file is named
 * NAME.vN.study.json and never rewritten in place: saving writes version N + 1 beside the
 * old ones, and the highest N is the current one. Each run is named by its path relative
 * to the study file and by the SHA-256 of its bytes, so a run changed or lost since is
 * found out and said in one sentence rather than silently used.
 */
import { createHash } from 'node:crypto';
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { basename, dirname, isAbsolute, join, relative, resolve, sep } from 'node:path';
import { z } from 'zod';

export const STUDY_FORMAT = 'rateline-study';
export const STUDY_FORMAT_VERSION = 1;
const NAME_PATTERN = /^(.+)\.v([1-9]\d*)\.study\.json$/;
const SHA256 = z.string().regex(/^[0-9a-f]{64}$/, 'must be 64 lowercase hex digits (SHA-256)');
const text = (max: number) => z.string().max(max);

export const studyRunSchema = z.object({
  /** Path relative to the study file's folder, with / between folders. */
  path: text(4096).min(1),
  sha256: SHA256,
  conditions: z.object({
    /** Concentrations after mixing, mol/L. */
    concentrations: z.array(z.object({ name: text(200).min(1), concentration_M: z.number().positive() })).max(50),
    temperature_C: z.number().min(-273.15).nullable(),
  }),
  included: z.boolean(),
  /** Why the run is left out (required when included is false). */
  leftOutReason: text(2000).nullable(),
}).refine((r) => r.included || (r.leftOutReason !== null && r.leftOutReason.trim() !== ''), { message: 'a run left out needs a leftOutReason' });

export const studyFileSchema = z.object({
  format: z.literal(STUDY_FORMAT),
  formatVersion: z.literal(STUDY_FORMAT_VERSION),
  name: text(200).min(1),
  /** The N of NAME.vN.study.json. */
  revision: z.number().int().positive(),
  saved: z.string().regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d+)?(Z|[+-]\d{2}:\d{2})$/, 'must be ISO 8601 with an offset'),
  /** What varies across the runs. */
  by: z.enum(['concentration', 'temperature']),
  /** The species whose absorbance is followed (A) and the reagent in excess (B). */
  followedSpecies: text(200).min(1),
  excessReagent: text(200).min(1),
  /** mol of excess reagent used per mol of followed species. */
  stoichiometry: z.number().positive(),
  /** The calibration in use (path relative to the study file, with its hash), or null for absorbance. */
  calibration: z.object({ path: text(4096).min(1), sha256: SHA256 }).nullable(),
  /** Free text: the hazards of the reagents and how they are handled. */
  safetyNote: text(20_000),
  runs: z.array(studyRunSchema).min(1).max(1000),
});

export type StudyFile = z.infer<typeof studyFileSchema>;
export type StudyRun = z.infer<typeof studyRunSchema>;

export class StudyFileError extends Error {
  override readonly name = 'StudyFileError';
}

export function studyFileName(name: string, revision: number): string {
  return `${name}.v${revision}.study.json`;
}

/** NAME and N from a file name NAME.vN.study.json, or null. */
export function parseStudyFileName(fileName: string): { name: string; revision: number } | null {
  const m = NAME_PATTERN.exec(basename(fileName));
  return m ? { name: m[1]!, revision: Number(m[2]) } : null;
}

export function isStudyFileName(fileName: string): boolean {
  return basename(fileName).endsWith('.study.json');
}

/** The revisions of study NAME in a folder, lowest first. */
export function studyRevisions(folder: string, name: string): number[] {
  let names: string[];
  try { names = readdirSync(folder); } catch { return []; }
  return names.map(parseStudyFileName).filter((p): p is { name: string; revision: number } => p !== null && p.name === name).map((p) => p.revision).sort((a, b) => a - b);
}

export function sha256Hex(bytes: Uint8Array): string {
  return createHash('sha256').update(bytes).digest('hex');
}

function readBytes(path: string, shown: string, what: string): Buffer {
  try {
    return readFileSync(path);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') throw new StudyFileError(`${shown}: ${what} is missing; put it back, or save a new version of the study without it.`);
    throw new StudyFileError(`${shown}: ${what} cannot be read (${code ?? String(err)}); check the file's permissions.`);
  }
}

/** Parses and checks a study file's text; one sentence on failure. */
export function parseStudyFile(textIn: string, file: string): StudyFile {
  let raw: unknown;
  try { raw = JSON.parse(textIn); } catch (err) {
    throw new StudyFileError(`${file}: not a study file (not JSON: ${(err as Error).message}); give a NAME.vN.study.json that rateline combine --save-study wrote.`);
  }
  const parsed = studyFileSchema.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!;
    const where = issue.path.length > 0 ? issue.path.join('.') : 'the top level';
    throw new StudyFileError(`${file}: not a valid study file at ${where} (${issue.message}); keep a copy, then repair it or save the study again.`);
  }
  const named = parseStudyFileName(file);
  if (named && (named.name !== parsed.data.name || named.revision !== parsed.data.revision)) {
    throw new StudyFileError(`${file}: the file name says ${named.name} version ${named.revision} but the file holds ${parsed.data.name} version ${parsed.data.revision}; rename it back or save the study again.`);
  }
  return parsed.data;
}

export interface LoadedStudy {
  study: StudyFile;
  path: string;
  /** A newer revision beside the one read, if any (the highest N is current). */
  newerRevision: number | null;
  /** Each run's path as given to the reader (resolved against the study's folder) and its bytes. */
  runs: { run: StudyRun; path: string; bytes: Buffer }[];
}

/** Reads a study file and every run it names, checking each run's SHA-256. */
export function loadStudy(file: string): LoadedStudy {
  const bytes = readBytes(file, file, 'the study file');
  const study = parseStudyFile(bytes.toString('utf8').replace(/^\uFEFF/, ''), file);
  const folder = dirname(file);
  const revisions = studyRevisions(folder, study.name);
  const highest = revisions.length > 0 ? revisions[revisions.length - 1]! : study.revision;
  const runs = study.runs.map((run, i) => {
    if (isAbsolute(run.path) || run.path.split('/').includes('..')) {
      throw new StudyFileError(`${file}: run ${i + 1} (${run.path}) is not a path inside the study's folder; keep the runs beside the study file or below it.`);
    }
    const path = join(folder, ...run.path.split('/'));
    const runBytes = readBytes(path, file, `run ${i + 1} (${run.path})`);
    if (sha256Hex(runBytes) !== run.sha256) {
      throw new StudyFileError(`${file}: run ${i + 1} (${run.path}) has changed since the study was saved (its SHA-256 differs); restore the original, or save a new version of the study with it.`);
    }
    return { run, path, bytes: runBytes };
  });
  if (study.calibration) {
    const cal = join(folder, ...study.calibration.path.split('/'));
    const calBytes = readBytes(cal, file, `the calibration (${study.calibration.path})`);
    if (sha256Hex(calBytes) !== study.calibration.sha256) {
      throw new StudyFileError(`${file}: the calibration (${study.calibration.path}) has changed since the study was saved (its SHA-256 differs); restore it, or save a new version of the study.`);
    }
  }
  return { study, path: file, newerRevision: highest > study.revision ? highest : null, runs };
}

/** A path relative to the study's folder, with / between folders; refused when outside it. */
export function studyRelativePath(studyFolder: string, file: string): string {
  const rel = relative(resolve(studyFolder), resolve(file));
  if (rel === '' || rel.startsWith('..') || isAbsolute(rel)) {
    throw new StudyFileError(`${file}: lies outside the study's folder ${studyFolder}; save the study in a folder that holds its runs.`);
  }
  return rel.split(sep).join('/');
}

export type StudyDraft = Omit<StudyFile, 'format' | 'formatVersion' | 'revision' | 'saved' | 'name'>;

/**
 * Saves a new revision NAME.v(N+1).study.json in `folder` (N the highest there, 0 when
 * none) and returns its path. The file is created exclusively, so an existing revision
 * is never rewritten, even by two saves at once.
 */
export function saveStudy(folder: string, name: string, draft: StudyDraft, saved: string): string {
  if (!/^[^/\\]+$/.test(name) || name.endsWith('.study.json')) throw new StudyFileError(`the study name "${name}" is not a plain name; give e.g. --save-study bleach-series (no folder, no .study.json).`);
  const revisions = studyRevisions(folder, name);
  const revision = (revisions.length > 0 ? revisions[revisions.length - 1]! : 0) + 1;
  const study: StudyFile = { format: STUDY_FORMAT, formatVersion: STUDY_FORMAT_VERSION, name, revision, saved, ...draft };
  const checked = studyFileSchema.safeParse(study);
  if (!checked.success) {
    const issue = checked.error.issues[0]!;
    throw new StudyFileError(`the study cannot be saved: ${issue.path.join('.') || 'the top level'} ${issue.message}; check the runs and options given.`);
  }
  const path = join(folder, studyFileName(name, revision));
  try {
    writeFileSync(path, JSON.stringify(study, null, 2) + '\n', { flag: 'wx' });
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'EEXIST') throw new StudyFileError(`${path}: another save wrote this version just now; save again to write the next one.`);
    throw new StudyFileError(`${path}: cannot be written (${code ?? String(err)}); check the folder's permissions and free space.`);
  }
  return path;
}
