/**
 * A rate-law fit as the result reports it: the numbers with their standard errors,
 * 95% CIs (Student t on the fit's degrees of freedom), half-life, AICc and the runs
 * test. A value that cannot be had is null, never NaN.
 */
import type { ModelName, ModelSummary, NthOrderSummary } from './analysisTypes';
import type { FittedModel, ModelFit } from './models/modelTypes';
import type { WidenedK } from './boundedEnd';
import { AINF, A0, K, ORDER } from './models/modelTypes';
import { studentTQuantile } from './fit/studentT';
import { halfLifeWithStdErr } from './halfLife';
import { residualRunsP } from './residualRuns';

const tCache = new Map<number, number>();
/** Two-sided 95% Student t quantile, cached by degrees of freedom (the quantile is an iterative solve). */
export function t95(dof: number): number {
  const key = Math.min(Math.round(dof), 100000);
  let t = tCache.get(key);
  if (t === undefined) {
    t = studentTQuantile(0.975, Math.max(1, key));
    if (tCache.size > 1000) tCache.clear();
    tCache.set(key, t);
  }
  return t;
}

const finiteOrNull = (x: number): number | null => (Number.isFinite(x) ? x : null);

export function emptySummary(aInfFixed: boolean, warnings: string[] = []): ModelSummary {
  return {
    k: null, kStdErr: null, kCI95: null, a0: null, a0StdErr: null, aInf: null, aInfStdErr: null, aInfFixed, aInfAtBound: null,
    halfLife_s: null, halfLifeStdErr_s: null, aicc: null, rss: null, chiSquare: null, dof: null,
    runsTestP: null, converged: false, warnings,
  };
}

export function emptyNthSummary(aInfFixed: boolean, warnings: string[] = []): NthOrderSummary {
  return { ...emptySummary(aInfFixed, warnings), order: null, orderStdErr: null };
}

function stdErr(fit: FittedModel, j: number): number | null {
  if (!fit.free[j]) return null;
  const v = fit.covariance[j * fit.params.length + j];
  return v >= 0 && Number.isFinite(v) ? Math.sqrt(v) : null;
}

/**
 * The summary of one fit. `widened` replaces k's uncertainty when A∞ sits on a bound
 * (boundedEnd.ts): wider, or null when it cannot be known.
 */
export function summarize(name: ModelName, fit: ModelFit | null, aInfFixed: boolean, widened: WidenedK | null = null): ModelSummary {
  if (!fit || !fit.ok) return emptySummary(aInfFixed, fit ? fit.warnings : []);
  const p = fit.params;
  const kSe = widened ? widened.kStdErr : stdErr(fit, K);
  const hl = halfLifeWithStdErr(name, p, fit.covariance);
  const tq = t95(fit.dof);
  const kCI95: [number, number] | null = widened ? widened.kCI95 : kSe === null ? null : [p[K] - tq * kSe, p[K] + tq * kSe];
  return {
    k: p[K],
    kStdErr: kSe,
    kCI95,
    a0: p[A0],
    a0StdErr: stdErr(fit, A0),
    aInf: p[AINF],
    aInfStdErr: stdErr(fit, AINF),
    aInfFixed: aInfFixed || !fit.free[AINF],
    aInfAtBound: fit.aInfAtBound,
    halfLife_s: hl.value,
    // k's widening carries over to the half-life in proportion (t½ ∝ 1/k at fixed A0 − A∞).
    halfLifeStdErr_s: !widened ? hl.stdErr : widened.kStdErr === null || hl.stdErr === null || !stdErr(fit, K) ? null : hl.stdErr * (widened.kStdErr / stdErr(fit, K)!),
    aicc: finiteOrNull(fit.aicc),
    rss: finiteOrNull(fit.rss),
    chiSquare: finiteOrNull(fit.chiSquare),
    dof: fit.dof,
    runsTestP: residualRunsP(fit.residuals),
    converged: fit.converged,
    warnings: fit.warnings,
  };
}

export function summarizeNth(fit: ModelFit | null, aInfFixed: boolean, widened: WidenedK | null = null): NthOrderSummary {
  const base = summarize('nth', fit, aInfFixed, widened);
  if (!fit || !fit.ok || base.k === null) return { ...base, order: null, orderStdErr: null };
  return { ...base, order: fit.params[ORDER], orderStdErr: stdErr(fit, ORDER) };
}
