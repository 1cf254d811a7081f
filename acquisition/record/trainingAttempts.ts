/**
 * Training attempts on a recorded run, kept beside the record and never inside it
 * (run.jsonl → run.attempts.jsonl): JSON Lines, append-only, one attempt a line, with the
 * score it earned. A class shares one file per record; a damaged line (an editor, a torn
 * write) is skipped and counted so that it never hides the attempts around it.
 */
import { existsSync, readFileSync } from 'node:fs';
import { z } from 'zod';
import { appendJsonLine } from './appendLine';
import { isoWithLocalOffset } from './runRecordFormat';
import { RunRecordError } from './journalReader';

const num = z.number();
const nullableNum = num.nullable();
const order = z.enum(['zero', 'first', 'second']);
const verdictOrder = z.enum(['zero', 'first', 'second', 'fractional', 'noSimpleLaw', 'undecided']);
const model = z.enum(['zero', 'first', 'second', 'nth']);

const stopPointSchema = z.object({
  time_s: num, model, k: nullableNum, kUnit: z.string(), kStdErr: nullableNum, kCI95: z.tuple([num, num]).nullable(),
  halfLivesElapsed: nullableNum, verdictOrder, orderDecided: z.boolean(),
});

export const trainingScoreSchema = z.object({
  stopped: z.boolean(),
  trainee: stopPointSchema,
  whole: stopPointSchema,
  adviceStop_s: nullableNum,
  minutesFromAdvice: nullableNum,
  kOffInStdErr: nullableNum,
  kRelativeOff: nullableNum,
  statedOrder: order.nullable(),
  orderRight: z.boolean().nullable(),
  summary: z.string(),
});

export const trainingAttemptSchema = z.object({
  /** When the attempt was scored, ISO 8601 with the local offset. */
  wall: z.string().min(1),
  trainee: z.string().nullable(),
  /** The stop asked for, s of data time; null for "did not stop". */
  stopAt_s: nullableNum,
  statedOrder: order.nullable(),
  score: trainingScoreSchema,
});
export type TrainingAttempt = z.infer<typeof trainingAttemptSchema>;

export function attemptsPath(recordPath: string): string {
  return recordPath.endsWith('.jsonl') ? recordPath.slice(0, -'.jsonl'.length) + '.attempts.jsonl' : recordPath + '.attempts.jsonl';
}

/** Appends one attempt beside the record (creating the file if needed) and fsyncs it. */
export function appendAttempt(recordPath: string, attempt: Omit<TrainingAttempt, 'wall'>, now: Date = new Date()): TrainingAttempt {
  if (!existsSync(recordPath)) {
    throw new RunRecordError(`${recordPath}: no such run record, so no attempt can be kept beside it; check the name.`, recordPath, null);
  }
  const entry = trainingAttemptSchema.parse({ wall: isoWithLocalOffset(now), ...attempt });
  appendJsonLine(attemptsPath(recordPath), entry, 'the attempt');
  return entry;
}

export interface AttemptsRead {
  attempts: TrainingAttempt[];
  /** Lines that were not valid attempts (1-based line numbers), skipped. */
  damagedLines: number[];
  path: string;
}

/** The attempts beside a record, oldest first; none when there is no file. */
export function readAttempts(recordPath: string): AttemptsRead {
  const path = attemptsPath(recordPath);
  const read: AttemptsRead = { attempts: [], damagedLines: [], path };
  if (!existsSync(path)) return read;
  readFileSync(path, 'utf8').split('\n').forEach((line, i) => {
    if (line.trim() === '') return;
    let value: unknown;
    try {
      value = JSON.parse(line);
    } catch {
      read.damagedLines.push(i + 1);
      return;
    }
    const parsed = trainingAttemptSchema.safeParse(value);
    if (parsed.success) read.attempts.push(parsed.data);
    else read.damagedLines.push(i + 1);
  });
  return read;
}
