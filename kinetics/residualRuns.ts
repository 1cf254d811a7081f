/**
 * Wald–Wolfowitz runs test on the signs of residuals taken in time order: a model of
 * the wrong shape leaves long stretches of one sign (too few runs). Normal
 * approximation, two-sided: with n₊ and n₋ signs (zeros dropped) and R runs,
 * μ = 2n₊n₋/n + 1, σ² = 2n₊n₋(2n₊n₋ − n) / (n²(n − 1)), z = (R − μ)/σ.
 */
import { normalTwoSidedP } from './fit/studentT';

/** Fewer signs than this and the normal approximation is not trusted (common practice: about 10 each side). */
export const RUNS_MIN_SIGNS = 10;

export function residualRunsP(residuals: Float64Array, count = residuals.length): number | null {
  let pos = 0, neg = 0, runs = 0, last = 0;
  for (let i = 0; i < count; i++) {
    const s = residuals[i] > 0 ? 1 : residuals[i] < 0 ? -1 : 0;
    if (s === 0) continue;
    if (s > 0) pos++; else neg++;
    if (s !== last) runs++;
    last = s;
  }
  const n = pos + neg;
  if (pos < RUNS_MIN_SIGNS || neg < RUNS_MIN_SIGNS) return null;
  const mu = (2 * pos * neg) / n + 1;
  const v = (2 * pos * neg * (2 * pos * neg - n)) / (n * n * (n - 1));
  if (!(v > 0)) return null;
  return normalTwoSidedP((runs - mu) / Math.sqrt(v));
}
