/**
 * What a finished fit reports: covariance, standard errors, correlations,
 * Student-t intervals, goodness of fit and AICc, and the plain-language warnings.
 *
 * Covariance = (JᵀWJ)⁻¹ · χ²/dof with J at the final parameters and W the final
 * weights (robust weights included), dof = n − nFree, where n counts every usable
 * point, also those a redescending loss set to weight 0 (as the usual M-estimation
 * software counts them). Parameters on a bound keep
 * their row: with projection the model is not transformed, so the covariance is
 * the untransformed one, but its meaning is doubtful there and a warning says so.
 *
 * AICc = n ln(χ²/n) + 2K + 2K(K+1)/(n − K − 1), K = nFree + 1: the +1 counts the
 * residual variance, which least squares estimates from the data too (the usual
 * convention for least-squares AIC). Only differences between models fitted to the
 * same points and weights mean anything.
 */
import type { FitProblem, FitResult, FittedParameter } from './fitTypes';
import { evaluateJacobian, evaluateResiduals, normalEquations, type LmBuffers, type LmProblem } from './linearization';
import { invertSymmetricPositive } from './cholesky';
import { studentTQuantile } from './studentT';

export interface FitOutcomeParts {
  problem: FitProblem;
  lm: LmProblem;
  buf: LmBuffers;
  baseW: Float64Array;
  robustW: Float64Array | null;
  used: number;
  iterations: number;
  converged: boolean;
  confidence: number;
  warnings: string[];
}

export function assembleFitResult(parts: FitOutcomeParts): FitResult {
  const { problem, lm, buf, baseW, robustW, used, confidence, warnings } = parts;
  const specs = problem.parameters;
  const m = lm.free.length;
  const n = lm.n;
  const p = lm.p;
  // Residuals of every usable point (a point the robust loss gave weight 0 still has one).
  evaluateResiduals({ ...lm, w: baseW }, p, buf.r);
  let chiSquare = 0;
  let rss = 0;
  for (let i = 0; i < n; i++) {
    const r = buf.r[i]!;
    if (baseW[i]! > 0) rss += r * r;
    if (lm.w[i]! > 0) chiSquare += lm.w[i]! * r * r;
  }
  const dof = used - m;

  let covariance: Float64Array | null = null;
  let correlation: Float64Array | null = null;
  if (m > 0 && dof > 0) {
    evaluateJacobian(lm, p, buf);
    const finite = normalEquations(lm, buf);
    const inv = new Float64Array(m * m);
    if (finite && invertSymmetricPositive(buf.jtj, m, inv, new Float64Array(m * m + m))) {
      const s2 = chiSquare / dof;
      let finiteCov = true;
      for (let k = 0; k < m * m; k++) {
        inv[k] = inv[k]! * s2;
        if (!Number.isFinite(inv[k]!)) finiteCov = false;
      }
      if (finiteCov) covariance = inv;
    }
    if (covariance) {
      const cov = covariance;
      correlation = new Float64Array(m * m);
      for (let i = 0; i < m; i++) {
        for (let j = 0; j < m; j++) {
          const d = Math.sqrt(cov[i * m + i]!) * Math.sqrt(cov[j * m + j]!);
          correlation[i * m + j] = i === j ? 1 : d > 0 ? cov[i * m + j]! / d : 0;
        }
      }
    } else {
      warnings.push(
        'the covariance matrix is singular: a parameter does not affect the model at these values, or two parameters cannot be told apart; standard errors are not available.',
      );
    }
  } else if (m > 0) {
    warnings.push(`too few points for standard errors: ${used} point(s) for ${m} free parameter(s); at least ${m + 1} are needed.`);
  }

  const tq = dof > 0 ? studentTQuantile(0.5 + confidence / 2, dof) : NaN;
  const parameters: FittedParameter[] = [];
  const byName: Record<string, FittedParameter> = {};
  const freeNames: string[] = [];
  let j = 0;
  for (let k = 0; k < specs.length; k++) {
    const spec = specs[k]!;
    const value = p[k]!;
    const fixed = spec.fixed === true;
    let stdErr: number | null = null;
    let ci: [number, number] | null = null;
    let atBound = false;
    if (!fixed) {
      freeNames.push(spec.name);
      atBound = value <= lm.lower[j]! || value >= lm.upper[j]!;
      if (covariance) {
        stdErr = Math.sqrt(covariance[j * m + j]!);
        ci = [value - tq * stdErr, value + tq * stdErr];
        if (!Number.isFinite(ci[0]) || !Number.isFinite(ci[1])) ci = null;
      }
      if (atBound) {
        const side = value <= lm.lower[j]! ? 'lower' : 'upper';
        warnings.push(`parameter "${spec.name}" ended at its ${side} bound (${Number(value.toPrecision(6))}); its standard error assumes the bound is not in the way.`);
      }
      j++;
    }
    const fp: FittedParameter = { name: spec.name, value, stdErr, ci, fixed, atBound };
    parameters.push(fp);
    byName[spec.name] = fp;
  }

  const residualSd = dof > 0 ? Math.sqrt(chiSquare / dof) : null;
  const K = m + 1;
  let aicc: number | null = null;
  if (used - K - 1 <= 0) warnings.push(`AICc needs at least ${K + 2} points for ${m} free parameter(s); it is not available.`);
  else if (!(chiSquare > 0)) warnings.push('the model passes exactly through every point (χ² = 0); AICc is not defined.');
  else {
    // ln χ² − ln n rather than ln(χ²/n): a tiny χ² must not underflow to ln 0.
    aicc = used * (Math.log(chiSquare) - Math.log(used)) + 2 * K + (2 * K * (K + 1)) / (used - K - 1);
    if (!Number.isFinite(aicc)) aicc = null;
  }

  const outliers: number[] = [];
  if (robustW) for (let i = 0; i < n; i++) if (baseW[i]! > 0 && robustW[i]! < 0.5) outliers.push(i);

  // Data far outside double range (|y| near 1e154 and beyond) overflow when squared.
  let ok = true;
  if (!Number.isFinite(chiSquare) || !Number.isFinite(rss) || parameters.some((q) => !Number.isFinite(q.value))) {
    ok = false;
    warnings.push('the residuals are too large to square in double precision; rescale the data (e.g. other units) and fit again.');
  }

  return {
    ok,
    parameters,
    byName,
    covariance,
    correlation,
    freeNames,
    chiSquare,
    rss,
    dof,
    residualSd,
    aicc,
    n: used,
    iterations: parts.iterations,
    converged: parts.converged,
    outliers,
    warnings,
    residuals: Float64Array.from(buf.r.subarray(0, n)),
    robustWeights: robustW,
    confidence,
  };
}

/** A fit that could not be run: the starting values, nothing estimated, one reason. */
export function failedFit(problem: FitProblem, reason: string, earlier: string[] = []): FitResult {
  const parameters: FittedParameter[] = [];
  const byName: Record<string, FittedParameter> = {};
  const freeNames: string[] = [];
  for (const s of problem.parameters) {
    const fp: FittedParameter = { name: s.name, value: s.value, stdErr: null, ci: null, fixed: s.fixed === true, atBound: false };
    parameters.push(fp);
    byName[s.name] = fp;
    if (!s.fixed) freeNames.push(s.name);
  }
  return {
    ok: false,
    parameters,
    byName,
    covariance: null,
    correlation: null,
    freeNames,
    chiSquare: NaN,
    rss: NaN,
    dof: 0,
    residualSd: null,
    aicc: null,
    n: 0,
    iterations: 0,
    converged: false,
    outliers: [],
    warnings: [...earlier, reason],
    residuals: new Float64Array(0),
    robustWeights: null,
    confidence: problem.options?.confidence ?? 0.95,
  };
}
