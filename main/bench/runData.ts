/**
 * One run's readings, clock and live analysis. The run clock starts at the run's first
 * reading (or at a given device time, for an instrument whose clock starts at mixing);
 * time zero (mixing) is a point on that clock, and the analyzer sees time after it.
 * Every reading is kept, so a new fit window, new options or a new time zero rebuild the
 * analyzer over all of them: the fits follow at once and no data is deleted.
 */
import type { AnalysisResult, AnalyzerOptions, RunAnalyzerLike } from '../../kinetics/analysisTypes';
import type { BenchState, ReadingsBatch } from '../bridge/contract';
import { RunReadings } from './runReadings';

/** Host arrival times kept for the reading rate (a few seconds at the usual rates). */
const RATE_WINDOW = 64;

export function analyzerOptions(o: BenchState['analysisOptions'], w: BenchState['fitWindow']): AnalyzerOptions {
  return {
    targetHalfLives: o.targetHalfLives, precision: o.precision, weighted: o.weighted, robust: o.robust,
    ...(w.from_s !== null ? { from_s: w.from_s } : {}), ...(w.to_s !== null ? { to_s: w.to_s } : {}),
  };
}

export class RunData {
  readonly readings = new RunReadings();
  /** Device time at run-clock 0, once known. */
  origin_s: number | null = null;
  /** Mixing on the run clock; null means the first reading. */
  timeZero_s: number | null = null;
  private analyzer: RunAnalyzerLike | null = null;
  private arrivals_ms: number[] = [];

  constructor(
    private readonly createAnalyzer: (o: AnalyzerOptions) => RunAnalyzerLike,
    private readonly now_ms: () => number,
  ) {}

  get count(): number {
    return this.readings.length;
  }

  get analysing(): boolean {
    return this.analyzer !== null;
  }

  reset(origin_s: number | null, timeZero_s: number | null): void {
    this.readings.clear();
    this.origin_s = origin_s;
    this.timeZero_s = timeZero_s;
    this.arrivals_ms = [];
    this.analyzer = null;
  }

  /** Keeps a reading; returns its run-clock time. Feed it to the analysis with `feed` once it is recorded. */
  place(deviceTime_s: number, absorbance: number, flags: number): number {
    if (this.origin_s === null) this.origin_s = deviceTime_s;
    const t = deviceTime_s - this.origin_s;
    this.readings.push(t, absorbance, flags);
    this.arrivals_ms.push(this.now_ms());
    if (this.arrivals_ms.length > RATE_WINDOW) this.arrivals_ms.splice(0, RATE_WINDOW / 2);
    return t;
  }

  feed(runTime_s: number, absorbance: number): void {
    const t0 = this.timeZero_s ?? 0;
    if (this.analyzer && runTime_s >= t0) this.analyzer.add(runTime_s - t0, absorbance);
  }

  rebuild(options: AnalyzerOptions): void {
    this.analyzer = this.createAnalyzer(options);
    for (let i = 0; i < this.readings.length; i++) this.feed(this.readings.time_s[i]!, this.readings.absorbance[i]!);
  }

  /** The analyzer's result (it may throw: the caller reports it). */
  result(): AnalysisResult | null {
    return this.analyzer ? this.analyzer.result() : null;
  }

  /** The refit over every reading fed (the end of a run), or null when there is no analyzer or it fails. */
  flushOrNull(): AnalysisResult | null {
    try {
      if (!this.analyzer) return null;
      return this.analyzer.flush ? this.analyzer.flush() : this.analyzer.result();
    } catch {
      // The throttled analysis has reported the fault already; the record is unaffected.
      return null;
    }
  }

  /** The result, or null when the analyzer fails: for a screen catching up or an export; the throttled analysis reports the fault. */
  resultOrNull(): AnalysisResult | null {
    try {
      return this.result();
    } catch {
      return null;
    }
  }

  /**
   * Run-clock time now: the last reading's time plus the time since it arrived (0 before
   * any), converted to data seconds at the pace the recent readings came (a simulated or
   * replayed run goes faster than the wall clock) and never more than one reading interval
   * ahead, so a mark or a time zero lands between the readings it was pressed between.
   */
  runTimeNow(): number {
    const n = this.readings.length;
    if (n === 0) return 0;
    const h = this.arrivals_ms;
    const lastTime_s = this.readings.time_s[n - 1]!;
    const last_ms = h[h.length - 1] ?? this.now_ms();
    const span = Math.min(n - 1, h.length - 1);
    if (span < 1) return lastTime_s + (this.now_ms() - last_ms) / 1000;
    const data_s = lastTime_s - this.readings.time_s[n - 1 - span]!;
    const host_s = (last_ms - h[h.length - 1 - span]!) / 1000;
    const pace = host_s > 0 ? data_s / host_s : 1;
    const ahead_s = ((this.now_ms() - last_ms) / 1000) * pace;
    return lastTime_s + Math.min(Math.max(0, ahead_s), data_s / span);
  }

  /** Device time now, for the record's events (null before the clock's origin is known). */
  deviceTimeNow(): number | null {
    return this.origin_s === null ? null : this.runTimeNow() + this.origin_s;
  }

  /** Readings per second over the last arrivals (host clock), null before two. */
  rate(): number | null {
    const h = this.arrivals_ms;
    if (h.length < 2) return null;
    const span_ms = h[h.length - 1]! - h[0]!;
    return span_ms > 0 ? ((h.length - 1) * 1000) / span_ms : null;
  }

  batch(runId: string, from: number, to: number): ReadingsBatch {
    const s = this.readings;
    return {
      type: 'readings', runId, fromIndex: from,
      time_s: Array.from(s.time_s.subarray(from, to)),
      absorbance: Array.from(s.absorbance.subarray(from, to)),
      flags: Array.from(s.flags.subarray(from, to)),
    };
  }
}
