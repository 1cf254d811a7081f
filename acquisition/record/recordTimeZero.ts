/**
 * The one time-zero rule for every reader of a run record (the screen's replay, analyze,
 * export, combine): from version 2 on, the LAST `mixed` event sets time zero (a second
 * press of Mixed corrects the first); a version-1 record keeps the rule it was written
 * under, the FIRST `mixed` event. Without a `mixed` event, the header's
 * `reactionStart_s` (an instrument that starts the reaction itself) is time zero, and
 * without that the first reading (version 2; the bench's run clock starts there too)
 * or the device times as they are (version 1).
 */
import type { RecordHeader, RunEvent } from './runRecordFormat';

/** What the reader needs of a record's events: the event and how many readings came before it. */
export interface EventAtIndex {
  index: number;
  event: RunEvent;
}

export interface RecordTimeZero {
  /** Device time of time zero, or null: the reading at `index` (firstReading), or none at all (device times are run times). */
  deviceTime_s: number | null;
  /** Readings recorded before the deciding `mixed` event (0 otherwise). */
  index: number;
  /** Where time zero came from. */
  from: 'mixed' | 'reactionStart' | 'firstReading' | 'none';
}

export function recordTimeZero(header: Pick<RecordHeader, 'version' | 'reactionStart_s'>, events: readonly EventAtIndex[]): RecordTimeZero {
  let mixed: EventAtIndex | null = null;
  for (const p of events) {
    if (p.event.ev !== 'mixed') continue;
    mixed = p;
    if (header.version === 1) break;
  }
  if (mixed) return { deviceTime_s: mixed.event.t, index: mixed.index, from: 'mixed' };
  const start = header.version >= 2 ? header.reactionStart_s ?? null : null;
  if (start !== null) return { deviceTime_s: start, index: 0, from: 'reactionStart' };
  if (header.version >= 2) return { deviceTime_s: null, index: 0, from: 'firstReading' };
  return { deviceTime_s: null, index: 0, from: 'none' };
}

export interface RecordedFitSettings {
  from_s: number | null;
  to_s: number | null;
  targetHalfLives: number;
  precision: number;
}

/** The fit settings in force at the stop (the last `fitSettings` event), or null when the record has none. */
export function recordFitSettings(events: readonly EventAtIndex[]): RecordedFitSettings | null {
  let found: RecordedFitSettings | null = null;
  for (const p of events) {
    const e = p.event;
    if (e.ev === 'fitSettings') found = { from_s: e.from_s, to_s: e.to_s, targetHalfLives: e.targetHalfLives, precision: e.precision };
  }
  return found;
}

export interface FitSettingsOverride {
  from_s?: number | undefined;
  to_s?: number | undefined;
  targetHalfLives?: number | undefined;
  precision?: number | undefined;
}

/**
 * The analyzer's window, target and precision for a recorded run: what the command line
 * gives, else what the run stopped with, else the analyzer's defaults (left out). The
 * one place readers (analyze, export, combine) combine the two.
 */
export function fitSettingsToApply(recorded: RecordedFitSettings | null, given: FitSettingsOverride = {}): FitSettingsOverride {
  const pick = (g: number | undefined, r: number | null | undefined): number | undefined => g ?? (r === null ? undefined : r);
  const out: FitSettingsOverride = {};
  const from_s = pick(given.from_s, recorded?.from_s);
  const to_s = pick(given.to_s, recorded?.to_s);
  const targetHalfLives = pick(given.targetHalfLives, recorded?.targetHalfLives);
  const precision = pick(given.precision, recorded?.precision);
  if (from_s !== undefined) out.from_s = from_s;
  if (to_s !== undefined) out.to_s = to_s;
  if (targetHalfLives !== undefined) out.targetHalfLives = targetHalfLives;
  if (precision !== undefined) out.precision = precision;
  return out;
}
