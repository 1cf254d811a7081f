/**
 * The streaming analyzer: readings go in one by one, the rate laws are refitted on a
 * schedule set by the data, and `result()` hands back the last refit's report.
 *
 * - Readings live in flat Float64Arrays that grow geometrically (no object per point).
 * - Refits come when the window's reading count passes the next mark: the step is
 *   REFIT_GROWTH of the count (so early refits are frequent and cheap), at least 1 and
 *   at most REFIT_CAP readings. Never the wall clock: the same data give the same
 *   result on every machine and at every replay speed.
 * - Each refit starts from the previous answer (warm start).
 * - At a refit, once the unbinned tail passes TAIL_MAX readings, all but the newest
 *   TAIL_KEEP are screened against the last fit and reduced into bins of sufficient
 *   statistics (readingBins.ts), so a refit costs O(bins + TAIL_MAX) at any length.
 * - Robust: readings more than OUTLIER_Z robust standard deviations off the best fit are
 *   left out and reported (feed indices); one screen for all models, so their AICc
 *   values stay comparable.
 * - Readings no fit should see are kept but left out and counted by reason: flagged
 *   saturated by the instrument, pinned at a constant ceiling (SATURATION_REPEATS
 *   readings exactly at the running maximum, at or above SATURATION_MIN_AU), or outside
 *   what any photometer reads (READABLE_RANGE_AU).
 * - The end value's bounds come from the blank and the noise (endValueBounds.ts); a fit
 *   whose A∞ rests on one has k's uncertainty widened (boundedEnd.ts).
 * - Rising runs (an absorbing product forms) are fitted like falling ones: the run's
 *   direction is the sign of the weighted straight-line slope through the window.
 */
import type { AnalysisResult, AnalyzerOptions, ModelName, RunAnalyzerLike } from './analysisTypes';
import type { FitSeries, ModelFit } from './models/modelTypes';
import type { FittedModel, ModelOptions } from './models/modelTypes';
import { MAX_BINS, ReadingBins } from './readingBins';
import { absorbanceSigma } from './reactionModel';
import { fitZeroOrder, zeroOrderLaw } from './models/zeroOrder';
import { firstOrderLaw, fitFirstOrder } from './models/firstOrder';
import { fitSecondOrder, secondOrderLaw } from './models/secondOrder';
import { nthOrderLaw } from './models/nthOrder';
import { fitNthOrderSound } from './models/nthOrderStart';
import { binMean, failedModelFit } from './models/rateLawStatistics';
import { fractionConvertedAt, timeToFraction } from './halfLife';
import { K } from './models/modelTypes';
import { buildReport, emptyReport, NO_LEFT_OUT, type ReportInput } from './analysisReport';
import { StopAdvisor } from './stopAdvice';
import { absorbanceOf, endValueBounds, READABLE_RANGE_AU, signalOf } from './endValueBounds';
import { widenForBound, type WidenedK } from './boundedEnd';
import { INITIAL_FRACTION, initialRate } from './initialRate';
import type { LeftOutCounts } from './analysisTypes';

export const REFIT_GROWTH = 0.05;
export const REFIT_CAP = 4096;
export const FIRST_REFIT_AT = 6;
/** Unbinned readings allowed before the older ones are binned, and how many stay unbinned. */
export const TAIL_MAX = 768;
export const TAIL_KEEP = 256;
export const OUTLIER_Z = 5;
/**
 * Fraction converted (first order) before the n-th order model is fitted: as for the
 * verdict, orders cannot be told apart before one half-life, and below it the search
 * for n only wanders along a flat valley (and costs most of a refit).
 */
export const NTH_MIN_FRACTION = 0.5;
const NTH_MIN_READINGS = 20;
/** Screening needs enough tail readings for a robust scale. */
const OUTLIER_MIN_TAIL = 20;
/** A refit comes at least every this fraction of a half-life's readings (a sparse run is refitted at every reading). */
export const REFIT_HALF_LIVES = 0.1;
/** Readings exactly at the running maximum, at or above SATURATION_MIN_AU, that mark a constant ceiling. */
export const SATURATION_REPEATS = 5;
/** Few photometers read true above about 2 AU (1% transmittance), common practice. */
export const SATURATION_MIN_AU = 2;

/** Flag bits per reading: left out as an outlier (may change at each screen), or for good (saturated, out of range). */
const OUTLIER = 1, EXCLUDED = 2;

const LAWS = { zero: zeroOrderLaw, first: firstOrderLaw, second: secondOrderLaw, nth: nthOrderLaw } as const;
/** The analyzer's own left-out warnings (rebuilt from the counts at every result). */
const LEFT_OUT_WORDS = [/ reading\(s\) with time going backwards/, / reading\(s\) that were not numbers/, / saturated reading\(s\)/, / reading\(s\) outside /];

/** The stopping target (half-lives) and precision (relative 95% CI half-width of k) when none is given. */
export const DEFAULT_TARGET_HALF_LIVES = 3;
export const DEFAULT_PRECISION = 0.05;

export class RunAnalyzer implements RunAnalyzerLike {
  private time = new Float64Array(1024);
  private signal = new Float64Array(1024);
  /** OUTLIER and EXCLUDED bits. */
  private flag = new Uint8Array(1024);
  private n = 0;
  private winFirst = -1;
  private winCount = 0;
  private origin_s = 0;
  /** Lowest and highest absorbance fitted in the window so far (for the bounds of A∞). */
  private lowest_AU = Number.POSITIVE_INFINITY;
  private highest_AU = Number.NEGATIVE_INFINITY;
  private atHighest = 0;
  /** A constant ceiling the readings were found pinned at (AU), once found. */
  private ceiling_AU: number | null = null;
  private readingsPerHalfLife: number | null = null;
  /** Raw index up to which window readings have gone into bins (or been left out). */
  private binnedTo = 0;
  private bins = new ReadingBins();
  private binnedOutliers: number[] = [];
  /** The best fit of the last refit, to screen readings before they are binned. */
  private lastBest: FittedModel | null = null;
  private series: FitSeries;
  private nextRefitAt = FIRST_REFIT_AT;
  private refittedAt = 0;
  private previous: Partial<Record<ModelName, Float64Array>> = {};
  /** Each model's last fit without the bounds on A∞ (boundedEnd.ts), to warm-start the next. */
  private previousUnbounded: Partial<Record<ModelName, Float64Array>> = {};
  private advisor = new StopAdvisor();
  private cached: AnalysisResult;
  private leftOut: LeftOutCounts = { ...NO_LEFT_OUT };
  private readonly opts: Required<Pick<AnalyzerOptions, 'targetHalfLives' | 'precision' | 'weighted' | 'sigmaT' | 'robust'>> & AnalyzerOptions;
  /** Refits so far (for tests and the benchmark). */
  refits = 0;

  constructor(options: AnalyzerOptions = {}) {
    // Options given as undefined take the default (a spread would let undefined win).
    this.opts = {
      ...options,
      targetHalfLives: options.targetHalfLives ?? DEFAULT_TARGET_HALF_LIVES,
      precision: options.precision ?? DEFAULT_PRECISION,
      weighted: options.weighted ?? (options.signal === undefined || options.signal.absorbance !== undefined),
      sigmaT: options.sigmaT ?? 0.001,
      robust: options.robust ?? true,
    };
    this.series = allocSeries(TAIL_MAX + 2 * MAX_BINS + 16);
    this.cached = emptyReport(this.opts, 'gathering readings');
  }

  get count(): number { return this.n; }

  /** Bins of older readings in use now (0 until the tail first passes TAIL_MAX). */
  get binCount(): number { return this.bins.count; }

  /**
   * One reading (absorbance, or the calibrated signal). `saturated` is the instrument's
   * own flag: the reading is kept and counted but not fitted.
   */
  add(time_s: number, absorbance: number, saturated = false): void {
    if (!Number.isFinite(time_s) || !Number.isFinite(absorbance)) { this.leftOut.nonFinite++; return; }
    if (this.n > 0 && time_s < this.time[this.n - 1]) { this.leftOut.backwards++; return; }
    if (this.n === this.time.length) this.grow();
    const i = this.n++;
    this.time[i] = time_s;
    this.signal[i] = absorbance;
    this.flag[i] = 0;
    const { from_s, to_s } = this.opts;
    if ((from_s !== undefined && time_s < from_s) || (to_s !== undefined && time_s > to_s)) return;
    if (this.winFirst < 0) {
      this.winFirst = i;
      this.binnedTo = i;
      this.origin_s = from_s ?? time_s;
    }
    this.winCount++;
    this.screenReading(i, saturated);
    if (this.winCount >= this.nextRefitAt) {
      this.refit();
      let step = Math.min(REFIT_CAP, Math.max(1, Math.ceil(REFIT_GROWTH * this.winCount)));
      if (this.readingsPerHalfLife !== null) step = Math.min(step, Math.max(1, Math.floor(REFIT_HALF_LIVES * this.readingsPerHalfLife)));
      this.nextRefitAt = this.winCount + step;
    }
  }

  /** Leaves out a saturated or unreadable reading, and finds a constant ceiling the readings sit pinned at. */
  private screenReading(i: number, saturated: boolean): void {
    const a = absorbanceOf(this.signal[i], this.opts.signal?.absorbance);
    if (saturated || (this.ceiling_AU !== null && a >= this.ceiling_AU)) { this.exclude(i, 'saturated'); return; }
    if (!(a >= READABLE_RANGE_AU[0] && a <= READABLE_RANGE_AU[1])) { this.exclude(i, 'outOfRange'); return; }
    if (a < this.lowest_AU) this.lowest_AU = a;
    if (a > this.highest_AU) { this.highest_AU = a; this.atHighest = 1; return; }
    if (a !== this.highest_AU || a < SATURATION_MIN_AU || ++this.atHighest < SATURATION_REPEATS) return;
    // Pinned: every reading at the ceiling so far (still unbinned: they come early) goes out.
    this.ceiling_AU = a;
    this.highest_AU = Number.NEGATIVE_INFINITY;
    const line = this.opts.signal?.absorbance;
    for (let j = this.binnedTo; j <= i; j++) {
      if (this.flag[j] & EXCLUDED) continue;
      const aj = absorbanceOf(this.signal[j], line);
      if (aj >= a) this.exclude(j, 'saturated');
      else if (aj > this.highest_AU) this.highest_AU = aj;
    }
  }

  private exclude(i: number, reason: 'saturated' | 'outOfRange'): void {
    this.flag[i] = EXCLUDED;
    this.leftOut[reason]++;
  }

  /** Refits now if readings came in since the last refit (call at the end of a feed). */
  flush(): AnalysisResult {
    if (this.winCount > this.refittedAt && this.winCount >= FIRST_REFIT_AT) this.refit();
    return this.result();
  }

  result(): AnalysisResult {
    const c = this.cached;
    const duration_s = this.n > 0 ? this.time[this.n - 1] - this.time[0] : 0;
    if (c.points === this.n && this.noRejects()) return c;
    return { ...c, points: this.n, duration_s, pointsInWindow: this.winCount, leftOut: { ...this.leftOut }, warnings: this.runWarnings(c.warnings) };
  }

  /** The readings fed so far (views, not copies). */
  readings(): { time_s: Float64Array; absorbance: Float64Array } {
    return { time_s: this.time.subarray(0, this.n), absorbance: this.signal.subarray(0, this.n) };
  }

  private noRejects(): boolean {
    const l = this.leftOut, c = this.cached.leftOut;
    return l.backwards === c.backwards && l.nonFinite === c.nonFinite && l.saturated === c.saturated && l.outOfRange === c.outOfRange;
  }

  private runWarnings(w: string[]): string[] {
    const extra: string[] = [];
    const l = this.leftOut;
    if (l.backwards > 0) extra.push(`${l.backwards} reading(s) with time going backwards were left out`);
    if (l.nonFinite > 0) extra.push(`${l.nonFinite} reading(s) that were not numbers were left out`);
    if (l.saturated > 0) {
      const at = this.ceiling_AU !== null ? ` (pinned at ${this.ceiling_AU.toPrecision(3)} AU, the photometer's ceiling)` : '';
      extra.push(`${l.saturated} saturated reading(s)${at} were left out; dilute the sample or use a shorter path so the run starts below about 1.5 AU`);
    }
    if (l.outOfRange > 0) extra.push(`${l.outOfRange} reading(s) outside ${READABLE_RANGE_AU[0]}…${READABLE_RANGE_AU[1]} AU, which no photometer reads, were left out; check the file's units and columns`);
    return extra.length ? [...w.filter((x) => !LEFT_OUT_WORDS.some((r) => r.test(x))), ...extra] : w;
  }

  private grow(): void {
    const cap = Math.ceil(this.time.length * 1.5);
    const t = new Float64Array(cap); t.set(this.time); this.time = t;
    const a = new Float64Array(cap); a.set(this.signal); this.signal = a;
    const f = new Uint8Array(cap); f.set(this.flag); this.flag = f;
  }

  private weightOf(y: number): number {
    if (!this.opts.weighted) return 1;
    // A concentration from a calibration, y = (A − a)/slope, is linear in A, so its noise is
    // σ_y = σ_A / slope at the absorbance it was read from: the same relative weights as in
    // absorbance (and, the covariance being scaled by the reduced χ², the same k and SE).
    const line = this.opts.signal?.absorbance;
    const a = line ? line.slope * y + line.intercept : y;
    // Noise is never below its value at the blank (A = 0), however low a reading dips.
    const s = absorbanceSigma(Math.max(0, a), this.opts.sigmaT) / (line ? Math.abs(line.slope) : 1);
    return 1 / (s * s);
  }

  private buildSeries(): void {
    const need = 2 * MAX_BINS + (this.winFirst + this.winCount - this.binnedTo) + 1;
    if (this.series.tau_s.length < need) this.series = allocSeries(Math.ceil(need * 1.5));
    const s = this.series;
    const nb = this.bins.writeTo(s);
    let j = nb;
    const end = this.winFirst + this.winCount;
    for (let i = this.binnedTo; i < end; i++) {
      if (this.flag[i]) continue;
      s.tau_s[j] = this.time[i] - this.origin_s;
      s.y[j] = this.signal[i];
      s.w[j] = this.weightOf(this.signal[i]);
      s.v[j] = 0;
      s.n[j] = 1;
      j++;
    }
    s.readings += j - nb;
    s.count = j;
  }

  /** The bounds of A∞ from the blank and the noise, and the run's direction. */
  private modelOptions(): ModelOptions {
    const s = this.series;
    const bounds = endValueBounds({
      lowest_AU: Number.isFinite(this.lowest_AU) ? this.lowest_AU : 0,
      highest_AU: Number.isFinite(this.highest_AU) ? this.highest_AU : 0,
      sigmaT: this.opts.sigmaT, line: this.opts.signal?.absorbance, blankAllowance_AU: this.opts.blankAllowance_AU,
    });
    // Falling or rising: the sign of the weighted straight-line slope through the window.
    let sw = 0, st = 0, sy = 0, stt = 0, sty = 0;
    for (let i = 0; i < s.count; i++) {
      const w = s.w[i], t = s.tau_s[i], y = s.y[i];
      sw += w; st += w * t; sy += w * y; stt += w * (t * t + s.v[i]); sty += w * t * y;
    }
    const slope = sw * stt - st * st > 0 ? (sw * sty - st * sy) : 0;
    const direction = slope > 0 ? -1 : 1;
    return { fixedAInf: this.opts.fixedAInf, aInfMin: bounds.aInfMin, aInfMax: bounds.aInfMax, blank: bounds.blank, direction };
  }

  private fitAll(base: ModelOptions): Record<ModelName, ModelFit> {
    const s = this.series;
    const same = (p: Float64Array | undefined): Float64Array | undefined =>
      p && ((p[1] - p[2] < 0 ? -1 : 1) === base.direction) ? p : undefined;
    const zero = fitZeroOrder(s, base);
    const first = fitFirstOrder(s, { ...base, previous: same(this.previous.first) });
    // Cold start of second order from the first-order fit: same half-life, 1/(k|C|) = ln2/k₁.
    let secondStart = same(this.previous.second);
    if (!secondStart && first.ok) {
      secondStart = Float64Array.from(first.params);
      secondStart[K] = first.params[K] / (Math.LN2 * Math.max(Math.abs(first.params[1] - first.params[2]), 1e-9));
    }
    const second = fitSecondOrder(s, { ...base, previous: secondStart });
    const nth = this.fitNth(s, { ...base }, zero, first, second);
    return { zero, first, second, nth };
  }

  /** n-th order: only past NTH_MIN_FRACTION converted; a warm start it can trust, else cold (nthOrderStart.ts). */
  private fitNth(s: FitSeries, base: ModelOptions, zero: ModelFit, first: ModelFit, second: ModelFit): ModelFit {
    const tauLast = this.time[this.winFirst + this.winCount - 1] - this.origin_s;
    const f = first.ok ? fractionConvertedAt('first', first.params, tauLast) : null;
    if (f === null || f < NTH_MIN_FRACTION || s.readings < NTH_MIN_READINGS) {
      return failedModelFit('nth', `n-th order: not fitted below ${100 * NTH_MIN_FRACTION}% converted; the order cannot be told yet`);
    }
    const p = this.previous.nth;
    const warm = p && ((p[1] - p[2] < 0 ? -1 : 1) === base.direction) ? p : undefined;
    return fitNthOrderSound(s, base, warm, [zero, first, second]);
  }

  private bestFit(fits: Record<ModelName, ModelFit>): FittedModel | null {
    let best: FittedModel | null = null;
    for (const f of Object.values(fits)) if (f.ok && (!best || f.aicc < best.aicc)) best = f;
    return best;
  }

  /**
   * Flags readings [from, to) lying more than OUTLIER_Z robust standard deviations off the
   * fit (scale: 1.4826 × median |weighted residual|, the MAD about zero); true when any flag changed.
   */
  private screenOutliers(best: FittedModel | null, from: number, to: number): boolean {
    const count = to - from;
    if (!this.opts.robust || !best || count < OUTLIER_MIN_TAIL) return false;
    const law = LAWS[best.model];
    const z = new Float64Array(count);
    let used = 0;
    for (let i = from; i < to; i++) {
      if (this.flag[i] & EXCLUDED) { z[i - from] = Number.NaN; continue; }
      const y = this.signal[i];
      z[i - from] = (y - binMean(law, this.time[i] - this.origin_s, 0, best.params)) * Math.sqrt(this.weightOf(y));
      used++;
    }
    if (used < OUTLIER_MIN_TAIL) return false;
    const abs = Float64Array.from(z.filter(Number.isFinite), Math.abs).sort();
    const scale = 1.4826 * abs[Math.floor(used / 2)];
    if (!(scale > 0)) return false;
    let changed = false;
    for (let i = from; i < to; i++) {
      if (this.flag[i] & EXCLUDED) continue;
      const f = Math.abs(z[i - from]) > OUTLIER_Z * scale ? OUTLIER : 0;
      if (f !== this.flag[i]) { this.flag[i] = f; changed = true; }
    }
    return changed;
  }

  /**
   * Bins all but the newest TAIL_KEEP readings once the tail passes TAIL_MAX, after
   * screening them against the last fit (binned readings can no longer be told apart).
   */
  private compact(): void {
    const end = this.winFirst + this.winCount;
    if (end - this.binnedTo <= TAIL_MAX) return;
    const upTo = end - TAIL_KEEP;
    if (this.lastBest) this.screenOutliers(this.lastBest, this.binnedTo, upTo);
    for (let i = this.binnedTo; i < upTo; i++) {
      if (this.flag[i] & EXCLUDED) continue;
      if (this.flag[i]) { this.binnedOutliers.push(i); continue; }
      const y = this.signal[i];
      this.bins.add(this.time[i] - this.origin_s, y, this.weightOf(y));
    }
    this.bins.close();
    this.binnedTo = upTo;
  }

  private refit(): void {
    this.refits++;
    this.refittedAt = this.winCount;
    // Bin first, so a refit costs O(bins + TAIL_MAX) however many readings came since the last.
    this.compact();
    this.buildSeries();
    if (this.series.count < 1) return;
    let base = this.modelOptions();
    let fits = this.fitAll(base);
    if (this.screenOutliers(this.bestFit(fits), this.binnedTo, this.winFirst + this.winCount)) {
      this.buildSeries();
      base = this.modelOptions();
      fits = this.fitAll(base);
    }
    this.lastBest = this.bestFit(fits);
    const widened: Partial<Record<ModelName, WidenedK>> = {};
    for (const name of ['zero', 'first', 'second', 'nth'] as const) {
      const f = fits[name];
      if (!f.ok) continue;
      this.previous[name] = Float64Array.from(f.params);
      const pu = this.previousUnbounded[name];
      const w = widenForBound(f, this.series, base, pu && ((pu[1] - pu[2] < 0 ? -1 : 1) === base.direction) ? pu : undefined);
      if (w) widened[name] = w;
      if (w?.unboundedParams) this.previousUnbounded[name] = w.unboundedParams;
    }
    const end = this.winFirst + this.winCount;
    const outliers = [...this.binnedOutliers];
    for (let i = this.binnedTo; i < end; i++) if (this.flag[i] & OUTLIER) outliers.push(i);
    let lastIndex = end - 1;
    while (lastIndex > this.winFirst && this.flag[lastIndex] & EXCLUDED) lastIndex--;
    const interval_s = this.winCount > 1 ? (this.time[end - 1] - this.time[this.winFirst]) / (this.winCount - 1) : 0;
    const input: ReportInput = {
      opts: this.opts, fits, widened, laws: LAWS, series: this.series, advisor: this.advisor,
      points: this.n, duration_s: this.time[this.n - 1] - this.time[0], pointsInWindow: this.winCount,
      origin_s: this.origin_s, lastTime_s: this.time[end - 1], lastSignal: this.signal[lastIndex],
      interval_s, weightOf: (y) => this.weightOf(y), outliers, direction: base.direction ?? 1,
      highestAbsorbance_AU: Number.isFinite(this.highest_AU) ? this.highest_AU : 0,
      leftOut: this.leftOut, initialRate: this.initialRateNow(fits, end),
    };
    this.cached = buildReport(input);
    this.cached = { ...this.cached, warnings: this.runWarnings(this.cached.warnings) };
    // Only a run that shows real progress paces the refits by its half-life (a flat run's
    // noise fit can have any half-life at all).
    const d = this.cached.models[this.cached.drivingModel].halfLife_s;
    this.readingsPerHalfLife = d !== null && interval_s > 0 && this.cached.fractionConverted !== null && d >= interval_s ? d / interval_s : null;
  }

  /** Slope of the first INITIAL_FRACTION of the change (the fit in use says where that ends). */
  private initialRateNow(fits: Record<ModelName, ModelFit>, end: number): ReturnType<typeof initialRate> {
    const best = this.bestFit({ ...fits, nth: failedModelFit('nth', '') });
    if (!best) return null;
    const tau = timeToFraction(best.model, best.params, INITIAL_FRACTION);
    return initialRate({
      time_s: this.time, signal: this.signal, flag: this.flag, from: this.winFirst, to: end, origin_s: this.origin_s,
      upToTau_s: tau ?? Number.POSITIVE_INFINITY, weightOf: (y) => this.weightOf(y),
    });
  }
}

function allocSeries(cap: number): FitSeries {
  return {
    tau_s: new Float64Array(cap), y: new Float64Array(cap), w: new Float64Array(cap), v: new Float64Array(cap),
    n: new Float64Array(cap), count: 0, readings: 0, withinChiSquare: 0, withinRss: 0, multiBins: 0,
  };
}
