/**
 * The run session: one source feeding the journal and the streaming analyzer, from the
 * blank to the closed record. Host-agnostic (no console, no signals, no Electron):
 * `rateline record` drives it; record lines come from recordLines.ts and the header from
 * recordHeader.ts, the one place for each.
 *
 * Order of a run: the source opens; a device that sends raw counts is asked for a blank
 * first (absorbance needs the blank reference I₀); then time zero (`mixed`) is written,
 * and from it on every reading goes to the journal and, with its time measured from
 * time zero, to the analyzer. Every reading is journalled before it is analysed, so a
 * fault in the analysis can never lose a measurement. Every reading is also kept, so a
 * later Mixed (the last one sets time zero) or a new fit window rebuilds the analyzer
 * over all of them. At the stop the analyzer refits over everything (`flush`), and the
 * fit settings in force go into the record, so `rateline analyze` of the record gives
 * the session's final numbers.
 */
import { performance } from 'node:perf_hooks';
import type { AnalysisResult, AnalyzerOptions, RunAnalyzerLike } from '../../kinetics/analysisTypes';
import { JournalError, type Journal } from './journal';
import { isoWithLocalOffset, type RunEvent } from './runRecordFormat';
import { DEFAULT_PRECISION } from '../../kinetics/runAnalyzer';
import { lateStartWarning, recordLineFor } from './recordLines';
import type { RunSessionOptions, RunSessionOutcome, RunSessionProgress, StopReason, TimeZero } from './runSessionTypes';
import type { DeviceIdentity, RejectCounts, Reading, ReadingSource, SourceEvent, SourceStatus } from '../sources/sourceTypes';
import { emptyRejectCounts } from '../sources/sourceStatus';
import { listenToSource } from '../sources/replaySource';

export type { RunSessionOptions, RunSessionOutcome, RunSessionProgress, StopReason, TimeZero } from './runSessionTypes';

export class RunSession {
  private readonly source: ReadingSource;
  private readonly journal: Journal;
  private analyzer: RunAnalyzerLike;
  /** Every reading analysed or waiting for time zero: device time and absorbance, for rebuilds. */
  private readonly kept: { t: number[]; a: number[] } = { t: [], a: [] };
  private analyzerOptions: AnalyzerOptions;
  private firstReadingSeen = false;
  private readonly now: () => number;
  private readonly wallClock: () => Date;
  private readonly opts: RunSessionOptions;
  private phase: RunSessionProgress['phase'] = 'opening';
  private timeZero_s: number | null = null;
  private lastT: number | null = null;
  private runTime_s: number | null = null;
  private wavelength_nm: number | null = null;
  private status: SourceStatus | null = null;
  private identity: DeviceIdentity | null = null;
  private readonly headerIdentity: DeviceIdentity | null;
  private rejected: RejectCounts = emptyRejectCounts();
  private rejectedDirtySince_ms: number | null = null;
  private gaps = 0;
  private warnings = 0;
  private lastWarning: string | null = null;
  private lastWarningAt_ms = -Infinity;
  private analysisFault: string | null = null;
  private unsubscribe: Array<() => void> = [];
  private blankTimer: ReturnType<typeof setTimeout> | null = null;
  private stopping: Promise<RunSessionOutcome> | null = null;
  private resolveFinished!: (o: RunSessionOutcome) => void;
  /** Resolves once the recording has stopped and the record is closed. */
  readonly finished: Promise<RunSessionOutcome>;

  constructor(options: RunSessionOptions) {
    this.opts = options;
    this.source = options.source;
    this.journal = options.journal;
    this.analyzer = options.analyzer;
    this.analyzerOptions = { ...(options.analyzerOptions ?? {}) };
    this.now = options.now_ms ?? (() => performance.now());
    this.wallClock = options.wallClock ?? (() => new Date());
    this.wavelength_nm = options.wavelength_nm ?? null;
    this.headerIdentity = options.identity ?? null;
    this.finished = new Promise((resolve) => (this.resolveFinished = resolve));
  }

  /** Subscribes and opens the source. A source that cannot open stops the recording with reason 'error'. */
  async start(): Promise<void> {
    this.unsubscribe.push(listenToSource(
      this.source,
      (e) => this.guard(() => this.onSourceEvent(e)),
      (e) => this.guard(() => this.onRecordedEvent(e)),
    ));
    try {
      await this.source.open();
    } catch (err) {
      void this.stop('error', err instanceof Error ? err.message : String(err));
      return;
    }
    if (this.phase === 'opening') this.phase = this.opts.timeZero === 'manual' ? 'waitingForTimeZero' : 'recording';
  }

  /**
   * Time zero now (the reagents were just mixed). A later press corrects an earlier one:
   * the last `mixed` sets time zero, and the analyzer is rebuilt over the kept readings.
   */
  markMixed(): void {
    if (this.stopping) return;
    this.guard(() => {
      this.setTimeZero(this.lastT ?? 0);
      this.rebuild();
    });
  }

  /** A new fit window (run time, s; null: open end): the analyzer is rebuilt over the kept readings. */
  setFitWindow(window: { from_s: number | null; to_s: number | null }): void {
    if (this.stopping) return;
    const { from_s: _f, to_s: _t, ...rest } = this.analyzerOptions;
    this.analyzerOptions = {
      ...rest, ...(window.from_s !== null ? { from_s: window.from_s } : {}), ...(window.to_s !== null ? { to_s: window.to_s } : {}),
    };
    this.guard(() => this.rebuild());
  }

  private rebuild(): void {
    const create = this.opts.createAnalyzer;
    if (!create) throw new Error('this run session was made without an analyzer factory, so it cannot refit with a new time zero or window');
    this.analyzer = create(this.analyzerOptions);
    this.analysisFault = null;
    for (let i = 0; i < this.kept.t.length; i++) this.analyseKept(this.kept.t[i]!, this.kept.a[i]!);
  }

  /** A note at this point of the run. */
  mark(note: string): void {
    if (this.stopping) return;
    this.guard(() => this.journal.event({ ev: 'mark', h: this.h(), t: this.lastT, note }));
  }

  /** Stops the recording: the source is closed, the stop and end lines written, the file closed. */
  stop(reason: StopReason, detail: string): Promise<RunSessionOutcome> {
    if (this.stopping) return this.stopping;
    this.stopping = this.doStop(reason, detail, null);
    return this.stopping;
  }

  result(): AnalysisResult {
    return this.analyzer.result();
  }

  progress(): RunSessionProgress {
    const j = this.journal.progress();
    return {
      phase: this.phase,
      journalled: j.readings,
      lastDeviceTime_s: j.lastDeviceTime_s,
      synced: j.syncedReadings,
      analysed: this.analyzer.count,
      runTime_s: this.runTime_s,
      status: this.status,
      identity: this.identity,
      rejected: { ...this.rejected },
      gaps: this.gaps,
      warnings: this.warnings,
      // A warning stays in the progress line for half a minute; the record keeps them all.
      lastWarning: this.now() - this.lastWarningAt_ms < 30_000 ? this.lastWarning : null,
    };
  }

  private async doStop(reason: StopReason, detail: string, error: string | null): Promise<RunSessionOutcome> {
    const wasRecording = this.phase;
    this.phase = 'stopped';
    if (this.blankTimer) clearTimeout(this.blankTimer);
    for (const u of this.unsubscribe) u();
    this.unsubscribe = [];
    try {
      await this.source.close();
    } catch {
      // The port may already be gone (that may be why we stop); the record is what matters.
    }
    let writeError = error;
    if (!this.journal.isClosed) {
      try {
        if (writeError === null) {
          this.flushRejected(true);
          const settled = finalResult(this.analyzer);
          if (settled) {
            this.journal.event({
              ev: 'fitSettings', h: this.h(), t: this.lastT,
              from_s: settled.window.from_s, to_s: settled.window.to_s, targetHalfLives: settled.targetHalfLives, precision: this.analyzerOptions.precision ?? DEFAULT_PRECISION,
            });
          }
          this.journal.event({ ev: 'stop', h: this.h(), t: this.lastT, reason, detail: detail || reason });
          this.journal.close(this.rejected);
        } else {
          this.journal.abandon();
        }
      } catch (err) {
        writeError = err instanceof Error ? err.message : String(err);
        this.journal.abandon();
      }
    }
    const outcome: RunSessionOutcome = {
      reason: writeError !== null && reason !== 'error' ? 'error' : reason,
      detail: wasRecording === 'blank' && reason === 'error' ? `during the blank: ${detail}` : detail,
      error: writeError,
      // After a failed write, the readings the file holds, not those handed to the journal.
      readings: writeError !== null ? this.journal.progress().syncedReadings : this.journal.progress().readings,
      result: safeResult(this.analyzer),
    };
    this.resolveFinished(outcome);
    return outcome;
  }

  /** A fault while writing stops the recording at once; nothing after it can be saved. */
  private guard(fn: () => void): void {
    if (this.stopping) return;
    try {
      fn();
    } catch (err) {
      const message = err instanceof Error ? err.message : String(err);
      const writeFailed = err instanceof JournalError;
      this.stopping = this.doStop('error', message, writeFailed ? message : null);
    }
  }

  private onSourceEvent(e: SourceEvent): void {
    if (e.type === 'reading') return this.onReading(e.reading);
    if (e.type === 'rejected') {
      this.rejected = { ...this.rejected, ...e.counts };
      this.rejectedDirtySince_ms ??= this.now();
      return this.flushRejected(false);
    }
    const line = recordLineFor(e, { h: this.h(), t: this.lastT, hostOffset_ms: (ms) => this.journal.hostOffset_ms(ms) });
    if (line) this.journal.event(line);
    if (e.type === 'status') this.onStatus(e.status);
    else if (e.type === 'gap') this.gaps++;
    else if (e.type === 'warning') this.count(e.message);
    else if (e.type === 'blank') {
      for (const w of e.blank.warnings) this.warn(w);
      if (this.blankTimer) clearTimeout(this.blankTimer);
      this.blankTimer = null;
      if (this.phase === 'blank') this.phase = this.opts.timeZero === 'manual' ? 'waitingForTimeZero' : 'recording';
    }
  }

  private onStatus(status: SourceStatus): void {
    this.status = status;
    if (status.kind === 'connected' && status.identity) this.onIdentity(status.identity);
    if (status.kind === 'ended') void this.stop('sourceEnded', status.detail);
  }

  private onIdentity(identity: DeviceIdentity): void {
    const first = this.identity === null;
    const known = this.identity ?? this.headerIdentity;
    if (!sameIdentity(known, identity)) this.journal.event({ ev: 'meta', h: this.h(), t: this.lastT, instrument: { identity } });
    this.identity = identity;
    if (first && identity.sends === 'counts' && this.timeZero_s === null) this.askForBlank();
  }

  private askForBlank(): void {
    this.phase = 'blank';
    const timeout_ms = this.opts.blankTimeout_ms ?? 60_000;
    this.blankTimer = setTimeout(() => {
      void this.stop('error', `the instrument sent no blank within ${Math.round(timeout_ms / 1000)} s; check the blank cuvette and the cable, then record again.`);
    }, timeout_ms);
    this.blankTimer.unref?.();
    void this.source.command({ type: 'takeBlank' }).then(
      (r) => {
        if (!r.ok) void this.stop('error', `the instrument refused the blank: ${r.error}`);
      },
      (err: unknown) => void this.stop('error', `the blank could not be asked for (${err instanceof Error ? err.message : String(err)})`),
    );
  }

  private onRecordedEvent(e: RunEvent): void {
    // Re-recording a replay: its time zero and notes carry over; the rest is the replay's own doing.
    if (e.ev === 'mixed' && this.timeZero_s === null && e.t !== null) this.setTimeZero(e.t);
    else if (e.ev === 'mark') this.journal.event({ ev: 'mark', h: this.h(), t: e.t, note: e.note });
    else if (e.ev === 'blank') this.journal.event({ ...e, h: this.h() });
  }

  private onReading(r: Reading): void {
    if (r.wavelength_nm !== null && r.wavelength_nm !== this.wavelength_nm) {
      // The header holds the wavelength the run was set up with; a different one from the device is a change.
      this.journal.event({ ev: 'meta', h: this.h(), t: r.deviceTime_s, run: { wavelength_nm: r.wavelength_nm } });
      this.wavelength_nm = r.wavelength_nm;
    }
    if (!this.firstReadingSeen) {
      this.firstReadingSeen = true;
      const late = this.opts.warnLateStart ? lateStartWarning(r.deviceTime_s) : null;
      if (late) this.warn(late);
    }
    const tz = this.timeZeroRule();
    // Readings during the blank (a device that sends them anyway) are kept, but the run has not begun.
    if (this.timeZero_s === null && tz !== 'manual' && this.phase !== 'blank') {
      if (tz === 'firstReading') this.setTimeZero(r.deviceTime_s);
      else if ('deviceTime_s' in tz) this.setTimeZero(tz.deviceTime_s);
      // The instrument started the reaction itself: the header's reactionStart_s says so, no `mixed` line.
      else this.timeZero_s = tz.reactionStart_s;
    }
    const before = this.journal.progress().readings;
    this.journal.reading(r);
    if (this.journal.progress().readings === before) return; // left out (time backwards): not analysed either
    this.lastT = r.deviceTime_s;
    this.flushRejected(false);
    if (this.phase === 'blank') return;
    this.kept.t.push(r.deviceTime_s);
    this.kept.a.push(r.absorbance);
    if (this.timeZero_s === null || r.deviceTime_s < this.timeZero_s) return;
    const t = r.deviceTime_s - this.timeZero_s;
    this.runTime_s = t;
    // A refit can hold the thread for longer than the commit interval; what is measured goes to the OS first.
    this.journal.release();
    this.analyse(t, r.absorbance);
    const max = this.opts.maxRunSeconds;
    if (max !== undefined && t >= max) {
      void this.stop('limit', `run time reached ${max} s`);
      return;
    }
    if (this.opts.untilAdvice && this.analysisFault === null) {
      const advice = safeResult(this.analyzer)?.stop;
      if (advice?.suggested) void this.stop('advice', advice.reason);
    }
  }

  /** A kept reading (device time) into a rebuilt analyzer, from time zero on. */
  private analyseKept(deviceTime_s: number, absorbance: number): void {
    if (this.timeZero_s === null || deviceTime_s < this.timeZero_s) return;
    this.analyse(deviceTime_s - this.timeZero_s, absorbance);
  }

  /** A fault of the analysis is a warning, not the end of the run: the readings keep going to the record. */
  private analyse(t: number, absorbance: number): void {
    if (this.analysisFault !== null) return;
    try {
      this.analyzer.add(t, absorbance);
    } catch (err) {
      this.analysisFault = err instanceof Error ? err.message : String(err);
      this.warn(`the analysis failed at ${t} s (${this.analysisFault}); recording goes on without it, and rateline analyze can read the record afterwards`);
    }
  }

  /** A replayed record brings its own time zero; otherwise the option, or the first reading. */
  private timeZeroRule(): TimeZero {
    if (this.opts.timeZero !== undefined) return this.opts.timeZero;
    const recorded = (this.source as { recordedTimeZero_s?: number | null }).recordedTimeZero_s;
    return typeof recorded === 'number' ? { deviceTime_s: recorded } : 'firstReading';
  }

  private setTimeZero(deviceTime_s: number): void {
    this.timeZero_s = deviceTime_s;
    this.phase = 'recording';
    this.journal.event({ ev: 'mixed', h: this.h(), t: deviceTime_s, wall: isoWithLocalOffset(this.wallClock()) });
  }

  private warn(message: string): void {
    this.journal.event({ ev: 'warning', h: this.h(), t: this.lastT, message });
    this.count(message);
  }

  /** A warning (already in the record) for the progress line. */
  private count(message: string): void {
    this.warnings++;
    this.lastWarning = message;
    this.lastWarningAt_ms = this.now();
  }

  /** Rejected-line totals go into the record at most once a second (a noisy line can reject hundreds). */
  private flushRejected(force: boolean): void {
    if (this.rejectedDirtySince_ms === null) return;
    if (!force && this.now() - this.rejectedDirtySince_ms < 1000) return;
    this.rejectedDirtySince_ms = null;
    this.journal.event({ ev: 'rejected', h: this.h(), t: this.lastT, counts: { ...this.rejected } });
  }

  private h(): number {
    return this.journal.hostOffset_ms(this.now());
  }
}

/** The refit over every reading at the stop (the last scheduled refit may be readings behind), or null when the analyzer fails. */
function finalResult(analyzer: RunAnalyzerLike): AnalysisResult | null {
  try {
    return analyzer.flush ? analyzer.flush() : analyzer.result();
  } catch {
    // A fault of the analysis must not keep the record from closing.
    return null;
  }
}

function safeResult(analyzer: RunAnalyzerLike): AnalysisResult | null {
  try {
    return analyzer.result();
  } catch {
    // A fault of the analysis must not keep the recording from reporting that it stopped.
    return null;
  }
}

function sameIdentity(a: DeviceIdentity | null, b: DeviceIdentity): boolean {
  return a !== null && a.maker === b.maker && a.model === b.model && a.serial === b.serial && a.firmware === b.firmware && a.sends === b.sends;
}

