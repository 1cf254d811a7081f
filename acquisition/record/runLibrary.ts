/**
 * The run library: every run record in the runs folder, described for a list (date,
 * sample, operator, conditions, readings, k and the verdict). The index is rebuilt from
 * the files each time, so a record copied into the folder appears without an import
 * step; k and the verdict are computed once per record content and cached by its
 * SHA-256 in a hidden folder that may be deleted at any time. A damaged or truncated
 * record is listed with its reason and never hides the others. Sidecars (notes, training
 * attempts) and study files are not runs and are not listed.
 */
import { createHash } from 'node:crypto';
import { mkdir, readdir, readFile, rename, stat, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { RunAnalyzer } from '../../kinetics/runAnalyzer';
import { MIN_POINTS_TO_ESTIMATE } from '../../kinetics/stopAdvice';
import { analysisReadings, parseRunRecord, RunRecordError } from './journalReader';
import { decodeUserText } from '../files/textDecoding';

/** Raised when what the cache holds would no longer be what the analysis gives. */
export const LIBRARY_CACHE_VERSION = 1;
export const LIBRARY_CACHE_FOLDER = join('.cache', 'library');

/** Files beside records that are not runs: notes and training-attempt sidecars, studies. */
const NOT_RUNS = [/\.notes\.jsonl$/i, /\.attempts\.jsonl$/i, /\.study\.json$/i];

export interface LibraryEntry {
  name: string;
  size_bytes: number;
  modified: string;
  sha256: string;
  /** The record's start (ISO 8601 with offset), null when the header cannot be read. */
  started: string | null;
  sample: string | null;
  operator: string | null;
  temperature_C: number | null;
  /** Concentrations after mixing, in words ("hypochlorite 0.010 M"). */
  conditions: string;
  demo: boolean;
  readings: number;
  /** k of the verdict's order (first order while undecided), its 95 % CI and unit. */
  k: number | null;
  kCI95: [number, number] | null;
  kUnit: string | null;
  /** The order verdict as the analysis gives it. */
  verdict: string | null;
  /** A record cut off by a crash and read as recovered: the sentence that says so. */
  notice: string | null;
  /** Why this record cannot be listed with its numbers (one sentence), or null. */
  problem: string | null;
}

type Described = Omit<LibraryEntry, 'name' | 'size_bytes' | 'modified' | 'sha256'>;

export function isRunRecordName(name: string): boolean {
  return name.toLowerCase().endsWith('.jsonl') && !NOT_RUNS.some((r) => r.test(name));
}

/** Describe one record's text: header facts and the analysis of its readings. Never throws for bad content. */
export function describeRecord(text: string, name: string): Described {
  const blank: Described = {
    started: null, sample: null, operator: null, temperature_C: null, conditions: '', demo: false,
    readings: 0, k: null, kCI95: null, kUnit: null, verdict: null, notice: null, problem: null,
  };
  let record;
  try {
    record = parseRunRecord(text, name);
  } catch (err) {
    if (err instanceof RunRecordError) return { ...blank, problem: err.message };
    return { ...blank, problem: `${name}: cannot be read as a run record (${String(err)}).` };
  }
  const run = record.header.run;
  const facts: Described = {
    ...blank,
    started: record.header.started,
    sample: run.sample,
    operator: run.operator,
    temperature_C: run.temperature_C,
    conditions: run.concentrations.map((c) => `${c.name} ${c.value} ${c.unit}`.trim()).join(', '),
    demo: record.header.demo,
    readings: record.readings.count,
    notice: record.recovery.message,
  };
  const { time_s, absorbance } = analysisReadings(record);
  if (time_s.length < MIN_POINTS_TO_ESTIMATE) {
    return { ...facts, problem: `${name}: only ${time_s.length} reading(s) after time zero; a fit needs at least ${MIN_POINTS_TO_ESTIMATE}.` };
  }
  const analyzer = new RunAnalyzer();
  for (let i = 0; i < time_s.length; i++) analyzer.add(time_s[i]!, absorbance[i]!);
  const result = analyzer.flush();
  const m = result.models[result.drivingModel];
  return {
    ...facts,
    k: m.k,
    kCI95: m.kCI95 ? [m.kCI95[0], m.kCI95[1]] : null,
    kUnit: result.units.k[result.drivingModel] ?? null,
    verdict: result.verdict.order,
  };
}

async function cached(cacheDir: string, sha: string): Promise<Described | null> {
  try {
    const v = JSON.parse(await readFile(join(cacheDir, `${sha}.json`), 'utf8')) as { version?: number; entry?: Described };
    return v.version === LIBRARY_CACHE_VERSION && v.entry ? v.entry : null;
  } catch {
    return null; // absent or unreadable: computed again
  }
}

async function keep(cacheDir: string, sha: string, entry: Described): Promise<void> {
  try {
    await mkdir(cacheDir, { recursive: true });
    const tmp = join(cacheDir, `${sha}.${process.pid}.tmp`);
    await writeFile(tmp, JSON.stringify({ version: LIBRARY_CACHE_VERSION, entry }));
    await rename(tmp, join(cacheDir, `${sha}.json`));
  } catch {
    // A read-only folder: the list still works, it only computes again next time.
  }
}

export interface LibraryIndex {
  entries: LibraryEntry[];
  /** Records whose numbers came from the cache (the rest were computed now). */
  fromCache: number;
}

/** Every run record in the folder, newest first. */
export async function indexRunsFolder(dataDir: string, limit = 500): Promise<LibraryIndex> {
  let names: string[];
  try {
    names = await readdir(dataDir);
  } catch {
    return { entries: [], fromCache: 0 };
  }
  const cacheDir = join(dataDir, LIBRARY_CACHE_FOLDER);
  const files: { name: string; size_bytes: number; modified: string }[] = [];
  for (const name of names.filter(isRunRecordName)) {
    try {
      const s = await stat(join(dataDir, name));
      if (s.isFile()) files.push({ name, size_bytes: s.size, modified: s.mtime.toISOString() });
    } catch {
      // removed between readdir and stat: not listed
    }
  }
  files.sort((a, b) => (a.modified < b.modified ? 1 : a.modified > b.modified ? -1 : a.name < b.name ? -1 : 1));
  let fromCache = 0;
  const entries: LibraryEntry[] = [];
  for (const f of files.slice(0, limit)) {
    let bytes: Buffer;
    try {
      bytes = await readFile(join(dataDir, f.name));
    } catch (err) {
      entries.push({ ...f, sha256: '', ...describeRecord('', f.name), problem: `${f.name}: cannot be read (${(err as NodeJS.ErrnoException).code ?? String(err)}); check the file's permissions.` });
      continue;
    }
    const sha256 = createHash('sha256').update(bytes).digest('hex');
    let d = await cached(cacheDir, sha256);
    if (d) fromCache++;
    else {
      let text: string;
      try {
        text = decodeUserText(bytes, f.name).text;
      } catch (err) {
        entries.push({ ...f, sha256, ...describeRecord('', f.name), problem: (err as Error).message });
        continue;
      }
      d = describeRecord(text, f.name);
      await keep(cacheDir, sha256, d);
    }
    entries.push({ ...f, sha256, ...d });
  }
  return { entries, fromCache };
}
