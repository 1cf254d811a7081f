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
 */
import type { AnalysisResult, AnalyzerOptions, ModelName, RunAnalyzerLike } from './analysisTypes';
import type { FitSeries, ModelFit } from './models/modelTypes';
import { MAX_BINS, ReadingBins } from './readingBins';
import { absorbanceSigma } from './reactionModel';
import { fitZeroOrder, zeroOrderLaw } from './models/zeroOrder';
import { firstOrderLaw, fitFirstOrder } from './models/firstOrder';
import { fitSecondOrder, secondOrderLaw } from './models/secondOrder';
import { fitNthOrder, nthOrderLaw } from './models/nthOrder';
import { binMean, finishFit } from './models/rateLawStatistics';
import { fractionConvertedAt } from './halfLife';
import { K, ORDER } from './models/modelTypes';
import { buildReport, emptyReport, type ReportInput } from './analysisReport';
import { StopAdvisor } from './stopAdvice';

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

const LAWS = { zero: zeroOrderLaw, first: firstOrderLaw, second: secondOrderLaw, nth: nthOrderLaw } as const;

export class RunAnalyzer implements RunAnalyzerLike {
  private time = new Float64Array(1024);
  private signal = new Float64Array(1024);
  /** 1 = left out as an outlier. */
  private flag = new Uint8Array(1024);
  private n = 0;
  private winFirst = -1;
  private winCount = 0;
  private origin_s = 0;
  /** Largest |signal| in the window so far (sets the lower bound of A∞). */
  private maxSignal = 0;
  /** Raw index up to which window readings have gone into bins (or been left out). */
  private binnedTo = 0;
  private bins = new ReadingBins();
  private binnedOutliers: number[] = [];
  /** The best fit of the last refit, to screen readings before they are binned. */
  private lastBest: ModelFit | null = null;
  private series: FitSeries;
  private nextRefitAt = FIRST_REFIT_AT;
  private refittedAt = 0;
  private previous: Partial<Record<ModelName, Float64Array>> = {};
  private advisor = new StopAdvisor();
  private cached: AnalysisResult;
  private rejectedBackwards = 0;
  private rejectedNonFinite = 0;
  private readonly opts: Required<Pick<AnalyzerOptions, 'targetHalfLives' | 'precision' | 'weighted' | 'sigmaT' | 'robust'>> & AnalyzerOptions;
  /** Refits so far (for tests and the benchmark). */
  refits = 0;

  constructor(options: AnalyzerOptions = {}) {
    // Options given as undefined take the default (a spread would let undefined win).
    this.opts = {
      ...options,
      targetHalfLives: options.targetHalfLives ?? 3,
      precision: options.precision ?? 0.05,
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

  add(time_s: number, absorbance: number): void {
    if (!Number.isFinite(time_s) || !Number.isFinite(absorbance)) { this.rejectedNonFinite++; return; }
    if (this.n > 0 && time_s < this.time[this.n - 1]) { this.rejectedBackwards++; return; }
    if (this.n === this.time.length) this.grow();
    const i = this.n++;
    this.time[i] = time_s;
    this.signal[i] = absorbance;
    const { from_s, to_s } = this.opts;
    if ((from_s !== undefined && time_s < from_s) || (to_s !== undefined && time_s > to_s)) return;
    if (this.winFirst < 0) {
      this.winFirst = i;
      this.binnedTo = i;
      this.origin_s = from_s ?? time_s;
    }
    this.winCount++;
    if (Math.abs(absorbance) > this.maxSignal) this.maxSignal = Math.abs(absorbance);
    if (this.winCount >= this.nextRefitAt) {
      this.refit();
      this.nextRefitAt = this.winCount + Math.min(REFIT_CAP, Math.max(1, Math.ceil(REFIT_GROWTH * this.winCount)));
    }
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
    return { ...c, points: this.n, duration_s, pointsInWindow: this.winCount, warnings: this.runWarnings(c.warnings) };
  }

  /** The readings fed so far (views, not copies). */
  readings(): { time_s: Float64Array; absorbance: Float64Array } {
    return { time_s: this.time.subarray(0, this.n), absorbance: this.signal.subarray(0, this.n) };
  }

  private noRejects(): boolean { return this.rejectedBackwards === 0 && this.rejectedNonFinite === 0; }

  private runWarnings(w: string[]): string[] {
    const extra: string[] = [];
    if (this.rejectedBackwards > 0) extra.push(`${this.rejectedBackwards} reading(s) with time going backwards were left out`);
    if (this.rejectedNonFinite > 0) extra.push(`${this.rejectedNonFinite} reading(s) that were not numbers were left out`);
    return extra.length ? [...w, ...extra] : w;
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

  private fitAll(): Record<ModelName, ModelFit> {
    const s = this.series;
    // "Not far below the blank": A∞ may sit at most 5% of the largest absorbance under zero.
    // A calibrated signal takes the same bound mapped through its line, so that the fit in
    // concentration is the absorbance fit in other units (the 0.1 AU floor has no meaning in M).
    const line = this.opts.signal?.absorbance;
    const aInfMin = line
      ? (-0.05 * Math.max(0.1, Math.abs(line.slope * this.maxSignal + line.intercept)) - line.intercept) / line.slope
      : -0.05 * Math.max(0.1, this.maxSignal);
    const base = { fixedAInf: this.opts.fixedAInf, aInfMin };
    const zero = fitZeroOrder(s, base);
    const first = fitFirstOrder(s, { ...base, previous: this.previous.first });
    // Cold start of second order from the first-order fit: same half-life, 1/(kC) = ln2/k₁.
    let secondStart = this.previous.second;
    if (!secondStart && first.ok) {
      secondStart = Float64Array.from(first.params);
      secondStart[K] = first.params[K] / (Math.LN2 * Math.max(first.params[1] - first.params[2], 1e-9));
    }
    const second = fitSecondOrder(s, { ...base, previous: secondStart });
    const nth = this.fitNth(s, base, zero, first, second);
    return { zero, first, second, nth };
  }

  /**
   * n-th order: only past NTH_MIN_FRACTION converted; warm start, else from the best
   * integer order (n = 0.05, 1.01 or 2), and if that fails from the next best.
   */
  private fitNth(s: FitSeries, base: { fixedAInf?: number; aInfMin: number }, zero: ModelFit, first: ModelFit, second: ModelFit): ModelFit {
    const tauLast = this.time[this.winFirst + this.winCount - 1] - this.origin_s;
    const f = first.ok ? fractionConvertedAt('first', first.params, tauLast) : null;
    if (f === null || f < NTH_MIN_FRACTION || s.readings < NTH_MIN_READINGS) {
      const held = finishFit('nth', nthOrderLaw, s, new Float64Array(4).fill(Number.NaN), [false, false, false, false], false,
        [`n-th order: not fitted below ${100 * NTH_MIN_FRACTION}% converted; the order cannot be told yet`]);
      return held;
    }
    const starts: Float64Array[] = [];
    if (this.previous.nth) starts.push(this.previous.nth);
    const integer = [zero, first, second].filter((x) => x.ok).sort((a, b) => a.aicc - b.aicc);
    for (const x of integer) {
      const st = new Float64Array(4);
      st.set(x.params);
      st[ORDER] = x.model === 'zero' ? 0.05 : x.model === 'first' ? 1.01 : 2;
      starts.push(st);
    }
    let nth = fitNthOrder(s, { ...base, previous: starts[0] });
    for (let j = 1; j < Math.min(starts.length, 3) && !nth.ok; j++) {
      const alt = fitNthOrder(s, { ...base, previous: starts[j] });
      if (alt.ok && (!nth.ok || alt.chiSquare < nth.chiSquare)) nth = alt;
    }
    return nth;
  }

  private bestFit(fits: Record<ModelName, ModelFit>): ModelFit | null {
    let best: ModelFit | null = null;
    for (const f of Object.values(fits)) if (f.ok && (!best || f.aicc < best.aicc)) best = f;
    return best;
  }

  /**
   * Flags readings [from, to) lying more than OUTLIER_Z robust standard deviations off the
   * fit (scale: 1.4826 × median |weighted residual|, the MAD about zero); true when any flag changed.
   */
  private screenOutliers(best: ModelFit | null, from: number, to: number): boolean {
    const count = to - from;
    if (!this.opts.robust || !best || count < OUTLIER_MIN_TAIL) return false;
    const law = LAWS[best.model];
    const z = new Float64Array(count);
    for (let i = from; i < to; i++) {
      const y = this.signal[i];
      z[i - from] = (y - binMean(law, this.time[i] - this.origin_s, 0, best.params)) * Math.sqrt(this.weightOf(y));
    }
    const abs = Float64Array.from(z, Math.abs).sort();
    const scale = 1.4826 * abs[Math.floor(count / 2)];
    if (!(scale > 0)) return false;
    let changed = false;
    for (let i = from; i < to; i++) {
      const f = Math.abs(z[i - from]) > OUTLIER_Z * scale ? 1 : 0;
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
    let fits = this.fitAll();
    if (this.screenOutliers(this.bestFit(fits), this.binnedTo, this.winFirst + this.winCount)) {
      this.buildSeries();
      fits = this.fitAll();
    }
    this.lastBest = this.bestFit(fits);
    for (const name of ['zero', 'first', 'second', 'nth'] as const) {
      if (fits[name].ok) this.previous[name] = Float64Array.from(fits[name].params);
    }
    const end = this.winFirst + this.winCount;
    const outliers = [...this.binnedOutliers];
    for (let i = this.binnedTo; i < end; i++) if (this.flag[i]) outliers.push(i);
    const lastIndex = end - 1;
    const input: ReportInput = {
      opts: this.opts, fits, laws: LAWS, series: this.series, advisor: this.advisor,
      points: this.n, duration_s: this.time[this.n - 1] - this.time[0], pointsInWindow: this.winCount,
      origin_s: this.origin_s, lastTime_s: this.time[lastIndex], lastSignal: this.signal[lastIndex],
      interval_s: this.winCount > 1 ? (this.time[lastIndex] - this.time[this.winFirst]) / (this.winCount - 1) : 0,
      weightOf: (y) => this.weightOf(y), outliers,
    };
    this.cached = buildReport(input);
  }
}

function allocSeries(cap: number): FitSeries {
  return {
    tau_s: new Float64Array(cap), y: new Float64Array(cap), w: new Float64Array(cap), v: new Float64Array(cap),
    n: new Float64Array(cap), count: 0, readings: 0, withinChiSquare: 0, withinRss: 0, multiBins: 0,
  };
}
