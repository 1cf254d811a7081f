/**
 * Reading a run record back: every line checked against the format (zod), readings
 * into flat arrays, events kept with their place among the readings.
 *
 * Recovery. A record whose writer was killed has no end line, and its last line may be
 * torn (cut mid-JSON, or followed by zero bytes the file system left after a power cut).
 * Such a last line is dropped and reported; every complete line before it is kept. A
 * damaged line anywhere else is not a crash artefact, so it is an error naming the file
 * and the line: the reader never guesses around damage in the middle of a run.
 */
import { readFileSync } from 'node:fs';
import { TextDecodingError, decodeUserText } from '../files/textDecoding';
import type { z } from 'zod';
import {
  RUN_RECORD_FORMAT,
  RUN_RECORD_VERSION,
  endSchema,
  eventSchema,
  headerSchema,
  readingLineSchema,
  type RecordEnd,
  type RecordHeader,
  type RunEvent,
} from './runRecordFormat';
import { recordTimeZero } from './recordTimeZero';

/** A record that cannot be read, with the file and line in its one-sentence message. */
export class RunRecordError extends Error {
  override readonly name = 'RunRecordError';
  constructor(
    message: string,
    readonly path: string,
    readonly line: number | null,
  ) {
    super(message);
  }
}

/** Readings as columns. Absent optional values are NaN in their column. */
export interface RecordedReadings {
  count: number;
  t_s: Float64Array;
  absorbance: Float64Array;
  h_ms: Float64Array;
  flags: Uint32Array;
  cellT_C: Float64Array;
  sampleCounts: Float64Array;
  darkCounts: Float64Array;
}

export interface PlacedEvent {
  /** Number of readings recorded before this event. */
  index: number;
  /** 1-based line in the file. */
  line: number;
  event: RunEvent;
}

export interface RecordRecovery {
  /** True when the record ends with its end line and nothing was dropped. */
  clean: boolean;
  /** The dropped torn last line, if any. */
  tornLine: { line: number; chars: number } | null;
  /** Zero bytes found after the last line (left by a power cut) and ignored. */
  zeroBytes: number;
  /** What the user should be told, or null for a clean record. */
  message: string | null;
}

export interface RunRecord {
  path: string;
  header: RecordHeader;
  readings: RecordedReadings;
  events: PlacedEvent[];
  end: RecordEnd | null;
  recovery: RecordRecovery;
  lines: number;
}

export function readRunRecord(path: string): RunRecord {
  let text: string;
  try {
    text = decodeUserText(readFileSync(path), path).text;
  } catch (err) {
    if (err instanceof TextDecodingError) throw new RunRecordError(err.message, path, null);
    const code = (err as { code?: string }).code;
    const why = code === 'ENOENT' ? 'no such file' : code === 'EACCES' ? 'no permission to read it' : String((err as Error).message ?? err);
    throw new RunRecordError(`${path}: cannot open the run record (${why}); check the name.`, path, null);
  }
  return parseRunRecord(text, path);
}

/** Parses the text of a record; `path` is only used in messages. */
export function parseRunRecord(text: string, path: string): RunRecord {
  // Zero bytes at the end are what a file system leaves when the size reached the disk and the data did not.
  // An editor may have saved the record with a byte-order mark: it is not part of the header line.
  let body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  let zeroTail = 0;
  while (body.length > 0 && body.charCodeAt(body.length - 1) === 0) {
    body = body.slice(0, -1);
    zeroTail++;
  }
  const columns = new ReadingColumns();
  const events: PlacedEvent[] = [];
  let header: RecordHeader | null = null;
  let end: RecordEnd | null = null;
  let tornLine: { line: number; chars: number } | null = null;
  let lineNo = 0;
  let start = 0;
  while (start < body.length) {
    let stop = body.indexOf('\n', start);
    const terminated = stop >= 0;
    if (!terminated) stop = body.length;
    const raw = body.slice(start, stop);
    start = stop + 1;
    lineNo++;
    const line = raw.endsWith('\r') ? raw.slice(0, -1) : raw;
    if (line.trim() === '') continue;
    // The last line without its line end was being written when the writer stopped.
    const last = !terminated;
    try {
      if (header === null) {
        header = parseHeader(line, path, lineNo);
        continue;
      }
      const value = parseLine(line, path, lineNo);
      if (end !== null) throw damaged(path, lineNo, 'a line after the end line');
      if (Array.isArray(value)) {
        const r = readingLineSchema.safeParse(value);
        if (!r.success) throw damaged(path, lineNo, `not a valid reading (${firstIssue(r.error)})`);
        const previous = columns.count > 0 ? columns.t_s[columns.count - 1]! : -Infinity;
        if (r.data[0] < previous) throw damaged(path, lineNo, `time goes backwards (${r.data[0]} s after ${previous} s)`);
        columns.push(r.data);
        continue;
      }
      const kind = (value as { ev?: unknown } | null)?.ev;
      if (kind === 'end') {
        const e = endSchema.safeParse(value);
        if (!e.success) throw damaged(path, lineNo, `not a valid end line (${firstIssue(e.error)})`);
        end = e.data;
        continue;
      }
      const e = eventSchema.safeParse(value);
      if (!e.success) {
        const what = typeof kind === 'string' ? `not a valid "${kind}" event` : 'neither a reading nor an event';
        throw damaged(path, lineNo, `${what} (${firstIssue(e.error)})`);
      }
      events.push({ index: columns.count, line: lineNo, event: e.data });
    } catch (err) {
      // Only the unterminated last line may be torn; damage anywhere else is reported as it is.
      if (!last || !(err instanceof RunRecordError)) throw err;
      tornLine = { line: lineNo, chars: line.length };
      break;
    }
  }
  if (header === null) {
    throw new RunRecordError(
      `${path}: no header line, so this is not a run record or its recording stopped before the first line was saved; nothing can be recovered from it.`,
      path,
      tornLine ? tornLine.line : null,
    );
  }
  const readings = columns.finish();
  const clean = end !== null && tornLine === null && zeroTail === 0;
  let message: string | null = null;
  if (!clean) {
    const parts = [
      end === null
        ? `${path}: the record has no end line (the recording was cut off); recovered ${readings.count} readings`
        : `${path}: recovered ${readings.count} readings`,
    ];
    if (tornLine) parts.push(`dropped the torn last line ${tornLine.line} (${tornLine.chars} characters)`);
    if (zeroTail > 0) parts.push(`ignored ${zeroTail} zero bytes at the end`);
    message = parts.join(', ') + '.';
  }
  return { path, header, readings, events, end, recovery: { clean, tornLine, zeroBytes: zeroTail, message }, lines: lineNo };
}

function parseLine(line: string, path: string, lineNo: number): unknown {
  try {
    return JSON.parse(line);
  } catch {
    throw damaged(path, lineNo, 'not valid JSON');
  }
}

function parseHeader(line: string, path: string, lineNo: number): RecordHeader {
  let value: unknown = null;
  try {
    value = JSON.parse(line);
  } catch {
    // Not JSON at all: the message below says what the file is not.
  }
  const v = value as { format?: unknown; version?: unknown } | null;
  if (typeof v !== 'object' || v === null || v.format !== RUN_RECORD_FORMAT) {
    throw new RunRecordError(`${path} line ${lineNo}: not a run record (the first line is not a "${RUN_RECORD_FORMAT}" header); check the file.`, path, lineNo);
  }
  if (typeof v.version === 'number' && v.version > RUN_RECORD_VERSION) {
    throw new RunRecordError(
      `${path} line ${lineNo}: written in run-record format version ${v.version}, newer than this Rateline reads (${RUN_RECORD_VERSION}); update Rateline.`,
      path,
      lineNo,
    );
  }
  const h = headerSchema.safeParse(value);
  if (!h.success) throw damaged(path, lineNo, `the header is not valid (${firstIssue(h.error)})`);
  return h.data;
}

function damaged(path: string, lineNo: number, what: string): RunRecordError {
  return new RunRecordError(
    `${path} line ${lineNo}: ${what}; the record is damaged there: keep a copy, then repair or remove that line.`,
    path,
    lineNo,
  );
}

function firstIssue(error: z.ZodError): string {
  const issue = error.issues[0];
  if (!issue) return 'unknown problem';
  const where = issue.path.length > 0 ? `${issue.path.join('.')}: ` : '';
  return `${where}${issue.message}`;
}

/** Columns that grow geometrically, so a million readings cost a few dozen copies, not a million objects. */
class ReadingColumns {
  count = 0;
  t_s = new Float64Array(1024);
  absorbance = new Float64Array(1024);
  h_ms = new Float64Array(1024);
  flags = new Uint32Array(1024);
  cellT_C = new Float64Array(1024);
  sampleCounts = new Float64Array(1024);
  darkCounts = new Float64Array(1024);

  push(r: readonly (number | null)[]): void {
    if (this.count === this.t_s.length) this.grow();
    const i = this.count++;
    this.t_s[i] = r[0] as number;
    this.absorbance[i] = r[1] as number;
    this.h_ms[i] = r[2] as number;
    this.flags[i] = (r[3] as number | undefined) ?? 0;
    this.cellT_C[i] = r[4] ?? NaN;
    this.sampleCounts[i] = r[5] ?? NaN;
    this.darkCounts[i] = r[6] ?? NaN;
  }

  finish(): RecordedReadings {
    const n = this.count;
    return {
      count: n,
      t_s: this.t_s.slice(0, n),
      absorbance: this.absorbance.slice(0, n),
      h_ms: this.h_ms.slice(0, n),
      flags: this.flags.slice(0, n),
      cellT_C: this.cellT_C.slice(0, n),
      sampleCounts: this.sampleCounts.slice(0, n),
      darkCounts: this.darkCounts.slice(0, n),
    };
  }

  private grow(): void {
    const size = this.t_s.length * 2;
    const f64 = (a: Float64Array): Float64Array<ArrayBuffer> => {
      const b = new Float64Array(size);
      b.set(a);
      return b;
    };
    this.t_s = f64(this.t_s);
    this.absorbance = f64(this.absorbance);
    this.h_ms = f64(this.h_ms);
    const flags = new Uint32Array(size);
    flags.set(this.flags);
    this.flags = flags;
    this.cellT_C = f64(this.cellT_C);
    this.sampleCounts = f64(this.sampleCounts);
    this.darkCounts = f64(this.darkCounts);
  }
}

/**
 * The readings to analyse: readings from time zero (recordTimeZero.ts: the last `mixed`
 * event from version 2 on, the first in version 1) on, with time measured from it.
 * Readings before mixing (the blank, the baseline) are kept in the record but are not
 * part of the kinetics. Without a time zero, the device times are used as they are.
 */
export function analysisReadings(record: RunRecord): { time_s: Float64Array; absorbance: Float64Array; timeZero_s: number | null; firstIndex: number } {
  const zero = recordTimeZero(record.header, record.events);
  const r = record.readings;
  if (zero.from === 'none') return { time_s: r.t_s.slice(), absorbance: r.absorbance.slice(), timeZero_s: null, firstIndex: 0 };
  const t0 = zero.deviceTime_s ?? (zero.index < r.count ? r.t_s[zero.index]! : 0);
  // Readings before time zero are skipped by time, not by position: a corrected (later)
  // Mixed may name a time before readings that were recorded ahead of it.
  let first = 0;
  while (first < r.count && r.t_s[first]! < t0) first++;
  const time_s = new Float64Array(r.count - first);
  for (let i = first; i < r.count; i++) time_s[i - first] = r.t_s[i]! - t0;
  return { time_s, absorbance: r.absorbance.slice(first), timeZero_s: t0, firstIndex: first };
}
