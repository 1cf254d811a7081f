/**
 * The journal's contact with the file system: the operations it needs (injectable, so
 * tests can count fsyncs and fill the disk), and the one-sentence errors for a user.
 */
import * as nodeFs from 'node:fs';
import { dirname } from 'node:path';

/** The file operations the journal needs; injected in tests to count syncs and fail writes. */
export interface JournalFs {
  openSync(path: string, flags: string, mode?: number): number;
  writeSync(fd: number, data: string): number;
  fsyncSync(fd: number): void;
  closeSync(fd: number): void;
  /** Make the new directory entry durable (best effort; not every system can). */
  syncDirectory?(dir: string): void;
}

export const defaultFs: JournalFs = {
  openSync: (p, f, m) => nodeFs.openSync(p, f, m),
  writeSync: (fd, data) => nodeFs.writeSync(fd, data),
  fsyncSync: (fd) => nodeFs.fsyncSync(fd),
  closeSync: (fd) => nodeFs.closeSync(fd),
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

/** A failure to create or write the record, in one sentence for the user. */
export class JournalError extends Error {
  override readonly name = 'JournalError';
  constructor(message: string, readonly code: string | null = null) {
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
      return new JournalError(`${path}: a file of that name is already there, and a run record is never overwritten; choose another name.`, code);
    case 'ENOENT':
      return new JournalError(`${path}: the folder ${dirname(path)} does not exist; create it or choose another place.`, code);
    case 'EACCES':
    case 'EPERM':
      return new JournalError(`${path}: no permission to create a file there; choose a folder you can write to.`, code);
    case 'EISDIR':
      return new JournalError(`${path}: that is a folder; give a file name for the record.`, code);
    default:
      return new JournalError(`${path}: could not create the run record (${describe(err)}).`, code);
  }
}
