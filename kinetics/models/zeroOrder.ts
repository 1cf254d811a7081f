/**
 * Zero order: rate = k while reactant lasts, so A = A0 − k t until A reaches A∞, then
 * A = A∞ (the reaction has run out). A∞ is not fitted (0, the blank, unless fixed); it
 * only says where the line stops. Before the end the model is a straight line, so the
 * fit is a weighted line through the readings before the end, with the end time
 * (A0 − A∞)/k found by iterating: fit, find the end, refit, until the split is stable.
 */
import { AINF, A0, K, type FitSeries, type ModelFit, type ModelOptions, type RateLaw } from './modelTypes';
import { finishFit } from './rateLawStatistics';

const before = (tau: number, p: Float64Array): boolean => p[K] <= 0 || tau < (p[A0] - p[AINF]) / p[K];

export const zeroOrderLaw: RateLaw = {
  name: 'zero',
  parameterNames: ['k', 'a0', 'aInf'],
  value: (tau, p) => (before(tau, p) ? p[A0] - p[K] * tau : p[AINF]),
  gradient: (tau, p, out) => {
    const on = before(tau, p);
    out[K] = on ? -tau : 0; out[A0] = on ? 1 : 0; out[AINF] = on ? 0 : 1;
  },
  curvature: () => 0,
  binAverage: (tau, v, p) => {
    // The readings of a bin taken as evenly spread over τ̄ ± √(3v); the line is exact
    // on either side of the end, a bin across it averages the line part and the A∞ part.
    const h = Math.sqrt(3 * v);
    const end = p[K] > 0 ? (p[A0] - p[AINF]) / p[K] : Number.POSITIVE_INFINITY;
    if (tau + h <= end) return p[A0] - p[K] * tau;
    if (tau - h >= end) return p[AINF];
    const phi = (end - (tau - h)) / (2 * h);
    return phi * (p[A0] - (p[K] * (tau - h + end)) / 2) + (1 - phi) * p[AINF];
  },
};

/** Weighted line through the pseudo-points with τ below `end` (about their weighted mean time). */
function line(s: FitSeries, end: number): { k: number; a0: number; used: number } | null {
  let sw = 0, st = 0, sy = 0, used = 0;
  for (let i = 0; i < s.count; i++) {
    if (s.tau_s[i] >= end) continue;
    sw += s.w[i]; st += s.w[i] * s.tau_s[i]; sy += s.w[i] * s.y[i]; used++;
  }
  if (used < 3 || !(sw > 0)) return null;
  const tm = st / sw, ym = sy / sw;
  let stt = 0, sty = 0;
  for (let i = 0; i < s.count; i++) {
    if (s.tau_s[i] >= end) continue;
    const d = s.tau_s[i] - tm;
    stt += s.w[i] * d * d;
    sty += s.w[i] * d * (s.y[i] - ym);
  }
  if (!(stt > 0)) return null;
  const slope = sty / stt;
  return { k: -slope, a0: ym - slope * tm, used };
}

export function fitZeroOrder(s: FitSeries, opts: ModelOptions): ModelFit {
  const p = new Float64Array(3);
  p[AINF] = opts.fixedAInf ?? 0;
  const free = [true, true, false];
  let fit = line(s, Number.POSITIVE_INFINITY);
  if (!fit) return finishFit('zero', zeroOrderLaw, s, p, free, false, ['too few points for a zero-order fit']);
  let converged = false;
  for (let iter = 0; iter < 30; iter++) {
    p[K] = fit.k; p[A0] = fit.a0;
    const end = fit.k > 0 ? (fit.a0 - p[AINF]) / fit.k : Number.POSITIVE_INFINITY;
    const next = line(s, end);
    if (!next) break;
    if (next.used === fit.used) { converged = true; break; }
    fit = next;
  }
  p[K] = fit.k; p[A0] = fit.a0;
  polishAcrossEnd(s, p);
  const warnings: string[] = [];
  const end = fit.k > 0 ? (fit.a0 - p[AINF]) / fit.k : Number.POSITIVE_INFINITY;
  let last = 0;
  for (let i = 0; i < s.count; i++) last = Math.max(last, s.tau_s[i]);
  if (end < last) warnings.push(`zero order: the fitted line reaches A∞ at ${end.toFixed(0)} s, before the last reading; later readings sit on the end value`);
  return finishFit('zero', zeroOrderLaw, s, p, free, converged, warnings);
}

/**
 * Where bins straddle the end, the line fit above is slightly off: a few Gauss–Newton
 * steps on the bin averages (finite-difference derivatives; two parameters) finish it.
 */
function polishAcrossEnd(s: FitSeries, p: Float64Array): void {
  let straddles = false;
  const end0 = p[K] > 0 ? (p[A0] - p[AINF]) / p[K] : Number.POSITIVE_INFINITY;
  for (let i = 0; i < s.count && !straddles; i++) {
    const h = Math.sqrt(3 * s.v[i]);
    straddles = h > 0 && Math.abs(s.tau_s[i] - end0) < h;
  }
  if (!straddles) return;
  const q = new Float64Array(3);
  for (let iter = 0; iter < 8; iter++) {
    let a11 = 0, a12 = 0, a22 = 0, b1 = 0, b2 = 0;
    const hk = 1e-7 * Math.abs(p[K]) + 1e-15, ha = 1e-7 * Math.max(Math.abs(p[A0]), 1e-3);
    for (let i = 0; i < s.count; i++) {
      const t = s.tau_s[i], v = s.v[i], w = s.w[i];
      const f = zeroOrderLaw.binAverage!(t, v, p);
      q.set(p); q[K] += hk; const dk = (zeroOrderLaw.binAverage!(t, v, q) - f) / hk;
      q.set(p); q[A0] += ha; const da = (zeroOrderLaw.binAverage!(t, v, q) - f) / ha;
      const r = s.y[i] - f;
      a11 += w * dk * dk; a12 += w * dk * da; a22 += w * da * da; b1 += w * dk * r; b2 += w * da * r;
    }
    const det = a11 * a22 - a12 * a12;
    if (!(det > 0)) return;
    const dK = (a22 * b1 - a12 * b2) / det, dA = (a11 * b2 - a12 * b1) / det;
    p[K] += dK; p[A0] += dA;
    if (Math.abs(dK) <= 1e-10 * Math.abs(p[K]) && Math.abs(dA) <= 1e-10 * Math.abs(p[A0])) return;
  }
}
