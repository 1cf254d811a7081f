import { describe, expect, it } from 'vitest';
import { RunAnalyzer } from './runAnalyzer';
import { DEMO_RUN, simulateRun } from './reactionModel';
import { fitNthOrder } from './models/nthOrder';
import type { FitSeries } from './models/modelTypes';

// A long, finely sampled run of order 0.5 (t½ 198 s at A0 − A∞ = 0.645, demo noise; the
// reference is the simulator's own n and k). The n-th order warm start once locked onto a
// degenerate early fit (a curve collapsed onto A∞ before the first reading: n ≈ 1.01,
// k ≈ 526, t½ ≈ 0.0014 s) and kept it at every later refit.
const n = 0.5;
const k = (2 ** (n - 1) - 1) / ((n - 1) * 198 * 0.645 ** (n - 1)); // closed form of t½ for order n
const spec = { ...DEMO_RUN, order: n, k, dt_s: 0.1, duration_s: 3000, seed: 4 };

interface NthAtRefit { time_s: number; order: number | null; k: number | null; halfLife_s: number | null }

/** Every refit's n-th order answer from 2 half-lives on (the fit exists only past 50% converted). */
function laterRefitsWrong(refits: NthAtRefit[], dt_s: number): string[] {
  const wrong: string[] = [];
  for (const r of refits) {
    if (r.time_s < 2 * 198) continue;
    if (r.order === null || Math.abs(r.order - n) > 0.05 || r.halfLife_s === null || r.halfLife_s < 10 * dt_s) {
      wrong.push(`at ${r.time_s.toFixed(0)} s: n = ${r.order}, k = ${r.k}, t½ = ${r.halfLife_s}`);
    }
  }
  return wrong;
}

function feed(time_s: Float64Array, absorbance: Float64Array, stride: number): { refits: NthAtRefit[]; order: number | null } {
  const a = new RunAnalyzer();
  const refits: NthAtRefit[] = [];
  let seen = 0;
  for (let i = 0; i < time_s.length; i += stride) {
    a.add(time_s[i]!, absorbance[i]!);
    if (a.refits !== seen) {
      seen = a.refits;
      const m = a.result().models.nth;
      refits.push({ time_s: time_s[i]!, order: m.order, k: m.k, halfLife_s: m.halfLife_s });
    }
  }
  return { refits, order: a.flush().models.nth.order };
}

describe('n-th order on a long, fine run of order 0.5, through the analyzer', () => {
  const run = simulateRun(spec);

  it('every refit from 2 half-lives on reports n ≈ 0.5 with a real half-life, never the collapsed curve', { timeout: 120_000 }, () => {
    const { refits, order } = feed(run.time_s, run.absorbance, 1);
    expect(refits.filter((r) => r.time_s >= 2 * 198).length).toBeGreaterThan(20);
    expect(laterRefitsWrong(refits, spec.dt_s)).toEqual([]);
    expect(order!).toBeCloseTo(0.5, 2);
  });

  it('the same readings decimated by 2 give the same n (0.499 ± 0.01) and pass the same check', { timeout: 120_000 }, () => {
    const { refits, order } = feed(run.time_s, run.absorbance, 2);
    expect(laterRefitsWrong(refits, 2 * spec.dt_s)).toEqual([]);
    expect(Math.abs(order! - 0.499)).toBeLessThan(0.01);
  });

  it('negative control: refits warm-started from the collapsed curve without the soundness check fail the check', () => {
    // The earlier rule: each refit starts from the last answer, whatever its χ².
    let previous = Float64Array.from([526, 0.65, 0.005, 1.01]);
    const refits: NthAtRefit[] = [];
    for (const end_s of [600, 1200, 1800, 2400, 3000]) {
      const count = Math.round(end_s / spec.dt_s / 20);
      const s: FitSeries = {
        tau_s: new Float64Array(count), y: new Float64Array(count), w: new Float64Array(count), v: new Float64Array(count),
        n: new Float64Array(count).fill(1), count, readings: count, withinChiSquare: 0, withinRss: 0, multiBins: 0,
      };
      for (let j = 0; j < count; j++) {
        s.tau_s[j] = run.time_s[20 * j]!; s.y[j] = run.absorbance[20 * j]!;
        const sd = 0.434 * spec.sigmaT / 10 ** -Math.max(0, s.y[j]!); s.w[j] = 1 / (sd * sd);
      }
      const f = fitNthOrder(s, { aInfMin: -0.06, aInfMax: 5, direction: 1, previous });
      if (f.ok) previous = Float64Array.from(f.params);
      const c = f.ok ? f.params[1]! - f.params[2]! : 0;
      const ord = f.ok ? f.params[3]! : null;
      const half = f.ok && ord !== null ? (2 ** (ord - 1) - 1) / ((ord - 1) * f.params[0]! * c ** (ord - 1)) : null;
      refits.push({ time_s: end_s, order: ord, k: f.ok ? f.params[0]! : null, halfLife_s: half });
    }
    expect(laterRefitsWrong(refits, spec.dt_s).length).toBeGreaterThan(0);
  });
});
