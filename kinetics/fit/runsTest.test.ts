import { describe, expect, it } from 'vitest';
import { errorFunction } from 'simple-statistics';
import { runsTest } from './runsTest';

describe('Wald–Wolfowitz runs test', () => {
  it('hand-worked example follows the NIST/SEMATECH e-Handbook formula', () => {
    // Signs + + − − − + − + + + − −: runs ++ | −−− | + | − | +++ | −− = 6, n₁ = n₂ = 6.
    // NIST/SEMATECH e-Handbook of Statistical Methods (runs test):
    //   μ = 2·6·6/12 + 1 = 7, σ² = 72·(72 − 12)/(12²·11) = 30/11.
    // Continuity correction (common practice): z = −(|6 − 7| − ½)/σ.
    const r = [0.3, 0.1, -0.2, -0.5, -0.1, 0.4, -0.3, 0.2, 0.1, 0.6, -0.2, -0.4];
    const res = runsTest(r);
    expect(res.runs).toBe(6);
    expect(res.positives).toBe(6);
    expect(res.negatives).toBe(6);
    expect(res.expectedRuns).toBeCloseTo(7, 14);
    expect(res.sdRuns! ** 2).toBeCloseTo(30 / 11, 14);
    const z = -0.5 / Math.sqrt(30 / 11);
    expect(res.z).toBeCloseTo(z, 14);
    // two-sided p = 1 − erf(|z|/√2); oracle: simple-statistics errorFunction (accuracy ~1.2e-7)
    expect(res.p!).toBeCloseTo(1 - errorFunction(Math.abs(z) / Math.SQRT2), 6);
    expect(res.p!).toBeCloseTo(0.7621, 3); // hand: Φ(0.3028) ≈ 0.6190 from the normal table
  });

  it('negative control: the hand-worked check fails on z without the continuity correction', () => {
    const r = [0.3, 0.1, -0.2, -0.5, -0.1, 0.4, -0.3, 0.2, 0.1, 0.6, -0.2, -0.4];
    const res = runsTest(r);
    const handWorked = (z: number): boolean => Math.abs(z - -0.5 / Math.sqrt(30 / 11)) < 1e-13;
    expect(handWorked(res.z!)).toBe(true);
    // the same statistic from our own runs, mean and SD, the way a test without the correction computes it
    expect(handWorked((res.runs - res.expectedRuns!) / res.sdRuns!)).toBe(false);
  });

  it('a systematic misfit (one long run of each sign) gives a small p and negative z', () => {
    const r = Array.from({ length: 40 }, (_, i) => (i < 20 ? 1 : -1));
    const res = runsTest(r);
    expect(res.runs).toBe(2);
    expect(res.z!).toBeLessThan(-5);
    expect(res.p!).toBeLessThan(1e-6);
  });

  it('zeros are dropped, one-signed residuals give null with a warning', () => {
    expect(runsTest([1, 0, 1, -1, 0, -1]).runs).toBe(2);
    const res = runsTest([0.1, 0.2, 0.3]);
    expect(res.p).toBeNull();
    expect(res.warnings.length).toBeGreaterThan(0);
  });

  it('honours count on over-allocated arrays', () => {
    const r = new Float64Array([1, -1, 1, -1, 9, 9, 9]);
    expect(runsTest(r, 4).runs).toBe(4);
  });
});
