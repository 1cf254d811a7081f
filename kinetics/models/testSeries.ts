/** Test helper: a simulated run as a plain (unbinned) FitSeries with the noise-model weights. */
import { absorbanceSigma, simulateRun, type SimulatedRunSpec } from '../reactionModel';
import type { FitSeries } from './modelTypes';

export function seriesOf(time_s: Float64Array, y: Float64Array, weighted = true, sigmaT = 0.001): FitSeries {
  const n = time_s.length;
  const w = new Float64Array(n);
  for (let i = 0; i < n; i++) w[i] = weighted ? 1 / absorbanceSigma(Math.max(0, y[i]), sigmaT) ** 2 : 1;
  return { tau_s: time_s, y, w, v: new Float64Array(n), n: new Float64Array(n).fill(1), count: n, readings: n, withinChiSquare: 0, withinRss: 0, multiBins: 0 };
}

export function simulatedSeries(spec: SimulatedRunSpec, weighted = true): FitSeries {
  const r = simulateRun(spec);
  return seriesOf(r.time_s, r.absorbance, weighted, spec.sigmaT);
}
