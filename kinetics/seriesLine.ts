/**
 * A straight line through the results of a series of runs (ln k_obs against ln [B], ln k
 * against 1/T, k_obs against [B]^m), where each point carries its own standard error
 * from its run's fit. Two uncertainties can be had for the line:
 *
 *   internal — from the points' standard errors alone, cov = (XᵀWX)⁻¹ with w = 1/σ²;
 *              the σ are taken as known, so intervals use z (normal);
 *   external — the internal one scaled by the Birge ratio R_B = sqrt(χ²/dof), i.e. by
 *              how far the points actually scatter about the line; the scale is itself
 *              estimated from dof degrees of freedom, so intervals use Student t(dof).
 *
 * The larger of the two standard errors is reported (R_B > 1: external; R_B ≤ 1:
 * internal), so a few runs that happen to fall on a line cannot shrink the interval
 * below what each run's own precision allows, and runs that scatter more than their
 * SEs say are not trusted beyond their scatter. With dof = 0 (two points, or one
 * through the origin) there is no scatter to judge: the internal uncertainty is used.
 * Without standard errors for every point the line is unweighted and only the scatter
 * can give an uncertainty (t on dof; none at all when dof = 0).
 */
import { linearFit } from './fit/linearFit';
import { normalQuantile, studentTQuantile } from './fit/studentT';

export type UncertaintyBasis = 'internal' | 'external' | 'scatter' | 'none';

export interface SeriesLine {
  ok: true;
  hasIntercept: boolean;
  slope: number;
  /** 0 when the line goes through the origin. */
  intercept: number;
  slopeStdErr: number | null;
  interceptStdErr: number | null;
  /** Covariance of (intercept, slope) in the chosen basis; null when none can be had. */
  covariance: { intercept: number; slope: number; interceptSlope: number } | null;
  /** The multiplier of the standard errors for a 95% interval: z or t(dof). */
  coverageFactor: number | null;
  basis: UncertaintyBasis;
  /** One sentence: which uncertainty was used and why. */
  basisReason: string;
  weighted: boolean;
  points: number;
  dof: number;
  /** Σ w r² with w = 1/σ² (null unweighted). */
  chiSquare: number | null;
  /** sqrt(χ²/dof) (null when unweighted or dof = 0). */
  birgeRatio: number | null;
  /** Standard errors from the points' own SEs alone (null unweighted). */
  internalSlopeStdErr: number | null;
  internalInterceptStdErr: number | null;
  /** Mean of x (weighted), for the plot and for predictions. */
  meanX: number;
  rSquared: number | null;
  warnings: string[];
}

/** How a line's uncertainty was had: for the report beside the numbers. */
export interface LineUncertainty {
  basis: UncertaintyBasis;
  reason: string;
  dof: number;
  chiSquare: number | null;
  birgeRatio: number | null;
  /** z or t(dof) that multiplies the SE for the 95% interval. */
  coverageFactor: number | null;
}

export function lineUncertainty(l: SeriesLine): LineUncertainty {
  return { basis: l.basis, reason: l.basisReason, dof: l.dof, chiSquare: l.chiSquare, birgeRatio: l.birgeRatio, coverageFactor: l.coverageFactor };
}

export type SeriesLineOutcome = SeriesLine | { ok: false; error: string };

const Z95 = normalQuantile(0.975);

/** A 95% interval value ± factor·se, or null. */
export function interval95(value: number, se: number | null, factor: number | null): [number, number] | null {
  return se === null || factor === null ? null : [value - factor * se, value + factor * se];
}

/**
 * Fits y = a + b x (or y = b x) with each point's standard error `stdErrY` (all given
 * and positive: weighted; otherwise unweighted) and chooses the uncertainty as above.
 */
export function fitSeriesLine(x: number[], y: number[], stdErrY: (number | null | undefined)[] | null, options: { intercept?: boolean } = {}): SeriesLineOutcome {
  const hasIntercept = options.intercept !== false;
  const weighted = stdErrY !== null && stdErrY.length === x.length && stdErrY.every((s) => s != null && s > 0 && Number.isFinite(s));
  const weights = weighted ? stdErrY.map((s) => 1 / s! ** 2) : undefined;
  const line = linearFit({ x, y, weights, intercept: hasIntercept });
  if (!line.ok) return { ok: false, error: line.warnings.join(' ') };
  const n = line.n;
  const dof = line.dof;
  // Internal covariance (XᵀWX)⁻¹: the same sums linearFit uses, without its χ²/dof scale.
  const sxx = line.sxx;
  const xbar = line.meanX;
  const internal = weighted
    ? hasIntercept
      ? { intercept: 1 / line.sumWeights + (xbar * xbar) / sxx, slope: 1 / sxx, interceptSlope: -xbar / sxx }
      : { intercept: 0, slope: 1 / sxx, interceptSlope: 0 }
    : null;
  const chiSquare = weighted ? line.chiSquare : null;
  const birge = weighted && dof > 0 ? Math.sqrt(line.chiSquare / dof) : null;
  const warnings = line.warnings.filter((w) => !/too few points for standard errors/.test(w));

  let basis: UncertaintyBasis;
  let scale: number;
  let factor: number | null;
  let reason: string;
  const tq = dof > 0 ? studentTQuantile(0.975, dof) : null;
  if (internal && birge === null) {
    basis = 'internal'; scale = 1; factor = Z95;
    reason = `${n} points leave no degree of freedom to judge their scatter, so the uncertainty comes from the runs' own standard errors alone (internal, z = ${Z95.toFixed(2)}).`;
  } else if (internal && birge !== null && birge <= 1) {
    basis = 'internal'; scale = 1; factor = Z95;
    reason = `the runs scatter about the line no more than their own standard errors allow (Birge ratio ${birge.toFixed(2)} ≤ 1), so the internal uncertainty is used (z = ${Z95.toFixed(2)}).`;
  } else if (internal && birge !== null) {
    basis = 'external'; scale = birge * birge; factor = tq;
    reason = `the runs scatter about the line more than their own standard errors allow (Birge ratio ${birge.toFixed(2)} > 1), so the internal uncertainty is scaled by it (external, t(${dof}) = ${tq!.toFixed(2)}).`;
  } else if (dof > 0) {
    basis = 'scatter'; scale = 1; factor = tq;
    reason = `not every run has a standard error, so the line is unweighted and its uncertainty comes from the scatter about it alone (t(${dof}) = ${tq!.toFixed(2)}).`;
  } else {
    basis = 'none'; scale = NaN; factor = null;
    reason = `not every run has a standard error and ${n} points leave no degree of freedom, so no uncertainty can be had.`;
  }
  let covariance: SeriesLine['covariance'] = null;
  if (internal && basis !== 'scatter') covariance = { intercept: internal.intercept * scale, slope: internal.slope * scale, interceptSlope: internal.interceptSlope * scale };
  else if (basis === 'scatter' && line.covariance) {
    const c = line.covariance;
    covariance = hasIntercept ? { intercept: c[0]!, slope: c[3]!, interceptSlope: c[1]! } : { intercept: 0, slope: c[0]!, interceptSlope: 0 };
  }
  const sd = (v: number | undefined) => (v === undefined || !(v >= 0) ? null : Math.sqrt(v));
  return {
    ok: true,
    hasIntercept,
    slope: line.slope,
    intercept: line.intercept,
    slopeStdErr: covariance ? sd(covariance.slope) : null,
    interceptStdErr: covariance && hasIntercept ? sd(covariance.intercept) : null,
    covariance,
    coverageFactor: factor,
    basis,
    basisReason: reason,
    weighted,
    points: n,
    dof,
    chiSquare,
    birgeRatio: birge,
    internalSlopeStdErr: internal ? Math.sqrt(internal.slope) : null,
    internalInterceptStdErr: internal && hasIntercept ? Math.sqrt(internal.intercept) : null,
    meanX: xbar,
    rSquared: line.rSquared,
    warnings,
  };
}

/** Standard error of a + b·x0 from the line's covariance (the full one: Var a + x0² Var b + 2 x0 Cov). */
export function predictionStdErr(c: SeriesLine['covariance'], x0: number): number | null {
  if (!c) return null;
  const v = c.intercept + x0 * x0 * c.slope + 2 * x0 * c.interceptSlope;
  return v >= 0 ? Math.sqrt(v) : null;
}
