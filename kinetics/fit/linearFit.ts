/**
 * Straight-line least squares, y = a + b x or y = b x (through the origin),
 * weighted (w_i = 1/σ_i²) or not, in closed form.
 *
 * Sums are taken about the weighted means (two passes), which keeps the digits
 * that a one-pass Σx² − (Σx)²/n would cancel away. Like the nonlinear core, the
 * covariance is scaled by the reduced chi-square s² = χ²/dof:
 *   with intercept:  Var b = s²/Sxx,  Var a = s²(1/Σw + x̄²/Sxx),  Cov(a, b) = −x̄ s²/Sxx;
 *   through origin:  Var b = s²/Σw x².
 * R² is 1 − χ²/Σw(y − ȳ)² with an intercept and the uncentred 1 − χ²/Σw y² without
 * (the usual convention for a line through the origin).
 * The result is a FitResult (parameters "intercept" and "slope"), so the same
 * report prints it, plus the sums a calibration needs for inverse prediction.
 */
import type { FitResult, FittedParameter } from './fitTypes';
import { studentTQuantile } from './studentT';

export interface LinearFitInput {
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  weights?: ArrayLike<number>;
  count?: number;
  /** Fit an intercept (default true); false forces the line through the origin. */
  intercept?: boolean;
  confidence?: number;
}

export interface LinearFitResult extends FitResult {
  slope: number;
  /** 0 when the line is forced through the origin. */
  intercept: number;
  hasIntercept: boolean;
  rSquared: number | null;
  /** Weighted means and Sxx = Σw(x − x̄)² (Σw x² through the origin), for inverse prediction. */
  meanX: number;
  meanY: number;
  sxx: number;
  sumWeights: number;
  /** Student t quantile used for the intervals (null when dof ≤ 0). */
  tQuantile: number | null;
}

function failed(message: string, hasIntercept: boolean, confidence: number): LinearFitResult {
  const params: FittedParameter[] = [];
  if (hasIntercept) params.push({ name: 'intercept', value: NaN, stdErr: null, ci: null, fixed: false, atBound: false });
  params.push({ name: 'slope', value: NaN, stdErr: null, ci: null, fixed: false, atBound: false });
  return {
    ok: false,
    parameters: params,
    byName: Object.fromEntries(params.map((p) => [p.name, p])),
    covariance: null,
    correlation: null,
    freeNames: params.map((p) => p.name),
    chiSquare: NaN,
    rss: NaN,
    dof: 0,
    residualSd: null,
    aicc: null,
    n: 0,
    iterations: 0,
    converged: false,
    outliers: [],
    warnings: [message],
    confidence,
    slope: NaN,
    intercept: hasIntercept ? NaN : 0,
    hasIntercept,
    rSquared: null,
    meanX: NaN,
    meanY: NaN,
    sxx: NaN,
    sumWeights: 0,
    tQuantile: null,
  };
}

export function linearFit(input: LinearFitInput): LinearFitResult {
  const hasIntercept = input.intercept !== false;
  const confidence = input.confidence ?? 0.95;
  const { x, y, weights } = input;
  const n = Math.min(input.count ?? x.length, x.length, y.length, weights ? weights.length : Infinity);
  const warnings: string[] = [];
  if (!(confidence > 0 && confidence < 1)) return failed(`confidence level ${confidence} is not between 0 and 1; use e.g. 0.95.`, hasIntercept, confidence);
  let sw = 0;
  let swx = 0;
  let swy = 0;
  let used = 0;
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i]! : 1;
    if (!Number.isFinite(x[i]!) || !Number.isFinite(y[i]!) || !Number.isFinite(w) || !(w > 0)) {
      return failed(`point ${i + 1} (x = ${x[i]}, y = ${y[i]}, weight = ${w}) is not usable; remove it or give finite values and a positive weight.`, hasIntercept, confidence);
    }
    sw += w;
    swx += w * x[i]!;
    swy += w * y[i]!;
    used++;
  }
  const m = hasIntercept ? 2 : 1;
  if (used < m) return failed(`a straight line${hasIntercept ? '' : ' through the origin'} needs at least ${m} points; ${used} given.`, hasIntercept, confidence);
  const xbar = hasIntercept ? swx / sw : 0;
  const ybar = swy / sw;
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i]! : 1;
    const dx = x[i]! - xbar;
    const dy = y[i]! - (hasIntercept ? ybar : 0);
    sxx += w * dx * dx;
    sxy += w * dx * dy;
    syy += w * dy * dy;
  }
  if (!(sxx > 0)) {
    return failed(hasIntercept ? 'all x values are equal: a slope cannot be fitted; use at least two different x values.' : 'all x values are zero: a slope cannot be fitted.', hasIntercept, confidence);
  }
  const slope = sxy / sxx;
  const intercept = hasIntercept ? ybar - slope * xbar : 0;
  const residuals = new Float64Array(n);
  let chiSquare = 0;
  let rss = 0;
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i]! : 1;
    const r = y[i]! - intercept - slope * x[i]!;
    residuals[i] = r;
    chiSquare += w * r * r;
    rss += r * r;
  }
  const dof = used - m;
  const s2 = dof > 0 ? chiSquare / dof : NaN;
  const tq = dof > 0 ? studentTQuantile(0.5 + confidence / 2, dof) : null;
  if (dof <= 0) warnings.push(`too few points for standard errors: ${used} point(s) for ${m} parameter(s).`);
  const varSlope = s2 / sxx;
  const varIntercept = s2 * (1 / sw + (xbar * xbar) / sxx);
  const covAB = (-xbar * s2) / sxx;
  const se = (v: number): number | null => (dof > 0 && v >= 0 ? Math.sqrt(v) : null);
  const ci = (value: number, s: number | null): [number, number] | null => (s === null || tq === null ? null : [value - tq * s, value + tq * s]);
  const slopeSe = se(varSlope);
  const slopeParam: FittedParameter = { name: 'slope', value: slope, stdErr: slopeSe, ci: ci(slope, slopeSe), fixed: false, atBound: false };
  const parameters: FittedParameter[] = [];
  let covariance: Float64Array | null = null;
  let correlation: Float64Array | null = null;
  if (hasIntercept) {
    const interceptSe = se(varIntercept);
    parameters.push({ name: 'intercept', value: intercept, stdErr: interceptSe, ci: ci(intercept, interceptSe), fixed: false, atBound: false });
    if (dof > 0) {
      covariance = Float64Array.from([varIntercept, covAB, covAB, varSlope]);
      const rho = varIntercept > 0 && varSlope > 0 ? covAB / Math.sqrt(varIntercept * varSlope) : 0;
      correlation = Float64Array.from([1, rho, rho, 1]);
    }
  } else if (dof > 0) {
    covariance = Float64Array.from([varSlope]);
    correlation = Float64Array.from([1]);
  }
  parameters.push(slopeParam);
  const K = m + 1;
  let aicc: number | null = null;
  if (used - K - 1 > 0 && chiSquare > 0) aicc = used * Math.log(chiSquare / used) + 2 * K + (2 * K * (K + 1)) / (used - K - 1);
  const rSquared = syy > 0 ? 1 - chiSquare / syy : null;
  if (rSquared === null) warnings.push('all y values are equal: R² is not defined.');
  return {
    ok: true,
    parameters,
    byName: Object.fromEntries(parameters.map((p) => [p.name, p])),
    covariance,
    correlation,
    freeNames: parameters.map((p) => p.name),
    chiSquare,
    rss,
    dof,
    residualSd: dof > 0 ? Math.sqrt(s2) : null,
    aicc,
    n: used,
    iterations: 0,
    converged: true,
    outliers: [],
    warnings,
    residuals,
    robustWeights: null,
    confidence,
    slope,
    intercept,
    hasIntercept,
    rSquared,
    meanX: hasIntercept ? xbar : swx / sw,
    meanY: ybar,
    sxx,
    sumWeights: sw,
    tQuantile: tq,
  };
}
