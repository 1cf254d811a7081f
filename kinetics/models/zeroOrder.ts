/**
 * Zero order: rate = k, so A = A0 − k t. A∞ is not fitted (0, the blank, unless
 * fixed); it only sets where the reaction ends, for the half-life. The model is
 * linear in (A0, k), so the weighted least-squares solution is closed form.
 */
import { AINF, A0, K, type FitSeries, type ModelFit, type ModelOptions, type RateLaw } from './modelTypes';
import { finishFit } from './fitStatistics';

export const zeroOrderLaw: RateLaw = {
  name: 'zero',
  parameterNames: ['k', 'a0', 'aInf'],
  value: (tau, p) => p[A0] - p[K] * tau,
  gradient: (tau, _p, out) => { out[K] = -tau; out[A0] = 1; out[AINF] = 0; },
  curvature: () => 0,
};

export function fitZeroOrder(s: FitSeries, opts: ModelOptions): ModelFit {
  // Weighted straight line y = a + b τ about the weighted mean time (numerically stable).
  let sw = 0, st = 0, sy = 0;
  for (let i = 0; i < s.count; i++) { sw += s.w[i]; st += s.w[i] * s.tau_s[i]; sy += s.w[i] * s.y[i]; }
  const p = new Float64Array(3);
  p[AINF] = opts.fixedAInf ?? 0;
  const free = [true, true, false];
  if (s.count < 3 || !(sw > 0)) {
    return finishFit('zero', zeroOrderLaw, s, p, free, false, ['too few points for a zero-order fit']);
  }
  const tm = st / sw, ym = sy / sw;
  let stt = 0, sty = 0;
  for (let i = 0; i < s.count; i++) {
    const d = s.tau_s[i] - tm;
    stt += s.w[i] * d * d;
    sty += s.w[i] * d * (s.y[i] - ym);
  }
  const slope = stt > 0 ? sty / stt : 0;
  p[K] = -slope;
  p[A0] = ym - slope * tm;
  return finishFit('zero', zeroOrderLaw, s, p, free, stt > 0, []);
}
