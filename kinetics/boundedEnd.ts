/**
 * When the end value A∞ comes to rest on one of its physical bounds (endValueBounds.ts),
 * the fit's k is the k of a curve forced to end there, and its covariance knows nothing
 * of the force: the interval is too narrow exactly when the run has not shown its end.
 * So the model is fitted again without the bound, and k's reported uncertainty becomes
 * the wider of the two, with the shift between them added: SE² = SE_bounded² + Δk², and
 * the interval the hull of both intervals. Where the unbounded fit cannot be had (a
 * curve that has not bent yet runs off to A∞ = ±∞ with k → 0), k's interval is not
 * known, and the report says so rather than give the bounded one.
 */
import type { ModelName } from './analysisTypes';
import type { FitSeries, FittedModel, ModelFit, ModelOptions } from './models/modelTypes';
import { K } from './models/modelTypes';
import { fitFirstOrder } from './models/firstOrder';
import { fitSecondOrder } from './models/secondOrder';
import { fitNthOrder } from './models/nthOrder';
import { t95 } from './modelSummary';
import { invertSymmetricPositive } from './fit/cholesky';

/**
 * Bending the readings must show, in standard errors of the quadratic term of a weighted
 * parabola through them, before a fit without the bound is tried by the fit core. A
 * stretch of readings that has not bent yet has no finite unbounded minimum: the fit
 * slides along k → 0, |A0 − A∞| → ∞ towards a straight line and stops only at its
 * iteration cap, with a k that means nothing. Three standard errors: a one-sided
 * chance of about 0.1% that noise alone shows it (normal distribution).
 */
export const BENDING_MIN_SE = 3;

/**
 * The quadratic term of y = b0 + b1 τ + b2 τ² fitted by weighted least squares, in its
 * own standard errors (scaled by the reduced χ²), signed so that positive is the bending
 * of a curve levelling off (upwards for a falling run). A bin's mean of τ² is τ̄² + v.
 * Null when fewer than four points or a singular fit.
 */
export function bendingInSe(s: FitSeries, direction: number): number | null {
  if (s.count < 4) return null;
  // τ centred and scaled, u = (τ − mid)/half-span, for the conditioning of the normal
  // equations (the t statistic of the quadratic term does not depend on it).
  const t0 = s.tau_s[0], t1 = s.tau_s[s.count - 1];
  const mid = 0.5 * (t0 + t1), half = 0.5 * (t1 - t0);
  if (!(half > 0)) return null;
  const a = new Float64Array(9), b = new Float64Array(3), x = new Float64Array(3);
  const row = (i: number): void => {
    const u = (s.tau_s[i] - mid) / half;
    x[0] = 1; x[1] = u; x[2] = u * u + s.v[i] / (half * half);
  };
  for (let i = 0; i < s.count; i++) {
    row(i);
    const w = s.w[i];
    for (let j = 0; j < 3; j++) {
      b[j] += w * x[j] * s.y[i];
      for (let k = 0; k < 3; k++) a[3 * j + k] += w * x[j] * x[k];
    }
  }
  const inv = new Float64Array(9);
  if (!invertSymmetricPositive(a, 3, inv, new Float64Array(12))) return null;
  const beta = [0, 1, 2].map((j) => inv[3 * j] * b[0] + inv[3 * j + 1] * b[1] + inv[3 * j + 2] * b[2]);
  let chi2 = 0;
  for (let i = 0; i < s.count; i++) {
    row(i);
    const r = s.y[i] - (beta[0] * x[0] + beta[1] * x[1] + beta[2] * x[2]);
    chi2 += s.w[i] * r * r;
  }
  const se = Math.sqrt(inv[8] * Math.max(chi2 / (s.count - 3), Number.MIN_VALUE));
  return se > 0 && Number.isFinite(se) ? (direction * beta[2]) / se : null;
}

export interface WidenedK {
  kStdErr: number | null;
  kCI95: [number, number] | null;
  /** k of the fit without the bound, when it could be had. */
  kUnbounded: number | null;
  /**
   * All parameters of the fit without the bound, when it could be had: the next refit
   * starts its own unbounded fit there. Starting it from the bounded answer instead
   * sends it the whole way along the k–A∞ valley again at every refit, which early in a
   * run (a curve that has hardly bent) costs tens of iterations or the iteration cap.
   */
  unboundedParams: Float64Array | null;
}

const REFIT: Partial<Record<ModelName, (s: FitSeries, o: ModelOptions) => ModelFit>> = {
  first: fitFirstOrder, second: fitSecondOrder, nth: fitNthOrder,
};

function kSe(fit: FittedModel): number | null {
  if (!fit.free[K]) return null;
  const v = fit.covariance[K * fit.params.length + K];
  return v >= 0 && Number.isFinite(v) ? Math.sqrt(v) : null;
}

/** k's uncertainty for a fit whose A∞ sits on a bound; null when the fit is not on one. */
export function widenForBound(fit: ModelFit, s: FitSeries, base: ModelOptions, previousUnbounded?: Float64Array): WidenedK | null {
  if (!fit.ok || fit.aInfAtBound === null) return null;
  const refit = REFIT[fit.model];
  const se = kSe(fit);
  const none: WidenedK = { kStdErr: null, kCI95: null, kUnbounded: null, unboundedParams: null };
  if (!refit || se === null) return none;
  // Warm start from the last refit's unbounded answer when it is for the same run direction
  // and the same model shape (the caller keeps one per model).
  // The fit core would run off along the valley when the readings have not bent; first
  // order's own fit searches a bounded range of k and needs no such guard.
  if (fit.model !== 'first') {
    const bend = bendingInSe(s, base.direction ?? 1);
    if (bend === null || bend < BENDING_MIN_SE) return none;
  }
  const start = previousUnbounded && previousUnbounded.length === fit.params.length ? previousUnbounded : fit.params;
  const free = refit(s, { ...base, aInfMin: Number.NEGATIVE_INFINITY, aInfMax: Number.POSITIVE_INFINITY, previous: start });
  const k = fit.params[K];
  const tq = t95(fit.dof);
  if (!free.ok || free.aInfAtBound !== null || !(free.params[K] > 0)) return none;
  const seFree = kSe(free);
  const unboundedParams = Float64Array.from(free.params);
  if (seFree === null) return { kStdErr: null, kCI95: null, kUnbounded: free.params[K], unboundedParams };
  const dk = free.params[K] - k;
  const tqFree = t95(free.dof);
  const lo = Math.min(k - tq * se, free.params[K] - tqFree * seFree);
  const hi = Math.max(k + tq * se, free.params[K] + tqFree * seFree);
  return { kStdErr: Math.sqrt(Math.max(se, seFree) ** 2 + dk * dk), kCI95: [lo, hi], kUnbounded: free.params[K], unboundedParams };
}
