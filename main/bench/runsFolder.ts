/**
 * The runs folder: where records are written and, in the web host, the only place a
 * record can be opened from. The screen names a record by file name alone; the path is
 * resolved here and checked to stay inside the folder.
 */
import { mkdir, readdir, stat } from 'node:fs/promises';
import { basename, join, resolve, sep } from 'node:path';
import { LIMITS } from '../bridge/contract';
import { Refusal } from './refusal';
import { isRunRecordName } from '../../acquisition/record/runLibrary';

export interface RecordFileInfo {
  name: string;
  size_bytes: number;
  modified: string;
}

export async function ensureRunsFolder(dataDir: string): Promise<void> {
  await mkdir(dataDir, { recursive: true });
}

/** Run records (*.jsonl, sidecars left out) in the folder, newest first. */
export async function listRecordFiles(dataDir: string): Promise<RecordFileInfo[]> {
  let names: string[];
  try {
    names = await readdir(dataDir);
  } catch {
    return [];
  }
  const out: RecordFileInfo[] = [];
  for (const name of names.filter(isRunRecordName)) {
    try {
      const s = await stat(join(dataDir, name));
      if (s.isFile()) out.push({ name, size_bytes: s.size, modified: s.mtime.toISOString() });
    } catch {
      // removed between readdir and stat: not listed
    }
  }
  out.sort((a, b) => (a.modified < b.modified ? 1 : a.modified > b.modified ? -1 : 0));
  return out.slice(0, LIMITS.maxRecords);
}

/** The full path of a record named by the screen; refuses anything that leaves the folder. */
export async function resolveRecordName(dataDir: string, name: string): Promise<string> {
  const root = resolve(dataDir);
  const full = resolve(root, name);
  if (basename(full) !== name || !full.startsWith(root + sep)) {
    throw new Refusal(`replay: "${name}" is not a record in the runs folder; pick one from the list.`);
  }
  try {
    const s = await stat(full);
    if (!s.isFile()) throw new Error('not a file');
  } catch {
    throw new Refusal(`replay: no record "${name}" in the runs folder ${root}; pick one from the list.`);
  }
  return full;
}
