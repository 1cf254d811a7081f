/**
 * First order: rate = k[A], so A = A∞ + (A0 − A∞) e^(−kt), falling (A0 > A∞, the followed
 * species used up) or rising (A0 < A∞, an absorbing product formed) alike.
 * Solved by variable projection: for a given k the model is linear in A∞ and
 * C = A0 − A∞, so those come from a 2×2 weighted least-squares solve and only k is
 * searched (on ln k, where the profile χ² is well shaped). This cannot wander off in
 * the way a joint 3-parameter search can when A∞ and k trade against each other.
 */
import { AINF as AINF_INDEX, A0 as A0_INDEX, K as K_INDEX, type FitSeries, type ModelFit, type ModelOptions, type RateLaw } from './modelTypes';
import { aInfAtBoundWarning, failedModelFit, finishFit } from './rateLawStatistics';
// The parameter indices read once into module constants: an imported binding is a property
// read through a getter in some module loaders (the test runner's, tsx's), and these are
// read for every reading at every iteration.
const AINF = AINF_INDEX, A0 = A0_INDEX, K = K_INDEX;

export const firstOrderLaw: RateLaw = {
  name: 'first',
  parameterNames: ['k', 'a0', 'aInf'],
  value: (tau, p) => p[AINF] + (p[A0] - p[AINF]) * Math.exp(-p[K] * tau),
  gradient: (tau, p, out) => {
    const e = Math.exp(-p[K] * tau);
    out[K] = -tau * (p[A0] - p[AINF]) * e;
    out[A0] = e;
    out[AINF] = 1 - e;
  },
  curvature: (tau, p) => p[K] * p[K] * (p[A0] - p[AINF]) * Math.exp(-p[K] * tau),
};

interface Linear { chi: number; aInf: number; c: number; aInfHeld: boolean; side: 'lower' | 'upper' | null }

/**
 * Best A∞ and C = A0 − A∞ for a given k, within the bounds: aInfMin ≤ A∞ ≤ aInfMax and
 * C on the run's side of zero (C ≥ 0 falling, C ≤ 0 rising). Rising and falling runs are
 * the same curve, A = A∞ + C e^(−kt), with C of either sign.
 */
function solveLinear(s: FitSeries, k: number, opts: ModelOptions, yMean: number): Linear {
  // Basis g = bin mean of e^(−kτ) ≈ e^(−kτ̄)(1 + ½k²v). Signals are taken about their
  // weighted mean so that χ² is not the small difference of large sums.
  const dir = opts.direction ?? 1;
  let sw = 0, sg = 0, sgg = 0, sy = 0, sgy = 0, syy = 0;
  for (let i = 0; i < s.count; i++) {
    const w = s.w[i], y = s.y[i] - yMean;
    const g = Math.exp(-k * s.tau_s[i]) * (1 + 0.5 * k * k * s.v[i]);
    sw += w; sg += w * g; sgg += w * g * g; sy += w * y; sgy += w * g * y; syy += w * y * y;
  }
  const chiOf = (a: number, c: number): number => syy + a * a * sw + c * c * sgg - 2 * a * sy - 2 * c * sgy + 2 * a * c * sg;
  const withA = (aAbs: number, side: Linear['side']): Linear => {
    const a = aAbs - yMean;
    // C given A∞ = a: minimise Σw(y − a − C g)², on the run's side of zero.
    const c = dir * Math.max(0, dir * (sgg > 0 ? (sgy - a * sg) / sgg : 0));
    return { chi: chiOf(a, c), aInf: aAbs, c, aInfHeld: true, side };
  };
  if (opts.fixedAInf !== undefined) return withA(opts.fixedAInf, null);
  const lo = opts.aInfMin, hi = opts.aInfMax ?? Number.POSITIVE_INFINITY;
  const det = sw * sgg - sg * sg;
  if (det > 1e-14 * sw * sgg) {
    const a = (sy * sgg - sg * sgy) / det;
    const c = (sw * sgy - sg * sy) / det;
    if (a + yMean >= lo && a + yMean <= hi && dir * c >= 0) return { chi: chiOf(a, c), aInf: a + yMean, c, aInfHeld: false, side: null };
  }
  // On a bound: A∞ at its floor or its ceiling, or C = 0 (A∞ = the weighted mean).
  let best: Linear = { chi: syy - (sy * sy) / sw, aInf: yMean + sy / sw, c: 0, aInfHeld: true, side: null };
  for (const [v, side] of [[lo, 'lower'], [hi, 'upper']] as const) {
    if (!Number.isFinite(v)) continue;
    const cand = withA(v, side);
    if (cand.chi < best.chi) best = cand;
  }
  return best;
}

/** Profile χ² over ln k: coarse scan (cold) or local bracket (warm), then golden section. */
export function fitFirstOrder(s: FitSeries, opts: ModelOptions): ModelFit {
  const p = new Float64Array(3);
  if (s.count < 4) return failedModelFit('first', 'first order: too few points for a fit');
  let span = 0;
  for (let i = 0; i < s.count; i++) span = Math.max(span, s.tau_s[i]);
  span = Math.max(span, 1e-9);
  let sw = 0, swy = 0;
  for (let i = 0; i < s.count; i++) { sw += s.w[i]; swy += s.w[i] * s.y[i]; }
  const yMean = sw > 0 ? swy / sw : 0;
  const prof = (lnk: number): number => solveLinear(s, Math.exp(lnk), opts, yMean).chi;
  const kLo = Math.log(1e-3 / span), kHi = Math.log(1e3 / span);
  let lo = kLo, hi = kHi;
  let bracketed = false;
  const prev = opts.previous;
  if (prev && prev[K] > 0 && Number.isFinite(prev[K])) {
    // Warm start: a bracket of ±5% around the last k, moved and widened (a few times
    // only) while the minimum sits on an edge; failing that, the cold scan below.
    let c = Math.min(kHi, Math.max(kLo, Math.log(prev[K])));
    let h = 0.05;
    for (let tries = 0; tries < 6; tries++) {
      const fc = prof(c), fl = prof(c - h), fh = prof(c + h);
      if (fc <= fl && fc <= fh) { bracketed = true; break; }
      c = fl < fh ? c - h : c + h;
      h *= 2;
    }
    if (bracketed) { lo = Math.max(kLo, c - h); hi = Math.min(kHi, c + h); }
  }
  if (!bracketed) {
    // Cold start: rate constants from 1/1000 to 1000 reactions per observed span.
    const steps = 36;
    let best = 0, bestChi = Number.POSITIVE_INFINITY;
    for (let j = 0; j <= steps; j++) {
      const chi = prof(kLo + ((kHi - kLo) * j) / steps);
      if (chi < bestChi) { bestChi = chi; best = j; }
    }
    lo = kLo + ((kHi - kLo) * Math.max(0, best - 1)) / steps;
    hi = kLo + ((kHi - kLo) * Math.min(steps, best + 1)) / steps;
  }
  // Brent's minimiser on ln k (parabolic steps, golden-section fallback) to 1e-9:
  // the relative precision of k is then far below its standard error.
  const m = brentMinimum(prof, lo, hi, 1e-9);
  const iter = m.iterations;
  const k = polishK(s, Math.exp(m.x), opts, yMean, Math.exp(lo), Math.exp(hi));
  const lin = solveLinear(s, k, opts, yMean);
  p[K] = k; p[A0] = lin.aInf + lin.c; p[AINF] = lin.aInf;
  const warnings: string[] = [];
  if (m.x <= kLo + 1e-6) warnings.push('first order: the rate is too slow to measure over this span');
  const aInfFree = opts.fixedAInf === undefined;
  const side = aInfFree && lin.c !== 0 ? lin.side : null;
  if (side) warnings.push(aInfAtBoundWarning('first', lin.aInf, side));
  // A∞ pinned on a bound (not by the user) still counts as free for the covariance: the
  // data have not fixed it, and leaving it out would make k's CI far too narrow early in a
  // run (k and A∞ trade against each other before the curve bends). The analyzer widens
  // the interval further by the refit without the bound (see boundedEnd.ts).
  if (lin.c === 0) return failedModelFit('first', 'first order: no change found (A0 − A∞ fitted as zero)', warnings);
  return finishFit('first', firstOrderLaw, s, p, [true, true, aInfFree], iter < 200, warnings, side);
}

/**
 * dχ²/dk of the profile at k. By the envelope theorem the linear parameters (A∞, C),
 * optimal at every k, drop out: dχ²/dk = −2 Σ w r C ∂g/∂k, with g = e^(−kτ)(1 + ½k²v)
 * and ∂g/∂k = e^(−kτ)(k v − τ(1 + ½k²v)).
 */
function profileSlope(s: FitSeries, k: number, opts: ModelOptions, yMean: number): number {
  const lin = solveLinear(s, k, opts, yMean);
  let d = 0;
  for (let i = 0; i < s.count; i++) {
    const e = Math.exp(-k * s.tau_s[i]), v = s.v[i], tau = s.tau_s[i];
    const g = e * (1 + 0.5 * k * k * v);
    const r = s.y[i] - lin.aInf - lin.c * g;
    d += s.w[i] * r * lin.c * e * (k * v - tau * (1 + 0.5 * k * k * v));
  }
  return -2 * d;
}

/**
 * Brent's minimiser works from χ² values alone, so it finds k only to about √ε of
 * machine precision (near the minimum χ² is flat to rounding). Two secant steps on the
 * analytic slope dχ²/dk take k to the root of the slope, to near full precision: the same
 * data in other units (a calibrated signal, c = (A − a)/slope) then give the same k.
 * A step is kept only when it is small (the minimum was already bracketed) and stays
 * inside the search interval.
 */
function polishK(s: FitSeries, k: number, opts: ModelOptions, yMean: number, kMin: number, kMax: number): number {
  if (solveLinear(s, k, opts, yMean).c === 0) return k; // no decay: χ² does not depend on k
  for (let it = 0; it < 2; it++) {
    const h = 1e-6 * k;
    const g0 = profileSlope(s, k, opts, yMean);
    const curv = (profileSlope(s, k + h, opts, yMean) - profileSlope(s, k - h, opts, yMean)) / (2 * h);
    if (!(curv > 0) || !Number.isFinite(g0)) return k;
    const next = k - g0 / curv;
    if (!(Math.abs(next - k) <= 1e-4 * k) || next <= kMin || next >= kMax) return k;
    k = next;
  }
  return k;
}

/**
 * Brent's method for a minimum of f on [a, b] (Brent, Algorithms for Minimization
 * without Derivatives, 1973): parabolic interpolation where it behaves, golden
 * section where it does not.
 */
export function brentMinimum(f: (x: number) => number, a: number, b: number, tol: number): { x: number; fx: number; iterations: number } {
  const cgold = 0.3819660112501051;
  let x = a + cgold * (b - a), w = x, v = x;
  let fx = f(x), fw = fx, fv = fx;
  let d = 0, e = 0;
  let it = 0;
  for (; it < 200; it++) {
    const xm = 0.5 * (a + b);
    const tol1 = tol * Math.abs(x) + 1e-12, tol2 = 2 * tol1;
    if (Math.abs(x - xm) <= tol2 - 0.5 * (b - a)) break;
    let golden = true;
    if (Math.abs(e) > tol1) {
      let r = (x - w) * (fx - fv);
      let q = (x - v) * (fx - fw);
      let p = (x - v) * q - (x - w) * r;
      q = 2 * (q - r);
      if (q > 0) p = -p; else q = -q;
      const eTemp = e;
      e = d;
      if (Math.abs(p) < Math.abs(0.5 * q * eTemp) && p > q * (a - x) && p < q * (b - x)) {
        d = p / q;
        const u = x + d;
        if (u - a < tol2 || b - u < tol2) d = xm - x >= 0 ? tol1 : -tol1;
        golden = false;
      }
    }
    if (golden) { e = (x >= xm ? a : b) - x; d = cgold * e; }
    const u = Math.abs(d) >= tol1 ? x + d : x + (d >= 0 ? tol1 : -tol1);
    const fu = f(u);
    if (fu <= fx) {
      if (u >= x) a = x; else b = x;
      v = w; fv = fw; w = x; fw = fx; x = u; fx = fu;
    } else {
      if (u < x) a = u; else b = u;
      if (fu <= fw || w === x) { v = w; fv = fw; w = u; fw = fu; }
      else if (fu <= fv || v === x || v === w) { v = u; fv = fu; }
    }
  }
  return { x, fx, iterations: it };
}
