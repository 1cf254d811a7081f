/**
 * General order n: rate = k[A]^n, so [A]^(1−n) = [A]0^(1−n) + (n − 1) k t, and
 * A = A∞ + c with c = (C^m − m k t)^(1/m), m = 1 − n, C = A0 − A∞.
 * n itself is fitted (by the general core) and reported with its standard error.
 * Below first order the reactant runs out in finite time: c = 0 once C^m − m k t ≤ 0.
 */
import { AINF, A0, K, ORDER, type FitSeries, type ModelFit, type ModelOptions, type RateLaw } from './modelTypes';
import { fitWithCore } from './coreFit';

/** Orders searched: 0 to 3 covers the rate laws met in solution kinetics (from memory: common practice). */
export const NTH_ORDER_MIN = 0;
export const NTH_ORDER_MAX = 3;

/** |1 − n| below this is treated as this far from 1, where the closed form would divide by ~0. */
const NEAR_FIRST = 1e-4;

function mOf(n: number): number {
  const m = 1 - n;
  if (Math.abs(m) >= NEAR_FIRST) return m;
  return m < 0 ? -NEAR_FIRST : NEAR_FIRST;
}

// The reacting part at τ, computed once per call into module scratch (no object per
// evaluation: this runs for every reading at every iteration).
let rc = 0, rb = 0, rm = 0, rC = 0;
function reacting(tau: number, p: Float64Array): void {
  rC = Math.max(p[A0] - p[AINF], 0);
  rm = mOf(p[ORDER]);
  if (rC === 0) { rc = 0; rb = 0; return; }
  rb = Math.pow(rC, rm) - rm * p[K] * tau;
  rc = rb > 0 ? Math.pow(rb, 1 / rm) : 0;
}

export const nthOrderLaw: RateLaw = {
  name: 'nth',
  parameterNames: ['k', 'a0', 'aInf', 'n'],
  value: (tau, p) => { reacting(tau, p); return p[AINF] + rc; },
  gradient: (tau, p, out) => {
    reacting(tau, p);
    const c = rc, b = rb, m = rm, C = rC;
    if (c === 0 || C === 0) { out[K] = 0; out[A0] = 0; out[AINF] = 1; out[ORDER] = 0; return; }
    // ln c = ln b / m: differentiate through b = C^m − m k t.
    const cm = b + m * p[K] * tau; // C^m, already inside b
    out[K] = (-c * tau) / b;
    const dcdC = (c * cm) / (C * b);
    out[A0] = dcdC;
    out[AINF] = 1 - dcdC;
    const dlnc_dm = -Math.log(b) / (m * m) + (cm * Math.log(C) - p[K] * tau) / (m * b);
    out[ORDER] = -c * dlnc_dm; // n = 1 − m
  },
  curvature: (tau, p) => {
    // dc/dt = −k c^n, so d²c/dt² = n k² c^(2n−1).
    reacting(tau, p);
    const n = p[ORDER];
    return rc > 0 ? n * p[K] * p[K] * Math.pow(rc, 2 * n - 1) : 0;
  },
};

export function fitNthOrder(s: FitSeries, opts: ModelOptions & { start?: Float64Array }): ModelFit {
  const start = opts.previous && opts.previous.every(Number.isFinite) ? opts.previous : opts.start;
  if (!start) {
    const p = new Float64Array(4);
    p[ORDER] = 1;
    return fitWithCore('nth', nthOrderLaw, s, p, opts, { orderMin: NTH_ORDER_MIN, orderMax: NTH_ORDER_MAX });
  }
  return fitWithCore('nth', nthOrderLaw, s, start, opts, { orderMin: NTH_ORDER_MIN, orderMax: NTH_ORDER_MAX });
}
