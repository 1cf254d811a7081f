/**
 * What k's CI would be if the run went on to the target: the information (JᵀWJ) the
 * readings so far carry, plus the information the remaining readings would add if they
 * arrive at the current interval with the current noise model and follow the fitted
 * curve, inverted and scaled by today's reduced χ². Noise only, like every CI here.
 */
import type { FitSeries, RateLaw } from './models/modelTypes';
import { freeIndices, informationMatrix, invertSymmetric } from './models/rateLawStatistics';
import { K } from './models/modelTypes';

/** At most this many sample times stand for the future readings (each with its multiplicity). */
const FORECAST_SAMPLES = 200;

export interface ForecastInput {
  law: RateLaw;
  series: FitSeries;
  params: Float64Array;
  free: boolean[];
  reducedChiSquare: number;
  /** From the last reading to the target, in window time τ (s). */
  fromTau_s: number;
  toTau_s: number;
  interval_s: number;
  /** Weight of a future reading at signal y (1/σ², or 1 when unweighted). */
  weightAt: (y: number) => number;
  /** Student t quantile for the 95% interval. */
  tQuantile: number;
}

export function forecastKRelCI95(fc: ForecastInput): number | null {
  const { law, params: p, free } = fc;
  const kIndex = freeIndices(free).indexOf(K);
  if (kIndex < 0 || !(p[K] > 0)) return null;
  const info = informationMatrix(law, fc.series, p, free);
  const nf = freeIndices(free).length;
  const idx = freeIndices(free);
  const span = fc.toTau_s - fc.fromTau_s;
  if (span > 0 && fc.interval_s > 0) {
    const readings = span / fc.interval_s;
    const samples = Math.max(1, Math.min(FORECAST_SAMPLES, Math.floor(readings)));
    const each = readings / samples;
    const g = new Float64Array(p.length);
    for (let s = 0; s < samples; s++) {
      const tau = fc.fromTau_s + ((s + 0.5) * span) / samples;
      law.gradient(tau, p, g);
      const w = fc.weightAt(law.value(tau, p)) * each;
      for (let a = 0; a < nf; a++) for (let b = 0; b < nf; b++) info[a * nf + b] += w * g[idx[a]] * g[idx[b]];
    }
  }
  if (!invertSymmetric(info, nf)) return null;
  const v = info[kIndex * nf + kIndex] * fc.reducedChiSquare;
  return v > 0 ? (fc.tQuantile * Math.sqrt(v)) / p[K] : null;
}
