import { describe, expect, it } from 'vitest';
import { linearRegression } from 'simple-statistics';
import { rateLawFromSeries } from './rateLawSeries';

// Demo scenario (DEMO.md, invented demo numbers): k = 0.35 M⁻¹ s⁻¹, first order in hypochlorite.
const demo = [0.010, 0.020, 0.040].map((c) => ({ concentration_M: c, kObs_perSecond: 0.35 * c }));

describe('rate law from an excess-reagent series', () => {
  it('finds order 1 and k from exact pseudo-first-order constants', () => {
    const r = rateLawFromSeries(demo);
    if (!r.ok) throw new Error(r.error);
    expect(r.order).toBeCloseTo(1, 12);
    expect(r.nearestWholeOrder).toBe(1);
    expect(r.k).toBeCloseTo(0.35, 12);
    expect(r.kUnit).toBe('M^-1 s^-1');
  });

  it('agrees with simple-statistics on the log–log slope of noisy data (independent oracle)', () => {
    const noisy = demo.map((d, i) => ({ ...d, kObs_perSecond: d.kObs_perSecond * [1.04, 0.97, 1.02][i]! }));
    const r = rateLawFromSeries(noisy);
    if (!r.ok) throw new Error(r.error);
    const oracle = linearRegression(noisy.map((d) => [Math.log(d.concentration_M), Math.log(d.kObs_perSecond)]));
    expect(r.order).toBeCloseTo(oracle.m, 10);
    expect(r.wholeOrderConsistent).toBe(true);
    // Through-origin slope Σxy/Σx² (handbook least squares through the origin).
    const sxy = noisy.reduce((s, d) => s + d.concentration_M * d.kObs_perSecond, 0);
    const sxx = noisy.reduce((s, d) => s + d.concentration_M ** 2, 0);
    expect(r.k).toBeCloseTo(sxy / sxx, 12);
  });

  it('finds order 2 when k_obs grows with the square of the concentration', () => {
    const runs = [0.01, 0.02, 0.04, 0.08].map((c) => ({ concentration_M: c, kObs_perSecond: 5 * c * c }));
    const r = rateLawFromSeries(runs);
    if (!r.ok) throw new Error(r.error);
    expect(r.nearestWholeOrder).toBe(2);
    expect(r.k).toBeCloseTo(5, 10);
    expect(r.kUnit).toBe('M^-2 s^-1');
  });

  // Negative control: order 1 fitted to second-order data is flagged by its CI.
  it('negative control: a first-order line through second-order data is not consistent', () => {
    const runs = [0.01, 0.02, 0.04, 0.08].map((c, i) => ({ concentration_M: c, kObs_perSecond: 5 * c ** 1.5 * [1.01, 0.99, 1.005, 0.995][i]! }));
    const r = rateLawFromSeries(runs);
    if (!r.ok) throw new Error(r.error);
    expect(r.wholeOrderConsistent).toBe(false);
    expect(r.warnings.join(' ')).toMatch(/not consistent/);
  });

  it('three runs almost exactly on the line: the interval comes from their own SEs, so order 1 stays consistent', () => {
    // k_obs off the line by a few parts in 10⁵, each run good to 0.1%
    const runs = demo.map((d, i) => {
      const kObs = d.kObs_perSecond * [1.00001, 0.99998, 1.00002][i]!;
      return { concentration_M: d.concentration_M, kObs_perSecond: kObs, kObsStdErr_perSecond: 1e-3 * kObs };
    });
    const r = rateLawFromSeries(runs);
    if (!r.ok) throw new Error(r.error);
    expect(r.orderUncertainty.basis).toBe('internal');
    expect(r.wholeOrderConsistent).toBe(true);
    expect(r.orderDecided).toBe(true);
    // handbook weighted least squares: SE(m) = 1/√Σw(x − x̄)², w = 1/σ², σ = 10⁻³ in ln k_obs
    const x = demo.map((d) => Math.log(d.concentration_M));
    const xb = x.reduce((a, b) => a + b, 0) / x.length;
    expect(r.orderStdErr!).toBeCloseTo(1e-3 / Math.sqrt(x.reduce((a, v) => a + (v - xb) ** 2, 0)), 12);
    // negative control: from the scatter alone (no SEs) the interval shrinks far below the runs' precision
    const scatterOnly = rateLawFromSeries(runs.map(({ kObsStdErr_perSecond: _se, ...rest }) => rest));
    if (!scatterOnly.ok) throw new Error(scatterOnly.error);
    expect(scatterOnly.orderStdErr!).toBeLessThan(r.orderStdErr! / 10);
  });

  it('says what is wrong with unusable input', () => {
    expect(rateLawFromSeries([demo[0]!])).toMatchObject({ ok: false });
    expect(rateLawFromSeries([demo[0]!, { ...demo[0]! }])).toMatchObject({ ok: false, error: expect.stringMatching(/same concentration/) });
    expect(rateLawFromSeries([demo[0]!, { concentration_M: 0, kObs_perSecond: 1, label: 'B' }])).toMatchObject({ ok: false, error: expect.stringMatching(/^B: concentration 0/) });
  });
});
