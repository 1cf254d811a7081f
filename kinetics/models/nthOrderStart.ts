/**
 * Where the n-th order fit starts, and when to distrust a warm start. A warm start (the
 * previous refit's answer) can lock onto a degenerate early fit: a curve that collapsed
 * onto A∞ before the first reading (k in the hundreds, t½ far below the reading
 * interval) has no gradient left in k or n, so every later refit stays there. Since the
 * n-th order family holds the first- and second-order curves (n = 1, n = 2), its χ² can
 * never rightly exceed theirs: a warm answer that does, or fails, is dropped and the fit
 * restarts cold from each integer order in turn (within one unit of reduced χ²) (n = 0.05, 1.01, 2), keeping the lowest χ².
 */
import type { FitSeries, FittedModel, ModelFit, ModelOptions } from './modelTypes';
import { ORDER } from './modelTypes';
import { fitNthOrder } from './nthOrder';
import { failedModelFit } from './rateLawStatistics';

export function fitNthOrderSound(s: FitSeries, base: ModelOptions, warm: Float64Array | undefined, integer: ModelFit[]): ModelFit {
  const fitted = integer.filter((x): x is FittedModel => x.ok).sort((a, b) => a.aicc - b.aicc);
  const nested = fitted.filter((x) => x.model === 'first' || x.model === 'second');
  // Allowed above the better nested fit: one unit of reduced χ² (a difference the noise
  // makes anyway), so that a sound warm start is not refitted cold at every refit.
  const best = nested.reduce<FittedModel | null>((b, x) => (!b || x.chiSquare < b.chiSquare ? x : b), null);
  const ceiling = best ? best.chiSquare * (1 + 1 / best.dof) : Number.POSITIVE_INFINITY;
  const sound = (x: ModelFit): boolean => x.ok && x.chiSquare <= ceiling;
  let nth: ModelFit = warm ? fitNthOrder(s, { ...base, previous: warm }) : failedModelFit('nth', 'n-th order: no start yet');
  if (sound(nth)) return nth;
  for (const x of fitted) {
    const st = new Float64Array(4);
    st.set(x.params);
    st[ORDER] = x.model === 'zero' ? 0.05 : x.model === 'first' ? 1.01 : 2;
    const alt = fitNthOrder(s, { ...base, previous: st });
    if (alt.ok && (!nth.ok || alt.chiSquare < nth.chiSquare)) nth = alt;
    if (sound(nth)) break;
  }
  return nth;
}
