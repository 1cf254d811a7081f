import { describe, expect, it } from 'vitest';
import { fractionConvertedAt, halfLife, halfLifeWithStdErr, halfLivesElapsed, targetFraction, timeToFraction, timeToFractionWithStdErr } from './halfLife';
import { seededRandom } from './random';
import type { ModelName } from './analysisTypes';

/** Independent check: integrate dC/dt = −k Cⁿ by classical RK4 until C falls to (1 − f) C0. */
function rk4TimeTo(n: number, k: number, c0: number, f: number): number {
  const target = (1 - f) * c0;
  let c = c0, t = 0;
  const h = 1e-3 / (k * Math.pow(c0, n - 1));
  const rate = (x: number) => -k * Math.pow(Math.max(x, 0), n);
  for (;;) {
    const k1 = rate(c), k2 = rate(c + 0.5 * h * k1), k3 = rate(c + 0.5 * h * k2), k4 = rate(c + h * k3);
    const next = c + (h / 6) * (k1 + 2 * k2 + 2 * k3 + k4);
    if (next <= target) return t + (h * (c - target)) / (c - next); // linear interpolation inside the last step
    c = next; t += h;
  }
}

const P = (k: number, a0: number, aInf: number, n = 1) => Float64Array.from([k, a0, aInf, n]);

describe('half-life and time to a conversion', () => {
  it('match the handbook integrated rate laws', () => {
    // handbook forms: zero C0/(2k), first ln2/k, second 1/(k C0)
    expect(halfLife('zero', P(6.5e-4, 0.65, 0))).toBeCloseTo(0.65 / (2 * 6.5e-4), 9);
    expect(halfLife('first', P(3.5e-3, 0.65, 0.005))).toBeCloseTo(Math.LN2 / 3.5e-3, 9);
    expect(halfLife('second', P(8e-3, 0.65, 0.005))).toBeCloseTo(1 / (8e-3 * 0.645), 9);
    // order n: (2^(n−1) − 1)/((n − 1) k C0^(n−1))
    expect(halfLife('nth', P(4e-3, 0.65, 0.005, 1.5))).toBeCloseTo((Math.SQRT2 - 1) / (0.5 * 4e-3 * Math.sqrt(0.645)), 9);
    // negative control: the second-order check fails on our first-order formula fed the same parameters
    const secondOrderHalfLife = (hl: number | null): boolean => hl !== null && Math.abs(hl - 1 / (8e-3 * 0.645)) < 5e-10;
    expect(secondOrderHalfLife(halfLife('second', P(8e-3, 0.65, 0.005)))).toBe(true);
    expect(secondOrderHalfLife(halfLife('first', P(8e-3, 0.65, 0.005)))).toBe(false);
  });

  it('agree with a numerical integration of the rate equation for several orders', () => {
    // RK4 integration of −dC/dt = k Cⁿ (independent of the closed forms)
    for (const [model, n] of [['zero', 0], ['first', 1], ['second', 2], ['nth', 0.5], ['nth', 1.5], ['nth', 2.5]] as [ModelName, number][]) {
      const p = P(3e-3, 0.65, 0.005, n);
      for (const f of [0.5, 0.875, 0.3]) {
        const t = timeToFraction(model, p, f)!;
        expect(Math.abs(t - rk4TimeTo(n, 3e-3, 0.645, f)) / t).toBeLessThan(1e-6);
        expect(fractionConvertedAt(model, p, t)).toBeCloseTo(f, 9);
      }
    }
  });

  it('puts 3 half-lives (87.5%) at 1.75 t½ for zero order, 3 t½ for first, 7 t½ for second', () => {
    // common practice: conversion targets in half-lives, f = 1 − 2^(−N)
    expect(targetFraction(3)).toBe(0.875);
    const f = targetFraction(3);
    expect(timeToFraction('zero', P(1e-3, 0.65, 0), f)! / halfLife('zero', P(1e-3, 0.65, 0))!).toBeCloseTo(1.75, 12);
    expect(timeToFraction('first', P(1e-3, 0.65, 0), f)! / halfLife('first', P(1e-3, 0.65, 0))!).toBeCloseTo(3, 12);
    expect(timeToFraction('second', P(1e-3, 0.65, 0), f)! / halfLife('second', P(1e-3, 0.65, 0))!).toBeCloseTo(7, 12);
    expect(halfLivesElapsed(0.875)).toBeCloseTo(3, 12);
    expect(halfLivesElapsed(0.5)).toBeCloseTo(1, 12);
    // first order: half-lives elapsed is t/t½
    const p = P(3.5e-3, 0.65, 0.005);
    expect(halfLivesElapsed(fractionConvertedAt('first', p, 600))).toBeCloseTo(600 / halfLife('first', p)!, 9);
  });

  it('delta-method standard errors agree with a Monte-Carlo spread within 5%', () => {
    // Monte Carlo: draw parameters from N(p, Σ) by Cholesky, take the SD of the derived quantity
    const rng = seededRandom(7);
    const cases: [ModelName, Float64Array, number[]][] = [
      ['first', P(3.5e-3, 0.65, 0.005), [1e-5, 1e-3, 5e-4]],
      ['second', P(8e-3, 0.65, 0.005), [8e-5, 5e-3, 5e-4]],
      ['nth', P(4e-3, 0.65, 0.005, 1.5), [4e-5, 1e-3, 5e-4, 0.01]],
    ];
    for (const [model, p, sd] of cases) {
      const np = p.length;
      const cov = new Float64Array(np * np);
      const corr = 0.3; // a modest correlation between k and A0, as fits show
      for (let i = 0; i < sd.length; i++) cov[i * np + i] = sd[i] * sd[i];
      cov[0 * np + 1] = cov[1 * np + 0] = corr * sd[0] * sd[1];
      const d = halfLifeWithStdErr(model, p, cov);
      const d2 = timeToFractionWithStdErr(model, p, cov, 0.875);
      const draws: number[] = [], draws2: number[] = [];
      const q = new Float64Array(np);
      for (let s = 0; s < 40000; s++) {
        const z0 = rng.normal(), z1 = rng.normal();
        q.set(p);
        q[0] += sd[0] * z0;
        q[1] += sd[1] * (corr * z0 + Math.sqrt(1 - corr * corr) * z1);
        for (let i = 2; i < sd.length; i++) q[i] += sd[i] * rng.normal();
        draws.push(halfLife(model, q)!);
        draws2.push(timeToFraction(model, q, 0.875)!);
      }
      const sdOf = (x: number[]) => { const m = x.reduce((a, b) => a + b) / x.length; return Math.sqrt(x.reduce((a, b) => a + (b - m) ** 2, 0) / (x.length - 1)); };
      expect(Math.abs(d.stdErr! / sdOf(draws) - 1)).toBeLessThan(0.05);
      expect(Math.abs(d2.stdErr! / sdOf(draws2) - 1)).toBeLessThan(0.05);
      // negative control: ignoring the k–A0 correlation changes second-order SE noticeably
      if (model === 'second') {
        const c0 = Float64Array.from(cov); c0[1] = c0[np] = 0;
        expect(Math.abs(halfLifeWithStdErr(model, p, c0).stdErr! / sdOf(draws) - 1)).toBeGreaterThan(0.05);
      }
    }
  });
});
