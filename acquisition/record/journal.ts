/**
 * The journal: writes a run record line by line, so that nothing measured is lost
 * when the program or the computer stops without warning.
 *
 * Durability policy. A line handed to the journal waits in a small buffer; the buffer
 * is written to the operating system when it passes 64 KiB, and written and fsynced
 * when its oldest unsynced line is `commit_ms` old (250 ms by default), checked on every
 * line and by an idle timer. So a killed process loses at most the last quarter second
 * or so, and a power cut at most about half a second: "fsync at least once a second".
 * Batching is what makes 50,000 readings a second cheap: one write per 64 KiB, a few
 * fsyncs per second, whatever the reading rate.
 *
 * Creation is atomic and never overwrites: the file is opened with O_CREAT | O_EXCL
 * ('wx'), so an existing file makes creation fail before a byte is written.
 *
 * A failing disk never leaves a damaged record. A write may be cut short (a full disk
 * takes what fits, then refuses), so the rest is written until all of it is in or the
 * disk refuses; on a refusal the line cut in half is taken back (the file is truncated
 * to its last complete line), what is there is fsynced, nothing more is ever appended,
 * and the error says exactly how many readings the file holds. The file then reads as a
 * record cut off by a crash: every complete line kept, no end line.
 */
import { dirname } from 'node:path';
import { performance } from 'node:perf_hooks';
import { JournalError, creationError, defaultFs, type JournalFs, type RecordOnDisk } from './journalFs';
import { UNLINKED_CODE, completeLines, writeFailure } from './writeFailure';
import { endSchema, eventSchema, headerSchema, isoWithLocalOffset, type RecordHeader, type RunEvent } from './runRecordFormat';
import type { Reading } from '../sources/sourceTypes';

export { JournalError, type JournalFs, type JournalProblem, type RecordOnDisk } from './journalFs';

export interface JournalOptions {
  fs?: JournalFs;
  /** Host monotonic clock in ms (performance.now() by default); readings' hostTime_ms must be on it. */
  now_ms?: () => number;
  /** Oldest unsynced line's age at which the buffer is written and fsynced. Default 250 ms. */
  commit_ms?: number;
  /** Buffer size at which it is written (without fsync). Default 64 KiB. */
  maxBufferChars?: number;
  /** Run an idle timer so that a quiet feed is still committed on time. Default true; tests drive tick(). */
  timer?: boolean;
  /** Wall clock for the end line. */
  wallClock?: () => Date;
}

export interface JournalProgress {
  /** Reading lines handed to the journal, and the device time of the last. */
  readings: number;
  lastDeviceTime_s: number | null;
  /**
   * Readings known to be on disk (fsynced), and the device time of the last of them. After
   * a failed write, what the file holds (see JournalError.onDisk).
   */
  syncedReadings: number;
  syncedDeviceTime_s: number | null;
  lines: number;
  writes: number;
  syncs: number;
  closed: boolean;
}

export class Journal {
  private pending = '';
  private pendingSince_ms: number | null = null;
  private unsyncedSince_ms: number | null = null;
  private readingCount = 0;
  private lastT: number | null = null;
  private pendingReadings = 0;
  private pendingLastT: number | null = null;
  private writtenReadings = 0;
  private writtenLastT: number | null = null;
  private syncedReadings = 0;
  private syncedLastT: number | null = null;
  /** Bytes in the file, every one of them in a complete line. */
  private fileBytes = 0;
  private lineCount = 0;
  private writeCount = 0;
  private lastWrite_ms = -Infinity;
  private syncCount = 0;
  private closed = false;
  private failure: JournalError | null = null;
  private timer: ReturnType<typeof setInterval> | null = null;
  private readonly fs: JournalFs;
  private readonly now: () => number;
  private readonly commit_ms: number;
  private readonly maxBufferChars: number;
  private readonly wallClock: () => Date;
  /** Host time (ms, on `now`) at which the record was opened: h = 0. */
  readonly origin_ms: number;

  private constructor(
    readonly path: string,
    private readonly fd: number,
    options: JournalOptions,
  ) {
    this.fs = options.fs ?? defaultFs;
    this.now = options.now_ms ?? (() => performance.now());
    this.commit_ms = options.commit_ms ?? 250;
    this.maxBufferChars = options.maxBufferChars ?? 64 * 1024;
    this.wallClock = options.wallClock ?? (() => new Date());
    this.origin_ms = this.now();
    if (options.timer ?? true) {
      // Poll at a fraction of the commit age so the worst case stays well under a second.
      this.timer = setInterval(() => this.tick(), Math.max(10, Math.floor(this.commit_ms / 3)));
      this.timer.unref?.();
    }
  }

  /** Creates the record (failing if the file exists) and writes and fsyncs its header. */
  static create(path: string, header: RecordHeader, options: JournalOptions = {}): Journal {
    const checked = headerSchema.safeParse(header);
    if (!checked.success) {
      const issue = checked.error.issues[0];
      throw new JournalError(`${path}: the run's metadata are not valid (${issue?.path.join('.')}: ${issue?.message}); correct them and start again.`, null, 'invalidHeader');
    }
    const fs = options.fs ?? defaultFs;
    let fd: number;
    try {
      fd = fs.openSync(path, 'wx', 0o644);
    } catch (err) {
      throw creationError(path, err);
    }
    const journal = new Journal(path, fd, options);
    try {
      journal.append(JSON.stringify(checked.data), false);
      journal.commit();
    } catch (err) {
      // Not even the header is in: the file holds nothing, so it goes, leaving the name free for the retry.
      journal.abandon();
      try {
        fs.unlinkSync(path);
      } catch {
        // A file with no complete line reads as "no header line"; nothing measured is in it.
      }
      throw creationError(path, (err as JournalError).cause ?? err);
    }
    fs.syncDirectory?.(dirname(path));
    return journal;
  }

  /** Host time of a reading or event relative to the record's opening, in whole ms. */
  hostOffset_ms(hostTime_ms: number): number {
    return Math.round(hostTime_ms - this.origin_ms);
  }

  /** Appends one reading. Non-finite values never reach the file (the sources promise they never come). */
  reading(r: Reading): void {
    const t = r.deviceTime_s;
    const a = r.absorbance;
    if (!Number.isFinite(t) || !Number.isFinite(a)) {
      this.event({ ev: 'warning', h: this.hostOffset_ms(this.now()), t: null, message: 'a reading with a non-finite time or absorbance was left out of the record' });
      return;
    }
    if (this.lastT !== null && t < this.lastT) {
      // Readers refuse time going backwards, so such a reading would make the whole record unreadable.
      this.event({ ev: 'warning', h: this.hostOffset_ms(r.hostTime_ms), t, message: `a reading at ${t} s came after one at ${this.lastT} s and was left out of the record` });
      return;
    }
    let line = '[' + t + ',' + a + ',' + this.hostOffset_ms(r.hostTime_ms);
    const temp = r.cellTemperature_C;
    const sample = r.sampleCounts;
    const dark = r.darkCounts;
    const hasTemp = temp !== null && Number.isFinite(temp);
    const hasSample = sample !== undefined && Number.isFinite(sample);
    const hasDark = dark !== undefined && Number.isFinite(dark);
    if (r.flags !== 0 || hasTemp || hasSample || hasDark) {
      line += ',' + (r.flags >>> 0);
      if (hasTemp || hasSample || hasDark) {
        line += ',' + (hasTemp ? temp : 'null');
        if (hasSample || hasDark) {
          line += ',' + (hasSample ? sample : 'null');
          if (hasDark) line += ',' + dark;
        }
      }
    }
    this.append(line + ']', true, t);
  }

  /** Appends one event, checked against the format first so the reader never refuses what we wrote. */
  event(e: RunEvent): void {
    const checked = eventSchema.safeParse(e);
    if (!checked.success) {
      const issue = checked.error.issues[0];
      throw new Error(`journal: event "${e.ev}" does not match the record format (${issue?.path.join('.')}: ${issue?.message})`);
    }
    this.append(JSON.stringify(checked.data), false);
  }

  /** The time-driven part of the policy; the idle timer calls it, tests may too. */
  tick(): void {
    if (this.closed || this.failure) return;
    const now = this.now();
    if (this.unsyncedSince_ms !== null && now - this.unsyncedSince_ms >= this.commit_ms) this.commit();
  }

  /** Writes the buffer and fsyncs: everything handed over so far is on disk afterwards. */
  commit(): void {
    this.writePending();
    if (this.unsyncedSince_ms === null) return;
    try {
      this.fs.fsyncSync(this.fd);
    } catch (err) {
      // The lines are in the file, but the disk did not confirm them: only the last good sync is sure.
      throw this.fail(err, { readings: this.writtenReadings, lastDeviceTime_s: this.writtenLastT, synced: false });
    }
    this.syncCount++;
    this.unsyncedSince_ms = null;
    this.syncedReadings = this.writtenReadings;
    this.syncedLastT = this.writtenLastT;
    // Deleting the record (or its folder) does not make writes fail: they go on into a file
    // no one can open again. So at each commit, the file must still have its name.
    if (this.fs.linkCount && this.linkCountSafe() === 0) {
      throw this.fail(Object.assign(new Error('the record file has no name left'), { code: UNLINKED_CODE }), { readings: 0, lastDeviceTime_s: null, synced: true });
    }
  }

  private linkCountSafe(): number | null {
    try {
      return this.fs.linkCount!(this.fd);
    } catch {
      return null; // a file system that cannot say: the writes and fsyncs above are the check
    }
  }

  /**
   * Hands the buffered lines to the operating system, without fsync: from then on a killed
   * process cannot lose them (a power cut still can, until the next commit). The recorder
   * calls it before each step of analysis, which may hold the thread for a while. At most
   * one write per millisecond: a live feed (readings at least 1 ms apart) gets every
   * reading written before it is analysed, a replay at full speed still writes in batches.
   */
  release(): void {
    if (this.failure || this.closed || this.pending.length === 0) return;
    if (this.now() - this.lastWrite_ms >= 1) this.writePending();
  }

  /** Writes the end line, commits and closes. Safe to call twice. */
  close(rejected: Record<string, number> = {}): void {
    if (this.closed) return;
    this.stopTimer();
    if (!this.failure) {
      const end = endSchema.parse({
        ev: 'end',
        h: this.hostOffset_ms(this.now()),
        wall: isoWithLocalOffset(this.wallClock()),
        readings: this.readingCount,
        rejected,
      });
      this.append(JSON.stringify(end), false);
      this.commit();
    }
    this.closed = true;
    try {
      this.fs.closeSync(this.fd);
    } catch {
      // The data are already synced; a failing close cannot lose them.
    }
  }

  /** Closes the file without an end line (used only when a write has already failed). */
  abandon(): void {
    if (this.closed) return;
    this.stopTimer();
    this.closed = true;
    try {
      this.fs.closeSync(this.fd);
    } catch {
      // Nothing more can be saved.
    }
  }

  progress(): JournalProgress {
    return {
      readings: this.readingCount,
      lastDeviceTime_s: this.lastT,
      syncedReadings: this.syncedReadings,
      syncedDeviceTime_s: this.syncedLastT,
      lines: this.lineCount,
      writes: this.writeCount,
      syncs: this.syncCount,
      closed: this.closed,
    };
  }

  get isClosed(): boolean {
    return this.closed;
  }

  private append(line: string, isReading: boolean, t?: number): void {
    if (this.failure) throw this.failure;
    if (this.closed) throw new JournalError(`${this.path}: the record is already closed; nothing more can be added to it.`, null, 'closed');
    const now = this.now();
    this.pending += line + '\n';
    this.lineCount++;
    if (this.pendingSince_ms === null) this.pendingSince_ms = now;
    if (this.unsyncedSince_ms === null) this.unsyncedSince_ms = now;
    if (isReading) {
      this.readingCount++;
      this.pendingReadings++;
      this.lastT = t ?? null;
      this.pendingLastT = t ?? null;
    }
    if (now - this.unsyncedSince_ms >= this.commit_ms) this.commit();
    else if (this.pending.length >= this.maxBufferChars) this.writePending();
  }

  private writePending(): void {
    if (this.pending.length === 0) return;
    const bytes = Buffer.from(this.pending, 'utf8');
    let done = 0;
    try {
      // A full disk writes what fits and says so only in the count; the rest is written again until the disk refuses.
      while (done < bytes.length) {
        const n = this.fs.writeSync(this.fd, bytes, done, bytes.length - done);
        if (!(n > 0)) throw Object.assign(new Error('the disk accepted no more bytes'), { code: 'ENOSPC' });
        done += n;
      }
    } catch (err) {
      throw this.fail(err, this.takeBackPartial(bytes, done));
    }
    this.writeCount++;
    this.lastWrite_ms = this.now();
    this.fileBytes += bytes.length;
    this.pending = '';
    this.pendingSince_ms = null;
    this.writtenReadings += this.pendingReadings;
    if (this.pendingReadings > 0) this.writtenLastT = this.pendingLastT;
    this.pendingReadings = 0;
  }

  /**
   * After a write that stopped at byte `done` of `bytes`: cut the file back to its last
   * complete line and fsync it, and say what it then holds. Every step is best effort: a
   * torn last line that cannot be cut is still dropped by the reader as a crash artefact.
   */
  private takeBackPartial(bytes: Buffer, done: number): RecordOnDisk {
    const complete = completeLines(bytes, done);
    let synced = true;
    try {
      if (complete.bytes < done) this.fs.ftruncateSync(this.fd, this.fileBytes + complete.bytes);
      this.fs.fsyncSync(this.fd);
    } catch {
      synced = false;
    }
    this.fileBytes += complete.bytes;
    return {
      readings: this.writtenReadings + complete.readings,
      lastDeviceTime_s: complete.readings > 0 ? complete.lastDeviceTime_s : this.writtenLastT,
      synced,
    };
  }

  private fail(err: unknown, onDisk: RecordOnDisk): JournalError {
    this.failure = writeFailure(this.path, err, onDisk, this.syncedReadings);
    if (onDisk.synced) {
      this.syncedReadings = onDisk.readings;
      this.syncedLastT = onDisk.lastDeviceTime_s;
    }
    this.stopTimer();
    return this.failure;
  }

  private stopTimer(): void {
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
  }
}

