/** What the recorder is given, what it reports while it runs, and what it says when it stops. */
import type { AnalysisResult, AnalyzerOptions, RunAnalyzerLike } from '../../kinetics/analysisTypes';
import type { Journal } from './journal';
import type { DeviceIdentity, RejectCounts, ReadingSource, SourceStatus } from '../sources/sourceTypes';

export type StopReason = 'user' | 'signal' | 'limit' | 'advice' | 'sourceEnded' | 'error';

/**
 * Where time zero is: at the first reading (the headless default: the device is started
 * once the reagents are mixed), at a given device time (an instrument whose clock starts
 * at mixing), at the device time the instrument itself started the reaction (the
 * simulator; the header's `reactionStart_s` says so and no `mixed` line is written), or
 * when `markMixed()` is called. A later `markMixed()` moves time zero in every case.
 */
export type TimeZero = 'firstReading' | { deviceTime_s: number } | { reactionStart_s: number } | 'manual';

export interface RunSessionOptions {
  source: ReadingSource;
  journal: Journal;
  analyzer: RunAnalyzerLike;
  /** Makes the analyzer afresh for a new time zero or fit window; `analyzerOptions` are the options `analyzer` was made with. */
  createAnalyzer?: (options: AnalyzerOptions) => RunAnalyzerLike;
  analyzerOptions?: AnalyzerOptions;
  /** Warn when the first reading's device time is well above 0 (a serial instrument already part-way through its run). */
  warnLateStart?: boolean;
  timeZero?: TimeZero;
  /** The wavelength written in the record's header, so that a device reading at another is recorded as a change. */
  wavelength_nm?: number | null;
  /** The device identity written in the header, if known, so that only a different one is recorded as a change. */
  identity?: DeviceIdentity | null;
  /** Stop after this many seconds of run time (from time zero). */
  maxRunSeconds?: number;
  /** Stop when the analyzer's advice says the run has gone far enough and settled. */
  untilAdvice?: boolean;
  /** How long to wait for a counts device's blank before giving up. Default 60 s. */
  blankTimeout_ms?: number;
  now_ms?: () => number;
  wallClock?: () => Date;
}

export interface RunSessionProgress {
  phase: 'opening' | 'blank' | 'waitingForTimeZero' | 'recording' | 'stopped';
  /** Readings handed to the journal, and the device time of the last. */
  journalled: number;
  lastDeviceTime_s: number | null;
  /** Readings known to be on disk. */
  synced: number;
  /** Readings given to the analyzer (from time zero on) and the run time of the last. */
  analysed: number;
  runTime_s: number | null;
  status: SourceStatus | null;
  identity: DeviceIdentity | null;
  rejected: RejectCounts;
  gaps: number;
  warnings: number;
  /** The latest warning if it came in the last 30 s (host time), else null. */
  lastWarning: string | null;
}

export interface RunSessionOutcome {
  reason: StopReason;
  detail: string;
  /** Set when the record could not be written to the end: the one-line message. */
  error: string | null;
  /** Readings in the record (after a failed write: those the file holds, every one complete). */
  readings: number;
  /** The analysis at the stop, or null if the analyzer itself failed (the record is unaffected). */
  result: AnalysisResult | null;
}
