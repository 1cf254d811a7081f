/**
 * Older readings reduced to bins of sufficient statistics, so a refit costs O(bins)
 * however long the run. A bin keeps, weighted and unweighted, the count, the mean time
 * and signal and the centred second moments (Chan–Golub–LeVeque pairwise update, which
 * stays accurate where raw Σt² would cancel). From them a fit gets one pseudo-point per
 * bin (mean time, mean signal, summed weight, time variance for the curvature term) and
 * the χ² of the readings about each bin's own straight line, which no model can change.
 * When there are more than MAX_BINS bins, neighbours are merged (the narrowest merged pair
 * first) until half are left, so bins widen together and their number stays between
 * MAX_BINS/2 and MAX_BINS.
 */
import type { FitSeries } from './models/modelTypes';

export const MAX_BINS = 256;
/** Readings per bin when binning starts; doubles at each pairwise merge. */
export const FIRST_BIN_READINGS = 8;

const FIELDS = 11;
// Field offsets in the flat stats array (one row of FIELDS per bin).
const W = 0, TM = 1, YM = 2, CTT = 3, CTY = 4, CYY = 5, N = 6, TMU = 7, YMU = 8, CTTU = 9, CYYU = 10;
// CTYU is not needed: the unweighted part only feeds the residual sum of squares.

export class ReadingBins {
  private stats = new Float64Array(MAX_BINS * 2 * FIELDS);
  private bins = 0;
  /** Readings per bin for new bins. */
  binReadings = FIRST_BIN_READINGS;
  private open = false;

  get count(): number { return this.bins; }

  /** Adds one reading (τ, y, weight) to the newest bin, opening a new one when it is full. */
  add(tau: number, y: number, w: number): void {
    if (!this.open || this.stats[this.bins * FIELDS - FIELDS + N] >= this.binReadings) {
      if (this.bins >= MAX_BINS * 2 - 1) this.mergePairs();
      const o = this.bins * FIELDS;
      this.stats.fill(0, o, o + FIELDS);
      this.bins++;
      this.open = true;
    }
    merge(this.stats, (this.bins - 1) * FIELDS, w, tau, y, 0, 0, 0, 1, tau, y, 0, 0);
  }

  /** Closes the newest bin, so the next reading starts a fresh one (called at each binning round). */
  close(): void {
    this.open = false;
    if (this.bins > MAX_BINS) this.mergePairs();
  }

  /**
   * Halves the number of bins by merging neighbours, always the adjacent pair whose merged
   * bin is narrowest in time (unweighted time variance). Merging every pair in turn would
   * double the oldest bins at every round while new ones start narrow, so that on a run of
   * millions of readings the first bins came to span a good part of a half-life, where the
   * bin mean's curvature term no longer holds (k 2% off at 10⁷ readings); by narrowest
   * pair the bins stay about equally wide in time whatever the run's length.
   */
  private mergePairs(): void {
    const s = this.stats;
    const target = Math.ceil(this.bins / 2);
    const mergedVariance = (a: number): number => {
      const o = a * FIELDS, b = o + FIELDS;
      const n1 = s[o + N], n2 = s[b + N], n = n1 + n2;
      const d = s[b + TMU] - s[o + TMU];
      return (s[o + CTTU] + s[b + CTTU] + (d * d * n1 * n2) / n) / n;
    };
    while (this.bins > target) {
      let best = 0, bestV = Number.POSITIVE_INFINITY;
      for (let j = 0; j + 1 < this.bins; j++) {
        const v = mergedVariance(j);
        if (v < bestV) { bestV = v; best = j; }
      }
      const o = best * FIELDS, b = o + FIELDS;
      merge(s, o, s[b + W], s[b + TM], s[b + YM], s[b + CTT], s[b + CTY], s[b + CYY],
        s[b + N], s[b + TMU], s[b + YMU], s[b + CTTU], s[b + CYYU]);
      s.copyWithin(b, b + FIELDS, this.bins * FIELDS);
      this.bins--;
    }
    this.binReadings *= 2;
  }

  /** Writes the bins as pseudo-points at the start of `series`; returns the number written. */
  writeTo(series: FitSeries): number {
    const s = this.stats;
    let within = 0, withinU = 0, multi = 0, readings = 0;
    for (let j = 0; j < this.bins; j++) {
      const o = j * FIELDS;
      const w = s[o + W];
      series.tau_s[j] = s[o + TM];
      series.y[j] = s[o + YM];
      series.w[j] = w;
      series.v[j] = w > 0 ? s[o + CTT] / w : 0;
      series.n[j] = s[o + N];
      readings += s[o + N];
      if (s[o + N] >= 2) {
        multi++;
        // Scatter about the bin's own line: Cyy − Cty²/Ctt.
        within += s[o + CTT] > 0 ? s[o + CYY] - (s[o + CTY] * s[o + CTY]) / s[o + CTT] : s[o + CYY];
        // Unweighted: the same detrending with the weighted slope (close enough for the RSS report).
        const slope = s[o + CTT] > 0 ? s[o + CTY] / s[o + CTT] : 0;
        withinU += Math.max(0, s[o + CYYU] - slope * slope * s[o + CTTU]);
      }
    }
    series.withinChiSquare = Math.max(0, within);
    series.withinRss = withinU;
    series.multiBins = multi;
    series.readings = readings;
    return this.bins;
  }
}

/** Chan's pairwise update of row `o` with a second group's moments. */
function merge(s: Float64Array, o: number, w2: number, t2: number, y2: number, ctt2: number, cty2: number, cyy2: number,
  n2: number, tu2: number, yu2: number, cttu2: number, cyyu2: number): void {
  const w1 = s[o + W];
  const w = w1 + w2;
  if (w > 0) {
    const dt = t2 - s[o + TM], dy = y2 - s[o + YM];
    const f = (w1 * w2) / w;
    s[o + CTT] += ctt2 + dt * dt * f;
    s[o + CTY] += cty2 + dt * dy * f;
    s[o + CYY] += cyy2 + dy * dy * f;
    s[o + TM] += (dt * w2) / w;
    s[o + YM] += (dy * w2) / w;
    s[o + W] = w;
  }
  const n1 = s[o + N];
  const n = n1 + n2;
  const dtu = tu2 - s[o + TMU], dyu = yu2 - s[o + YMU];
  const fu = (n1 * n2) / n;
  s[o + CTTU] += cttu2 + dtu * dtu * fu;
  s[o + CYYU] += cyyu2 + dyu * dyu * fu;
  s[o + TMU] += (dtu * n2) / n;
  s[o + YMU] += (dyu * n2) / n;
  s[o + N] = n;
}
