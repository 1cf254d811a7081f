/**
 * Student t and normal distributions: CDFs and quantiles (inverse CDFs), used for
 * the confidence intervals of fitted parameters and for p-values.
 *
 * The t CDF is the regularized incomplete beta, F(t) = 1 − ½ I_x(ν/2, ½) with
 * x = ν/(ν + t²) for t > 0; the normal CDF is Φ(z) = 1 − ½ Q(½, z²/2). Quantiles
 * are found by Newton's method on ln F (well-behaved even far in the tails), kept
 * inside a bracket so a bad step falls back to bisection.
 */
import { incompleteBeta, incompleteGamma, logGamma } from './specialFunctions';

/** Standard normal CDF Φ(z). */
export function normalCdf(z: number): number {
  if (Number.isNaN(z)) return NaN;
  if (z === Infinity) return 1;
  if (z === -Infinity) return 0;
  const tail = 0.5 * incompleteGamma(0.5, 0.5 * z * z).q; // P(Z > |z|)
  return z < 0 ? tail : 1 - tail;
}

/** Standard normal density φ(z). */
export function normalDensity(z: number): number {
  return Math.exp(-0.5 * z * z) / Math.sqrt(2 * Math.PI);
}

/** Two-sided tail probability P(|Z| > |z|), accurate far into the tail. */
export function normalTwoSidedP(z: number): number {
  return incompleteGamma(0.5, 0.5 * z * z).q;
}

/** Standard normal quantile: the z with Φ(z) = p, for 0 < p < 1 (±∞ at 0 and 1). */
export function normalQuantile(p: number): number {
  if (!(p >= 0 && p <= 1)) return NaN;
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  if (p === 0.5) return 0;
  const q = p < 0.5 ? p : 1 - p;
  // Starting value: Abramowitz & Stegun 26.2.23 (|error| < 4.5e-4).
  const s = Math.sqrt(-2 * Math.log(q));
  let z = -(s - (2.515517 + 0.802853 * s + 0.010328 * s * s) / (1 + 1.432788 * s + 0.189269 * s * s + 0.001308 * s * s * s));
  // Halley steps on the lower tail, where Φ is computed without cancellation.
  for (let i = 0; i < 8; i++) {
    const f = normalCdf(z) - q;
    const d = normalDensity(z);
    const u = f / d;
    const step = u / (1 + 0.5 * z * u);
    z -= step;
    if (Math.abs(step) <= 1e-15 * Math.max(1, Math.abs(z))) break;
  }
  return p < 0.5 ? z : -z;
}

/** Student t CDF with ν > 0 degrees of freedom (ν = ∞ gives the normal). */
export function studentTCdf(t: number, dof: number): number {
  if (Number.isNaN(t) || !(dof > 0)) return NaN;
  if (dof === Infinity) return normalCdf(t);
  if (t === Infinity) return 1;
  if (t === -Infinity) return 0;
  const tail = 0.5 * incompleteBeta(dof / (dof + t * t), 0.5 * dof, 0.5); // P(T > |t|)
  return t < 0 ? tail : 1 - tail;
}

/** Student t density. */
export function studentTDensity(t: number, dof: number): number {
  if (dof === Infinity) return normalDensity(t);
  const lnC = logGamma(0.5 * (dof + 1)) - logGamma(0.5 * dof) - 0.5 * Math.log(dof * Math.PI);
  return Math.exp(lnC - 0.5 * (dof + 1) * Math.log1p((t * t) / dof));
}

/** Student t quantile: the t with F(t) = p, ν > 0 (ν need not be an integer). */
export function studentTQuantile(p: number, dof: number): number {
  if (!(p >= 0 && p <= 1) || !(dof > 0)) return NaN;
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  if (p === 0.5) return 0;
  if (dof === Infinity || dof > 1e8) return normalQuantile(p);
  if (dof === 1) return Math.tan(Math.PI * (p - 0.5)); // Cauchy, closed form
  // The streaming engine asks for the same few quantiles (0.975 at the current dof) on
  // every refit, and each costs a Newton search on the incomplete beta: remember them.
  const key = `${p}|${dof}`;
  const known = quantileMemo.get(key);
  if (known !== undefined) return known;
  const q = p < 0.5 ? p : 1 - p;
  const t = lowerTailQuantile(q, dof);
  if (quantileMemo.size >= QUANTILE_MEMO_SIZE) quantileMemo.clear();
  quantileMemo.set(key, p < 0.5 ? t : -t);
  return p < 0.5 ? t : -t;
}

const QUANTILE_MEMO_SIZE = 1024;
const quantileMemo = new Map<string, number>();

/** The negative t with F(t) = q, 0 < q < ½. */
function lowerTailQuantile(q: number, dof: number): number {
  // Starting value: Cornish–Fisher expansion of t in the normal quantile (A&S 26.7.5).
  const z = normalQuantile(q);
  const z3 = z * z * z;
  let t = z + (z3 + z) / (4 * dof) + (5 * z3 * z * z + 16 * z3 + 3 * z) / (96 * dof * dof);
  if (!(t < 0) || !Number.isFinite(t)) t = z;
  let lo = -Infinity; // F(lo) < q
  let hi = 0; // F(hi) ≥ q
  const lnQ = Math.log(q);
  for (let i = 0; i < 200; i++) {
    const f = studentTCdf(t, dof);
    if (f === q) return t;
    if (f > q) hi = t;
    else lo = t;
    const density = studentTDensity(t, dof);
    // Newton on ln F: ln F(t) − ln q = 0, d ln F / dt = density / F.
    let next = f > 0 && density > 0 ? t - ((Math.log(f) - lnQ) * f) / density : NaN;
    if (!(next > lo && next < hi)) next = Number.isFinite(lo) ? 0.5 * (lo + hi) : 2 * Math.min(t, -1);
    if (Math.abs(next - t) <= 1e-15 * Math.max(1, Math.abs(t))) return next;
    t = next;
  }
  return t;
}
