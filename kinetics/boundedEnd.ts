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
