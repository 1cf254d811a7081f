import { describe, expect, it } from 'vitest';
import { DEMO_RUN } from '../reactionModel';
import { simulatedSeries } from '../../test/fixtures/simulatedFitSeries';
import { fitNthOrder } from './nthOrder';
import { fitNthOrderSound } from './nthOrderStart';
import { fitFirstOrder } from './firstOrder';
import { fitSecondOrder } from './secondOrder';
import { fitZeroOrder } from './zeroOrder';

// A fine, long n = 0.5 run (t½ 198 s at A0 − A∞ = 0.645); the reference is the simulator's n.
const k = (2 ** -0.5 - 1) / (-0.5 * 198 * 0.645 ** -0.5);
const s = simulatedSeries({ ...DEMO_RUN, order: 0.5, k, dt_s: 0.2, duration_s: 1200, seed: 3 });
const base = { aInfMin: -0.06, aInfMax: 5, direction: 1 as const };
// The degenerate early answer seen in the field: a curve collapsed onto A∞ before the first reading.
const degenerate = Float64Array.from([526, 0.65, 0.005, 1.01]);

describe('the n-th order warm start', () => {
  it('a degenerate warm start is dropped and the fit restarts cold: n = 0.5, t½ 198 s', () => {
    const integer = [fitZeroOrder(s, base), fitFirstOrder(s, base), fitSecondOrder(s, base)];
    const nth = fitNthOrderSound(s, base, degenerate, integer);
    expect(nth.ok).toBe(true);
    if (nth.ok) {
      expect(nth.params[3]).toBeCloseTo(0.5, 2);
      expect(nth.params[0]).toBeCloseTo(k, 4);
    }
  });
  it('negative control: the warm start alone (the earlier rule) stays on the degenerate answer', () => {
    const stuck = fitNthOrder(s, { ...base, previous: degenerate });
    expect(!stuck.ok || Math.abs(stuck.params[3] - 0.5) > 0.1).toBe(true);
  });
});
