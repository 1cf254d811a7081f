/**
 * General order n: rate = k[A]^n, so [A]^(1−n) = [A]0^(1−n) + (n − 1) k t, and
 * A = A∞ ± c with c = (|C|^m − m k t)^(1/m), m = 1 − n, C = A0 − A∞ (the sign of C:
 * + for a falling run, − for a rising one, where an absorbing product forms).
 * n itself is fitted (by the general core) and reported with its standard error.
 * Below first order the reactant runs out in finite time: c = 0 once C^m − m k t ≤ 0.
 */
import { AINF as AINF_INDEX, A0 as A0_INDEX, K as K_INDEX, ORDER as ORDER_INDEX, type FitSeries, type ModelFit, type ModelOptions, type RateLaw } from './modelTypes';
import { fitWithCore } from './coreFit';
// The parameter indices read once into module constants: an imported binding is a property
// read through a getter in some module loaders (the test runner's, tsx's), and these are
// read for every reading at every iteration.
const AINF = AINF_INDEX, A0 = A0_INDEX, K = K_INDEX, ORDER = ORDER_INDEX;

/** Orders searched: 0 to 3 covers the rate laws met in solution kinetics (from memory: common practice). */
export const NTH_ORDER_MIN = 0;
export const NTH_ORDER_MAX = 3;

// Written so that it is smooth through n = 1 (no special case, no kink an optimiser could
// stall on): c = C·exp(L), L = ln(1 − m u)/m with u = k t C^(−m), which log1p evaluates
// accurately for small m and which tends to −k t (first order) as m → 0.
// The reacting part at τ goes into module scratch (no object per evaluation: this runs
// for every reading at every iteration).
let rc = 0, rL = 0, ru = 0, rm = 0, rC = 0, rq = 0, rs = 1;
function reacting(tau: number, p: Float64Array): void {
  const C = p[A0] - p[AINF];
  rs = C < 0 ? -1 : 1;
  rC = Math.abs(C);
  rm = 1 - p[ORDER];
  if (rC === 0) { rc = 0; return; }
  ru = p[K] * tau * (rm === 0 ? 1 : Math.pow(rC, -rm));
  rq = 1 - rm * ru; // = b / C^m
  if (rq <= 0) { rc = 0; return; } // below first order the reactant is used up in finite time
  rL = rm === 0 ? -ru : Math.log1p(-rm * ru) / rm;
  rc = rC * Math.exp(rL);
}

export const nthOrderLaw: RateLaw = {
  name: 'nth',
  parameterNames: ['k', 'a0', 'aInf', 'n'],
  value: (tau, p) => { reacting(tau, p); return p[AINF] + rs * rc; },
  gradient: (tau, p, out) => {
    reacting(tau, p);
    if (rc === 0) { out[K] = 0; out[A0] = 0; out[AINF] = 1; out[ORDER] = 0; return; }
    const c = rc, m = rm, u = ru, q = rq, C = rC;
    out[K] = (-rs * c * tau * (m === 0 ? 1 : Math.pow(C, -m))) / q;
    const dcdC = c / (C * q);
    out[A0] = dcdC;
    out[AINF] = 1 - dcdC;
    // ∂L/∂m at fixed u: (−u/(1 − mu) − L)/m, by its series −u²/2 − 2mu³/3 − 3m²u⁴/4 where mu is small.
    const mu = m * u;
    const dLdm = Math.abs(mu) < 1e-3
      ? -0.5 * u * u - (2 / 3) * m * u * u * u - 0.75 * m * m * u * u * u * u
      : (-u / q - rL) / m;
    const dcdm = c * (dLdm + (u * Math.log(C)) / q);
    out[ORDER] = -rs * dcdm; // n = 1 − m
  },
  curvature: (tau, p) => {
    // dc/dt = −k c^n, so d²c/dt² = n k² c^(2n−1).
    reacting(tau, p);
    const n = p[ORDER];
    return rc > 0 ? rs * n * p[K] * p[K] * Math.pow(rc, 2 * n - 1) : 0;
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
