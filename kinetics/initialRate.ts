/**
 * The initial rate: for an assay read only at low conversion, where no rate law can be
 * told from another, the slope dA/dt of the first few percent of the change is what the
 * readings do give. A weighted straight line through the readings up to INITIAL_FRACTION
 * converted (by the fit in use; all of them while the run is still below it), with the
 * standard error scaled by the reduced χ² and a Student t interval on n − 2 dof.
 * The slope over the first 5% is the mean rate there: for a first-order run it is about
 * 2.5% below the true initial rate, which the interval does not cover (said in `basis`).
 */
import type { InitialRate } from './analysisTypes';
import { t95 } from './modelSummary';

export const INITIAL_FRACTION = 0.05;
const MIN_READINGS = 5;

export interface InitialRateInput {
  time_s: Float64Array;
  signal: Float64Array;
  /** Non-zero: left out (outlier, saturated, out of range). */
  flag: Uint8Array;
  from: number;
  to: number;
  origin_s: number;
  /** Last window time τ of the segment (s after the window start). */
  upToTau_s: number;
  weightOf: (y: number) => number;
}

export function initialRate(o: InitialRateInput): InitialRate | null {
  let sw = 0, st = 0, sy = 0, n = 0, last = 0;
  for (let i = o.from; i < o.to; i++) {
    if (o.flag[i]) continue;
    const tau = o.time_s[i] - o.origin_s;
    if (tau > o.upToTau_s) break;
    const w = o.weightOf(o.signal[i]);
    sw += w; st += w * tau; sy += w * o.signal[i]; n++; last = tau;
  }
  if (n < MIN_READINGS || !(sw > 0)) return null;
  const tm = st / sw, ym = sy / sw;
  let stt = 0, sty = 0;
  for (let i = o.from; i < o.to; i++) {
    if (o.flag[i]) continue;
    const tau = o.time_s[i] - o.origin_s;
    if (tau > o.upToTau_s) break;
    const w = o.weightOf(o.signal[i]);
    stt += w * (tau - tm) ** 2; sty += w * (tau - tm) * (o.signal[i] - ym);
  }
  if (!(stt > 0)) return null;
  const slope = sty / stt;
  let chi = 0;
  for (let i = o.from; i < o.to; i++) {
    if (o.flag[i]) continue;
    const tau = o.time_s[i] - o.origin_s;
    if (tau > o.upToTau_s) break;
    const r = o.signal[i] - ym - slope * (tau - tm);
    chi += o.weightOf(o.signal[i]) * r * r;
  }
  const dof = n - 2;
  const se = Math.sqrt(chi / dof / stt);
  const tq = t95(dof);
  const ok = Number.isFinite(se);
  return {
    slope_perSecond: slope,
    slopeStdErr_perSecond: ok ? se : null,
    slopeCI95_perSecond: ok ? [slope - tq * se, slope + tq * se] : null,
    readings: n,
    upTo_s: last,
    basis: `weighted line through the first ${n} readings (up to ${(100 * INITIAL_FRACTION).toFixed(0)}% of the change, ${last.toFixed(1)} s); the mean slope there, up to about 2.5% below the true initial rate for a first-order run`,
  };
}
