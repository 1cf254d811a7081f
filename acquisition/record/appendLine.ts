/**
 * One JSON line appended durably to a sidecar file beside a run record (notes, training
 * attempts): a short write is finished, a refused one is taken back, so no torn line sits
 * before the next one, and the line is fsynced before the call returns.
 */
import { closeSync, fstatSync, fsyncSync, ftruncateSync, openSync, writeSync } from 'node:fs';
import { JournalError } from './journalFs';
import { writeProblem } from './writeFailure';

/** `what` names the line in the one-sentence error ("the note", "the attempt"). */
export function appendJsonLine(path: string, value: unknown, what: string): void {
  const fd = openSync(path, 'a');
  const bytes = Buffer.from(JSON.stringify(value) + '\n', 'utf8');
  const before = fstatSync(fd).size;
  try {
    for (let done = 0; done < bytes.length; ) {
      const n = writeSync(fd, bytes, done, bytes.length - done);
      if (!(n > 0)) throw Object.assign(new Error('the disk accepted no more bytes'), { code: 'ENOSPC' });
      done += n;
    }
    fsyncSync(fd);
  } catch (err) {
    try {
      ftruncateSync(fd, before);
    } catch {
      // A reader skips a torn last line.
    }
    const { problem, why } = writeProblem(err);
    throw new JournalError(`${path}: ${what} could not be saved (${why}); the lines saved before it are kept; free space or check the disk, then try again.`, null, problem);
  } finally {
    closeSync(fd);
  }
}
