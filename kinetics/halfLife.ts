/**
 * Half-life, fraction converted and time to a target conversion for each rate law,
 * with standard errors by the delta method: Var g(p) ≈ ∇gᵀ Σ ∇g, with Σ the fit's
 * covariance (held parameters have zero rows, so they contribute nothing).
 *
 * Integrated rate laws, rate = k[A]^n, C = |A0 − A∞| (handbook forms; a rising run, where
 * an absorbing product forms, has the same half-life as a falling one of the same |C|):
 *   zero:   t½ = C/(2k)              time to fraction f: f C / k
 *   first:  t½ = ln2/k               −ln(1 − f)/k
 *   second: t½ = 1/(k C)             f / ((1 − f) k C)
 *   n:      t½ = (2^(n−1) − 1)/((n − 1) k C^(n−1))
 *           ((1 − f)^(1−n) − 1) C^(1−n) / ((n − 1) k)
 * The target "N half-lives" means f = 1 − 2^(−N) for every order, so for zero order
 * it is reached at 1.75 t½ and for second order at 7 t½ when N = 3.
 */
import type { ModelName } from './analysisTypes';
import { AINF, A0, K, ORDER } from './models/modelTypes';

export interface WithStdErr { value: number | null; stdErr: number | null }

function orderOf(model: ModelName, p: Float64Array): number {
  return model === 'zero' ? 0 : model === 'first' ? 1 : model === 'second' ? 2 : p[ORDER];
}

/** Time (from the window start) at which the fraction f of C has reacted; null when never. */
export function timeToFraction(model: ModelName, p: Float64Array, f: number): number | null {
  const k = p[K], c = Math.abs(p[A0] - p[AINF]), n = orderOf(model, p);
  if (!(k > 0) || !(c > 0) || !(f >= 0 && f < 1)) return f === 0 ? 0 : null;
  let t: number;
  if (Math.abs(n - 1) < 1e-9) t = -Math.log(1 - f) / k;
  else if (n === 0) t = (f * c) / k;
  else t = ((Math.pow(1 - f, 1 - n) - 1) * Math.pow(c, 1 - n)) / ((n - 1) * k);
  return Number.isFinite(t) && t >= 0 ? t : null;
}

export function halfLife(model: ModelName, p: Float64Array): number | null {
  return timeToFraction(model, p, 0.5);
}

/** Fraction of C reacted by time τ under the model, in [0, 1]. */
export function fractionConvertedAt(model: ModelName, p: Float64Array, tau_s: number): number | null {
  const k = p[K], c = Math.abs(p[A0] - p[AINF]), n = orderOf(model, p);
  if (!(c > 0) || !(k >= 0) || !(tau_s >= 0)) return null;
  let left: number; // (remaining reacting part) / C
  if (Math.abs(n - 1) < 1e-9) left = Math.exp(-k * tau_s);
  else if (n === 0) left = Math.max(0, 1 - (k * tau_s) / c);
  else {
    const b = Math.pow(c, 1 - n) + (n - 1) * k * tau_s;
    left = b > 0 ? Math.pow(b, 1 / (1 - n)) / c : 0;
  }
  return Math.min(1, Math.max(0, 1 - left));
}

/** Half-lives elapsed for a fraction converted f: −log2(1 − f) (t/t½ for first order). */
export function halfLivesElapsed(f: number | null): number | null {
  if (f === null) return null;
  // Capped where 1 − f is lost to rounding: 40 half-lives is 1 part in 10¹².
  return Math.min(40, -Math.log2(Math.max(1 - f, 2 ** -40)));
}

/** Target fraction for N half-lives: f = 1 − 2^(−N). */
export function targetFraction(halfLives: number): number {
  return 1 - Math.pow(2, -halfLives);
}

/** Delta-method SE of g(p): central differences for ∇g, then √(∇gᵀ Σ ∇g). */
export function deltaMethod(g: (p: Float64Array) => number | null, p: Float64Array, cov: Float64Array): WithStdErr {
  const value = g(p);
  if (value === null || !Number.isFinite(value)) return { value: null, stdErr: null };
  const np = p.length;
  const grad = new Float64Array(np);
  const q = Float64Array.from(p);
  for (let j = 0; j < np; j++) {
    if (cov[j * np + j] === 0) continue;
    const h = 1e-6 * Math.max(Math.abs(p[j]), Math.sqrt(cov[j * np + j]), 1e-12);
    q[j] = p[j] + h; const up = g(q);
    q[j] = p[j] - h; const down = g(q);
    q[j] = p[j];
    if (up === null || down === null) return { value, stdErr: null };
    grad[j] = (up - down) / (2 * h);
  }
  let v = 0;
  for (let a = 0; a < np; a++) for (let b = 0; b < np; b++) v += grad[a] * cov[a * np + b] * grad[b];
  return { value, stdErr: v >= 0 && Number.isFinite(v) ? Math.sqrt(v) : null };
}

export function halfLifeWithStdErr(model: ModelName, p: Float64Array, cov: Float64Array): WithStdErr {
  return deltaMethod((q) => halfLife(model, q), p, cov);
}

export function timeToFractionWithStdErr(model: ModelName, p: Float64Array, cov: Float64Array, f: number): WithStdErr {
  return deltaMethod((q) => timeToFraction(model, q, f), p, cov);
}
