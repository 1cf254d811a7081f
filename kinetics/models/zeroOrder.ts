/**
 * Zero order: rate = k while the reactant lasts, so A = A0 − k t (falling) or A0 + k t
 * (rising, an absorbing product formed) until A reaches the end value A∞, then A = A∞.
 *
 * The end value is fitted when the run shows it: the model is then a hinge, a line that
 * meets a plateau, y = A0 ∓ k·min(τ, τe) with τe = |A0 − A∞|/k, and for each τe the line
 * is a weighted least-squares solve, so only τe is searched (a scan over the readings'
 * times from prefix sums, then Brent's method between the best neighbours). The plateau
 * is taken only when at least ZERO_MIN_PLATEAU readings lie on it and it lowers χ² by
 * more than an F-test at about 95% asks (Δχ² > 4 reduced χ²); otherwise the run has
 * not shown its end and A∞ is held (the user's value, else the blank for a falling run
 * and the photometer's ceiling for a rising one), so that A0 − A∞ stays an honest upper
 * bound on what can still react. Half-life and progress use A0 − A∞ throughout.
 */
import { AINF as AINF_INDEX, A0 as A0_INDEX, K as K_INDEX, type FitSeries, type ModelFit, type ModelOptions, type RateLaw } from './modelTypes';
import { brentMinimum } from './firstOrder';
import { failedModelFit, finishFit } from './rateLawStatistics';
// The parameter indices read once into module constants: an imported binding is a property
// read through a getter in some module loaders (the test runner's, tsx's), and these are
// read for every reading at every iteration.
const AINF = AINF_INDEX, A0 = A0_INDEX, K = K_INDEX;

export const ZERO_MIN_PLATEAU = 3;

const endOf = (p: Float64Array): number => (p[K] > 0 ? Math.abs(p[A0] - p[AINF]) / p[K] : Number.POSITIVE_INFINITY);
const dirOf = (p: Float64Array): number => (p[A0] - p[AINF] < 0 ? -1 : 1);

export const zeroOrderLaw: RateLaw = {
  name: 'zero',
  parameterNames: ['k', 'a0', 'aInf'],
  value: (tau, p) => (tau < endOf(p) ? p[A0] - dirOf(p) * p[K] * tau : p[AINF]),
  gradient: (tau, p, out) => {
    const on = tau < endOf(p);
    out[K] = on ? -dirOf(p) * tau : 0; out[A0] = on ? 1 : 0; out[AINF] = on ? 0 : 1;
  },
  curvature: () => 0,
  binAverage: (tau, v, p) => {
    // The readings of a bin taken as evenly spread over τ̄ ± √(3v); the line is exact
    // on either side of the end, a bin across it averages the line part and the A∞ part.
    const h = Math.sqrt(3 * v);
    const end = endOf(p), s = dirOf(p);
    if (tau + h <= end) return p[A0] - s * p[K] * tau;
    if (tau - h >= end) return p[AINF];
    const phi = (end - (tau - h)) / (2 * h);
    return phi * (p[A0] - (s * p[K] * (tau - h + end)) / 2) + (1 - phi) * p[AINF];
  },
};

/** Weighted line through the pseudo-points with τ below `end`: slope and value at τ = 0. */
function line(s: FitSeries, end: number): { slope: number; a0: number; used: number } | null {
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
  return { slope, a0: ym - slope * tm, used };
}

/** Prefix sums of the centred series, so χ² of the hinge at any τe costs O(log n). */
class HingeSums {
  private pw: Float64Array; private pt: Float64Array; private ptt: Float64Array; private py: Float64Array; private pty: Float64Array;
  readonly sw: number; readonly sy: number; readonly syy: number; readonly t0: number; readonly y0: number;
  constructor(private s: FitSeries) {
    const n = s.count;
    let sw = 0, st = 0, sy = 0;
    for (let i = 0; i < n; i++) { sw += s.w[i]; st += s.w[i] * s.tau_s[i]; sy += s.w[i] * s.y[i]; }
    this.t0 = st / sw; this.y0 = sy / sw;
    this.pw = new Float64Array(n + 1); this.pt = new Float64Array(n + 1); this.ptt = new Float64Array(n + 1);
    this.py = new Float64Array(n + 1); this.pty = new Float64Array(n + 1);
    let syy = 0, syc = 0;
    for (let i = 0; i < n; i++) {
      const w = s.w[i], t = s.tau_s[i] - this.t0, y = s.y[i] - this.y0;
      this.pw[i + 1] = this.pw[i] + w; this.pt[i + 1] = this.pt[i] + w * t; this.ptt[i + 1] = this.ptt[i] + w * t * t; // between-bin sums only, as line() uses (the within-bin parts cancel for a line)
      this.py[i + 1] = this.py[i] + w * y; this.pty[i + 1] = this.pty[i] + w * t * y;
      syy += w * y * y; syc += w * y;
    }
    this.sw = sw; this.sy = syc; this.syy = syy;
  }
  /** Points with τ < end (the series is in time order). */
  before(end: number): number {
    let lo = 0, hi = this.s.count;
    while (lo < hi) { const m = (lo + hi) >> 1; if (this.s.tau_s[m] < end) lo = m + 1; else hi = m; }
    return lo;
  }
  /** χ², slope and A0 of y = A0 + b·min(τ, τe). */
  at(end: number): { chi: number; slope: number; a0: number; j: number } {
    const j = this.before(end), e = j < this.s.count ? end - this.t0 : 0; // no point on the plateau: e drops out
    const rest = this.sw - this.pw[j];
    const sx = this.pt[j] + e * rest, sxx = this.ptt[j] + e * e * rest, sxy = this.pty[j] + e * (this.sy - this.py[j]);
    const cxx = sxx - (sx * sx) / this.sw, cxy = sxy - (sx * this.sy) / this.sw, cyy = this.syy - (this.sy * this.sy) / this.sw;
    const slope = cxx > 0 ? cxy / cxx : 0;
    const intercept = (this.sy - slope * sx) / this.sw; // at x = 0, i.e. τ = t0
    return { chi: cyy - slope * cxy, slope, a0: this.y0 + intercept - slope * this.t0, j };
  }
}

export function fitZeroOrder(s: FitSeries, opts: ModelOptions): ModelFit {
  const dir = opts.direction ?? 1;
  const p = new Float64Array(3);
  const first = line(s, Number.POSITIVE_INFINITY);
  if (!first || s.count < 4) return failedModelFit('zero', 'zero order: too few points for a fit');
  const last = s.tau_s[s.count - 1];
  const warnings: string[] = [];
  if (opts.fixedAInf === undefined && s.count >= 3 + ZERO_MIN_PLATEAU) {
    const sums = new HingeSums(s);
    const lineChi = sums.at(Number.POSITIVE_INFINITY).chi;
    let bestI = -1, bestChi = lineChi;
    for (let i = 3; i <= s.count - ZERO_MIN_PLATEAU; i++) {
      const c = sums.at(s.tau_s[i]).chi;
      if (c < bestChi) { bestChi = c; bestI = i; }
    }
    if (bestI > 0) {
      const lo = s.tau_s[bestI - 1], hi = s.tau_s[Math.min(s.count - ZERO_MIN_PLATEAU, bestI + 1)];
      const m = brentMinimum((e) => sums.at(e).chi, lo, Math.max(hi, lo + 1e-12), 1e-10);
      const h = sums.at(m.x);
      const dof = s.readings - 3 - s.multiBins;
      const plateauReadings = s.count - h.j;
      const k = -dir * h.slope;
      if (k > 0 && dof > 0 && plateauReadings >= ZERO_MIN_PLATEAU && lineChi - h.chi > 4 * ((h.chi + s.withinChiSquare) / dof)) {
        p[K] = k; p[A0] = h.a0; p[AINF] = h.a0 + h.slope * m.x;
        polishAcrossEnd(s, p, true);
        return finishFit('zero', zeroOrderLaw, s, p, [true, true, true], true, warnings);
      }
    }
  }
  // No plateau in view: a line, with A∞ held where the run cannot go beyond.
  p[AINF] = opts.fixedAInf ?? (dir > 0 ? (opts.blank ?? 0) : (opts.aInfMax ?? Number.POSITIVE_INFINITY));
  if (!Number.isFinite(p[AINF])) p[AINF] = first.a0 + first.slope * last;
  let fit = first;
  let converged = false;
  for (let iter = 0; iter < 30; iter++) {
    p[K] = -dir * fit.slope; p[A0] = fit.a0;
    const next = line(s, endOf(p));
    if (!next) break;
    if (next.used === fit.used) { converged = true; break; }
    fit = next;
  }
  p[K] = -dir * fit.slope; p[A0] = fit.a0;
  if (!(p[K] > 0)) return failedModelFit('zero', 'zero order: the readings do not move in the run\'s direction', warnings);
  polishAcrossEnd(s, p, false);
  const end = endOf(p);
  if (end < last) warnings.push(`zero order: the fitted line reaches the held end value ${p[AINF].toPrecision(3)} at ${end.toFixed(0)} s, before the last reading`);
  return finishFit('zero', zeroOrderLaw, s, p, [true, true, false], converged, warnings);
}

/**
 * Where bins straddle the end, the solve above treats each bin as sitting at its mean
 * time: a few Gauss–Newton steps on the bin averages (finite-difference derivatives;
 * two or three parameters) finish it.
 */
function polishAcrossEnd(s: FitSeries, p: Float64Array, aInfFree: boolean): void {
  let straddles = false;
  const end0 = endOf(p);
  for (let i = 0; i < s.count && !straddles; i++) {
    const h = Math.sqrt(3 * s.v[i]);
    straddles = h > 0 && Math.abs(s.tau_s[i] - end0) < h;
  }
  if (!straddles) return;
  const idx = aInfFree ? [K, A0, AINF] : [K, A0];
  const m = idx.length;
  const q = new Float64Array(3);
  const d = new Float64Array(m);
  for (let iter = 0; iter < 8; iter++) {
    const a = new Float64Array(m * m), b = new Float64Array(m);
    const hs = idx.map((j) => (j === K ? 1e-7 * Math.abs(p[K]) + 1e-15 : 1e-7 * Math.max(Math.abs(p[j]), 1e-3)));
    for (let i = 0; i < s.count; i++) {
      const t = s.tau_s[i], v = s.v[i], w = s.w[i];
      const f = zeroOrderLaw.binAverage!(t, v, p);
      for (let c = 0; c < m; c++) { q.set(p); q[idx[c]] += hs[c]; d[c] = (zeroOrderLaw.binAverage!(t, v, q) - f) / hs[c]; }
      const r = s.y[i] - f;
      for (let r1 = 0; r1 < m; r1++) { b[r1] += w * d[r1] * r; for (let c = 0; c < m; c++) a[r1 * m + c] += w * d[r1] * d[c]; }
    }
    const step = solveSmall(a, b, m);
    if (!step) return;
    let small = true;
    for (let c = 0; c < m; c++) {
      p[idx[c]] += step[c];
      if (Math.abs(step[c]) > 1e-10 * Math.max(Math.abs(p[idx[c]]), 1e-12)) small = false;
    }
    if (small) return;
  }
}

/** Gaussian elimination with partial pivoting for a 2×2 or 3×3 system; null when singular. */
function solveSmall(a: Float64Array, b: Float64Array, m: number): Float64Array | null {
  const M = Float64Array.from(a), x = Float64Array.from(b);
  for (let c = 0; c < m; c++) {
    let piv = c;
    for (let r = c + 1; r < m; r++) if (Math.abs(M[r * m + c]) > Math.abs(M[piv * m + c])) piv = r;
    if (!(Math.abs(M[piv * m + c]) > 0)) return null;
    if (piv !== c) {
      for (let j = 0; j < m; j++) { const t = M[c * m + j]; M[c * m + j] = M[piv * m + j]; M[piv * m + j] = t; }
      const t = x[c]; x[c] = x[piv]; x[piv] = t;
    }
    for (let r = c + 1; r < m; r++) {
      const f = M[r * m + c] / M[c * m + c];
      for (let j = c; j < m; j++) M[r * m + j] -= f * M[c * m + j];
      x[r] -= f * x[c];
    }
  }
  for (let c = m - 1; c >= 0; c--) {
    let v = x[c];
    for (let j = c + 1; j < m; j++) v -= M[c * m + j] * x[j];
    x[c] = v / M[c * m + c];
  }
  return x;
}
