/**
 * Second order: rate = k[A]², with [A] the reacting part of the signal, c = |A − A∞|:
 * 1/c = 1/|C| + k t, so A = A∞ + C / (1 + k |C| t) with C = A0 − A∞, positive for a
 * falling run and negative for a rising one (an absorbing product formed). Fitted by the
 * general core.
 */
import { AINF as AINF_INDEX, A0 as A0_INDEX, K as K_INDEX, type FitSeries, type ModelFit, type ModelOptions, type RateLaw } from './modelTypes';
import { fitWithCore } from './coreFit';
// The parameter indices read once into module constants: an imported binding is a property
// read through a getter in some module loaders (the test runner's, tsx's), and these are
// read for every reading at every iteration.
const AINF = AINF_INDEX, A0 = A0_INDEX, K = K_INDEX;

export const secondOrderLaw: RateLaw = {
  name: 'second',
  parameterNames: ['k', 'a0', 'aInf'],
  value: (tau, p) => {
    const c = p[A0] - p[AINF];
    return p[AINF] + c / (1 + p[K] * Math.abs(c) * tau);
  },
  gradient: (tau, p, out) => {
    const c = p[A0] - p[AINF];
    const d = 1 + p[K] * Math.abs(c) * tau;
    out[K] = (-c * Math.abs(c) * tau) / (d * d);
    const dc = 1 / (d * d); // ∂/∂C of C/(1 + k|C|t), either sign of C
    out[A0] = dc;
    out[AINF] = 1 - dc;
  },
  curvature: (tau, p) => {
    const c = p[A0] - p[AINF];
    const d = 1 + p[K] * Math.abs(c) * tau;
    return (2 * p[K] * p[K] * c * c * c) / (d * d * d);
  },
};

/**
 * Start from the data: A∞ a little beyond the last readings (below them for a falling
 * run, above for a rising one), then k from the slope of the linearised view
 * 1/|A − A∞| against t, using only readings well away from A∞ (near A∞ the reciprocal
 * blows up the noise).
 */
export function secondOrderStart(s: FitSeries, opts: ModelOptions): Float64Array {
  const dir = opts.direction ?? 1;
  let yMin = Number.POSITIVE_INFINITY, yMax = Number.NEGATIVE_INFINITY;
  for (let i = 0; i < s.count; i++) { yMin = Math.min(yMin, s.y[i]); yMax = Math.max(yMax, s.y[i]); }
  const span = yMax - yMin;
  const beyond = dir > 0 ? Math.max(opts.aInfMin, yMin - 0.05 * span) : Math.min(opts.aInfMax ?? Number.POSITIVE_INFINITY, yMax + 0.05 * span);
  const aInf = opts.fixedAInf ?? beyond;
  const far = dir > 0 ? yMax - aInf : aInf - yMin;
  let sw = 0, st = 0, sz = 0, stt = 0, stz = 0;
  for (let i = 0; i < s.count; i++) {
    const d = dir * (s.y[i] - aInf);
    if (!(d > 0.2 * far)) continue;
    const z = 1 / d;
    const w = s.w[i] * d * d * d * d; // σ_z = σ_y / d²
    sw += w; st += w * s.tau_s[i]; sz += w * z; stt += w * s.tau_s[i] * s.tau_s[i]; stz += w * s.tau_s[i] * z;
  }
  const det = sw * stt - st * st;
  const slope = det > 0 ? (sw * stz - st * sz) / det : 0;
  const intercept = det > 0 ? (sz - slope * st) / sw : 1 / Math.max(far, 1e-9);
  const p = new Float64Array(3);
  p[K] = Math.max(slope, 1e-12);
  p[AINF] = aInf;
  p[A0] = aInf + dir * (intercept > 0 ? 1 / intercept : far);
  return p;
}

export function fitSecondOrder(s: FitSeries, opts: ModelOptions): ModelFit {
  const start = opts.previous && opts.previous.every(Number.isFinite) ? opts.previous : secondOrderStart(s, opts);
  return fitWithCore('second', secondOrderLaw, s, start, opts, { rateOrder: 2 });
}
