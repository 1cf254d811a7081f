/**
 * A write of the run record that failed: what the file then holds, and the one sentence
 * that says why and what to do. The journal (journal.ts) calls these when the disk refuses
 * a write, an fsync fails, or the file has lost its name.
 */
import { JournalError, describe, errorCode, type JournalProblem, type RecordOnDisk } from './journalFs';

/** The error code for a record whose file (or folder) was deleted while it was open. */
export const UNLINKED_CODE = 'RATELINE_UNLINKED';

/** Why a write failed, in the user's words, and what to do about it. */
export function writeProblem(err: unknown): { problem: JournalProblem; why: string; todo: string } {
  switch (errorCode(err)) {
    case 'ENOSPC':
    case 'EDQUOT':
      return { problem: 'diskFull', why: 'the disk is full', todo: 'free space or choose another disk, and record again' };
    case 'EFBIG':
      // Not a lack of space: one file may not grow past a limit (a user's `ulimit -f`, 4 GiB on a FAT32 stick).
      return {
        problem: 'fileSizeLimit',
        why: 'the file reached the largest size this system allows one file, a file-size limit rather than a lack of space',
        todo: 'record the rest into a new file, or on a disk without that limit (FAT32 sticks stop at 4 GiB; ask for the file-size limit, ulimit -f, to be raised)',
      };
    case 'EIO':
      return { problem: 'ioError', why: 'the disk reported an input/output error (a removed USB stick, or a failing disk)', todo: 'check the disk, and record again to another folder' };
    case 'ENODEV':
    case 'ENXIO':
    case 'ESTALE':
    case 'ENOENT':
      return { problem: 'diskGone', why: 'the disk or folder holding it went away (a removed USB stick, or a network folder that dropped)', todo: 'put it back or choose another folder, and record again' };
    case 'EROFS':
      return { problem: 'readOnly', why: 'the disk became read-only (the system does this to a disk with errors)', todo: 'check the disk, and record again to another folder' };
    case UNLINKED_CODE:
      return { problem: 'diskGone', why: 'the file, or the folder holding it, was deleted while recording', todo: 'record again to a folder that stays' };
    default:
      return { problem: 'writeFailed', why: describe(err), todo: 'check the disk, and record again to another folder' };
  }
}

/**
 * Of a buffer the disk took only `done` bytes of: how many bytes end a complete line, and
 * the readings among those lines and the device time of the last. Reading lines start with
 * '[' and events with '{' (RUN_RECORD.md).
 */
export function completeLines(bytes: Buffer, done: number): { bytes: number; readings: number; lastDeviceTime_s: number | null } {
  const complete = done > 0 ? bytes.lastIndexOf(0x0a, done - 1) + 1 : 0;
  let readings = 0;
  let last: number | null = null;
  for (let i = 0; i < complete; i = bytes.indexOf(0x0a, i) + 1) {
    if (bytes[i] === 0x5b) {
      readings++;
      last = Number(bytes.toString('latin1', i + 1, bytes.indexOf(0x2c, i)));
    }
  }
  return { bytes: complete, readings, lastDeviceTime_s: last };
}

/** The error for a failed write of `path`; `confirmed` readings were known to be on disk before it. */
export function writeFailure(path: string, err: unknown, onDisk: RecordOnDisk, confirmed: number): JournalError {
  const { problem, why, todo } = writeProblem(err);
  const n = onDisk.readings;
  const plural = (k: number): string => `${k} reading${k === 1 ? '' : 's'}`;
  const last = onDisk.lastDeviceTime_s !== null ? ` (the last at ${onDisk.lastDeviceTime_s} s device time)` : '';
  const holds = errorCode(err) === UNLINKED_CODE
    ? `none of its ${plural(confirmed)} can be found on the disk any more`
    : onDisk.synced
      ? `it holds ${plural(n)}${last}, complete up to its last line`
      : `it holds ${plural(n)}${last}, of which the disk confirmed the first ${confirmed}`;
  const failure = new JournalError(`${path}: the run record could not be written further (${why}); ${holds}; ${todo}.`, errorCode(err), problem, onDisk);
  failure.cause = err;
  return failure;
}
