/**
 * The statistics every rate-law fit reports, computed the same way for all of them
 * so that their AICc values can be compared: χ² over all readings, covariance from
 * the analytic Jacobian (JᵀWJ)⁻¹ scaled by the reduced χ², degrees of freedom and AICc.
 */
import type { BoundSide, FailedModelFit, FitSeries, ModelFit, RateLaw } from './modelTypes';
import type { ModelName } from '../analysisTypes';

/** Prediction of a pseudo-point: the mean of f over its bin, f(τ̄) + ½ f''(τ̄) v. */
export function binMean(law: RateLaw, tau_s: number, v: number, p: Float64Array): number {
  if (v > 0 && law.binAverage) return law.binAverage(tau_s, v, p);
  const f = law.value(tau_s, p);
  return v > 0 ? f + 0.5 * law.curvature(tau_s, p) * v : f;
}

/** Weighted χ² of the pseudo-points alone. */
export function pseudoChiSquare(law: RateLaw, s: FitSeries, p: Float64Array): number {
  let chi = 0;
  for (let i = 0; i < s.count; i++) {
    const r = s.y[i] - binMean(law, s.tau_s[i], s.v[i], p);
    chi += s.w[i] * r * r;
  }
  return chi;
}

/** In-place inverse of a small symmetric positive-definite matrix (Gauss–Jordan); false when singular. */
export function invertSymmetric(a: Float64Array, size: number): boolean {
  const n = size;
  const inv = new Float64Array(n * n);
  for (let i = 0; i < n; i++) inv[i * n + i] = 1;
  const m = Float64Array.from(a);
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r * n + c]) > Math.abs(m[piv * n + c])) piv = r;
    const d = m[piv * n + c];
    if (!(Math.abs(d) > 1e-300)) return false;
    if (piv !== c) {
      for (let j = 0; j < n; j++) {
        let t = m[c * n + j]; m[c * n + j] = m[piv * n + j]; m[piv * n + j] = t;
        t = inv[c * n + j]; inv[c * n + j] = inv[piv * n + j]; inv[piv * n + j] = t;
      }
    }
    for (let j = 0; j < n; j++) { m[c * n + j] /= d; inv[c * n + j] /= d; }
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const f = m[r * n + c];
      if (f === 0) continue;
      for (let j = 0; j < n; j++) { m[r * n + j] -= f * m[c * n + j]; inv[r * n + j] -= f * inv[c * n + j]; }
    }
  }
  a.set(inv);
  return true;
}

/**
 * Information matrix Σ w g gᵀ over the free parameters (compact, nFree²) at p.
 * The extra `timesWeights` pairs add future readings for the stop advice.
 */
export function informationMatrix(law: RateLaw, s: FitSeries, p: Float64Array, free: boolean[]): Float64Array {
  const idx = freeIndices(free);
  const nf = idx.length;
  const info = new Float64Array(nf * nf);
  const g = new Float64Array(p.length);
  for (let i = 0; i < s.count; i++) {
    law.gradient(s.tau_s[i], p, g);
    const w = s.w[i];
    for (let a = 0; a < nf; a++) {
      const ga = g[idx[a]] * w;
      for (let b = a; b < nf; b++) info[a * nf + b] += ga * g[idx[b]];
    }
  }
  for (let a = 0; a < nf; a++) for (let b = 0; b < a; b++) info[a * nf + b] = info[b * nf + a];
  return info;
}

export function freeIndices(free: boolean[]): number[] {
  const idx: number[] = [];
  free.forEach((f, j) => { if (f) idx.push(j); });
  return idx;
}

/** Puts a compact nFree² matrix into the full p² layout (held rows and columns zero). */
export function expandCovariance(compact: Float64Array, free: boolean[], scale: number): Float64Array {
  const idx = freeIndices(free);
  const np = free.length;
  const full = new Float64Array(np * np);
  for (let a = 0; a < idx.length; a++) {
    for (let b = 0; b < idx.length; b++) full[idx[a] * np + idx[b]] = compact[a * idx.length + b] * scale;
  }
  return full;
}

/** AICc = n ln(χ²/n) + 2p + 2p(p+1)/(n − p − 1) (Hurvich & Tsai small-sample correction). */
export function aiccOf(chiSquare: number, readings: number, freeCount: number): number {
  const n = readings, p = freeCount;
  if (n - p - 1 <= 0 || !(chiSquare > 0)) return Number.POSITIVE_INFINITY;
  return n * Math.log(chiSquare / n) + 2 * p + (2 * p * (p + 1)) / (n - p - 1);
}

/** Said when the end signal sits on a bound: the run has not yet shown where the curve ends. */
export function aInfAtBoundWarning(model: ModelName, aInf: number, side: 'lower' | 'upper'): string {
  return `${model} order: the end signal A∞ sits on its ${side} bound (${aInf.toPrecision(3)}); the run has not yet shown where the curve levels off, so k is still loosely fixed and its interval is widened`;
}

/** A fit that could not be had, with its one reason. */
export function failedModelFit(model: ModelName, reason: string, warnings: string[] = []): FailedModelFit {
  return { model, ok: false, reason, warnings: [...warnings, reason] };
}

/** Assembles the fit's report at the final parameters, or the reason there is none. */
export function finishFit(
  model: ModelName, law: RateLaw, s: FitSeries, p: Float64Array, free: boolean[],
  converged: boolean, warnings: string[], aInfAtBound: BoundSide = null,
): ModelFit {
  if (!p.every(Number.isFinite)) return failedModelFit(model, `${model} order: the fit did not reach finite parameters`, warnings);
  if (!converged) return failedModelFit(model, `${model} order: the fit did not converge`, warnings);
  const nFree = free.filter(Boolean).length;
  const dof = s.readings - nFree - s.multiBins;
  if (dof <= 0) return failedModelFit(model, `${model} order: too few readings for ${nFree} parameters`, warnings);
  const residuals = new Float64Array(s.count);
  let chiPseudo = 0, rssPseudo = 0;
  for (let i = 0; i < s.count; i++) {
    const r = s.y[i] - binMean(law, s.tau_s[i], s.v[i], p);
    residuals[i] = r * Math.sqrt(s.w[i]);
    chiPseudo += s.w[i] * r * r;
    rssPseudo += s.n[i] * r * r;
  }
  const chiSquare = chiPseudo + s.withinChiSquare;
  const info = informationMatrix(law, s, p, free);
  if (!invertSymmetric(info, nFree)) {
    return failedModelFit(model, `${model} order: the fit could not estimate its uncertainties (parameters not determined by these readings)`, warnings);
  }
  return {
    model, ok: true, params: p, free, covariance: expandCovariance(info, free, chiSquare / dof), chiSquare,
    rss: rssPseudo + s.withinRss, dof, aicc: aiccOf(chiSquare, s.readings, nFree), residuals, converged, aInfAtBound, warnings,
  };
}
