/**
 * The journal's contact with the file system: the operations it needs (injectable, so
 * tests can count fsyncs, cut writes short and fill the disk), and the one-sentence
 * errors for a user.
 */
import * as nodeFs from 'node:fs';
import { dirname } from 'node:path';

/** The file operations the journal needs; injected in tests to count syncs and fail writes. */
export interface JournalFs {
  openSync(path: string, flags: string, mode?: number): number;
  /**
   * Writes `length` bytes of `data` from `offset` at the end of the file; returns how many
   * were written, which may be fewer (a full disk writes what fits before it refuses).
   */
  writeSync(fd: number, data: Uint8Array, offset: number, length: number): number;
  fsyncSync(fd: number): void;
  /** Cuts the file to `length` bytes (a line cut short by a failing write is taken back). */
  ftruncateSync(fd: number, length: number): void;
  closeSync(fd: number): void;
  /**
   * How many names the open file still has in its folder (0 once it, or its folder, was
   * deleted: writes then go on succeeding into a file nobody can open again). Optional:
   * without it the check is skipped.
   */
  linkCount?(fd: number): number;
  /** Removes a file (only a record whose header could not be written: it holds nothing). */
  unlinkSync(path: string): void;
  /** Make the new directory entry durable (best effort; not every system can). */
  syncDirectory?(dir: string): void;
}

export const defaultFs: JournalFs = {
  openSync: (p, f, m) => nodeFs.openSync(p, f, m),
  writeSync: (fd, data, offset, length) => nodeFs.writeSync(fd, data, offset, length),
  fsyncSync: (fd) => nodeFs.fsyncSync(fd),
  ftruncateSync: (fd, length) => nodeFs.ftruncateSync(fd, length),
  closeSync: (fd) => nodeFs.closeSync(fd),
  linkCount: (fd) => nodeFs.fstatSync(fd).nlink,
  unlinkSync: (path) => nodeFs.unlinkSync(path),
  syncDirectory: (dir) => {
    let fd: number | null = null;
    try {
      fd = nodeFs.openSync(dir, 'r');
      nodeFs.fsyncSync(fd);
    } catch {
      // Some systems (Windows) cannot fsync a directory; the file's own fsync still holds its data.
    } finally {
      if (fd !== null) nodeFs.closeSync(fd);
    }
  },
};

/** What went wrong with the record, as a program can act on it (the message says it to a person). */
export type JournalProblem =
  | 'exists' | 'noFolder' | 'noPermission' | 'isFolder' | 'notCreated' | 'invalidHeader' | 'closed'
  | 'diskFull' | 'fileSizeLimit' | 'diskGone' | 'ioError' | 'readOnly' | 'writeFailed';

/** What the file holds after a failed write: complete lines only, so it reads as a recovered record. */
export interface RecordOnDisk {
  /** Readings in the file, every one of them on a complete line. */
  readings: number;
  /** Device time of the last of them, or null when there is none. */
  lastDeviceTime_s: number | null;
  /** False when even the final fsync failed: then only `readings` up to the last good sync are sure. */
  synced: boolean;
}

/** A failure to create or write the record, in one sentence for the user. */
export class JournalError extends Error {
  override readonly name = 'JournalError';
  constructor(
    message: string,
    readonly code: string | null = null,
    readonly problem: JournalProblem = 'writeFailed',
    /** For a failed write: what the record on disk holds. Null when nothing was written yet. */
    readonly onDisk: RecordOnDisk | null = null,
  ) {
    super(message);
  }
}

export function errorCode(err: unknown): string | null {
  const code = (err as { code?: unknown } | null)?.code;
  return typeof code === 'string' ? code : null;
}

export function describe(err: unknown): string {
  return err instanceof Error ? err.message : String(err);
}

export function creationError(path: string, err: unknown): JournalError {
  const code = errorCode(err);
  switch (code) {
    case 'EEXIST':
      return new JournalError(`${path}: a file of that name is already there, and a run record is never overwritten; choose another name.`, code, 'exists');
    case 'ENOENT':
      return new JournalError(`${path}: the folder ${dirname(path)} does not exist; create it or choose another place.`, code, 'noFolder');
    case 'EACCES':
    case 'EPERM':
      return new JournalError(`${path}: no permission to create a file there; choose a folder you can write to.`, code, 'noPermission');
    case 'EISDIR':
      return new JournalError(`${path}: that is a folder; give a file name for the record.`, code, 'isFolder');
    case 'EROFS':
      return new JournalError(`${path}: the disk is read-only; choose a folder on a disk you can write to.`, code, 'readOnly');
    case 'ENOSPC':
    case 'EDQUOT':
      return new JournalError(`${path}: the disk is full, so the record could not be created; free space or choose another disk.`, code, 'diskFull');
    default:
      return new JournalError(`${path}: could not create the run record (${describe(err)}); check the folder, or choose another place.`, code, 'notCreated');
  }
}
