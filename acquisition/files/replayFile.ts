/** Opening a file for replay: a run record with its events, or a CSV run. */
import { closeSync, openSync, readSync } from 'node:fs';
import { basename } from 'node:path';
import { readRunRecord } from '../record/journalReader';
import { ReplaySource, timelineFromRecord, timelineFromReadings, type ReplayOptions } from '../sources/replaySource';
import { loadRun } from './runFile';
import { looksLikeRunRecordLine } from '../record/runRecordFormat';

/**
 * A replay of a file: a run record with its events, or a CSV run (through loadRun, time
 * as in the file). Throws the readers' one-line errors (RunRecordError, RunFileError).
 */
export async function replayFromFile(path: string, options: ReplayOptions = {}): Promise<ReplaySource> {
  const label = options.label ?? basename(path);
  if (path.toLowerCase().endsWith('.jsonl') || startsLikeRunRecord(path)) {
    return new ReplaySource(timelineFromRecord(readRunRecord(path)), { ...options, label });
  }
  const loaded = await loadRun(path);
  // A record whose header is too long to peek at is still found by loadRun.
  if (loaded.source.format === 'runRecord') return new ReplaySource(timelineFromRecord(readRunRecord(path)), { ...options, label });
  return new ReplaySource(timelineFromReadings(loaded.time_s, loaded.absorbance), { ...options, label });
}

/** Peeks at the first line only; a file that cannot be read is left to loadRun, which says why. */
function startsLikeRunRecord(path: string): boolean {
  let fd: number | null = null;
  try {
    fd = openSync(path, 'r');
    const buf = Buffer.alloc(16 * 1024);
    const n = readSync(fd, buf, 0, buf.length, 0);
    const head = buf.subarray(0, n).toString('utf8');
    const nl = head.indexOf('\n');
    return looksLikeRunRecordLine(nl >= 0 ? head.slice(0, nl) : head);
  } catch {
    return false;
  } finally {
    if (fd !== null) closeSync(fd);
  }
}

