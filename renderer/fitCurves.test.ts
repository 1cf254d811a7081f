import { describe, expect, it } from 'vitest';
import { linearRegression, rSquared } from 'simple-statistics';
import type { AnalysisResultView } from '../main/bridge/contract';
import { demoAnalysis } from '../test/e2e/fakeBridge';
import { curveAbsorbance, curveParameters, viewBaseline, viewValue } from './fitCurves';

function result(over: Partial<AnalysisResultView['models']['first']> = {}, window = { from_s: null as number | null, to_s: null as number | null }): AnalysisResultView {
  const r = demoAnalysis(100, 100);
  return { ...r, window, models: { ...r.models, first: { ...r.models.first, ...over } } };
}

describe('fitted curves drawn from the fitted parameters', () => {
  // Handbook integrated rate laws (any physical chemistry text):
  //   first:  A = A∞ + (A0 − A∞) e^(−kt)      second: 1/(A − A∞) = 1/(A0 − A∞) + kt
  //   zero:   A = A0 − kt                        n-th:  (A − A∞)^(1−n) = (A0 − A∞)^(1−n) + (n − 1) k t
  it('follows the integrated rate law of each order', () => {
    const base = { a0: 0.65, aInf: 0.005, origin_s: 0 };
    for (const t of [0, 10, 123.4, 600]) {
      expect(curveAbsorbance({ ...base, order: 1, k: 3.5e-3 }, t)).toBeCloseTo(0.005 + 0.645 * Math.exp(-3.5e-3 * t), 12);
      expect(curveAbsorbance({ ...base, order: 2, k: 0.02 }, t)).toBeCloseTo(0.005 + 1 / (1 / 0.645 + 0.02 * t), 12);
      expect(curveAbsorbance({ ...base, order: 0, k: 5e-4 }, t)).toBeCloseTo(0.65 - 5e-4 * t, 12);
      expect(curveAbsorbance({ ...base, order: 1.5, k: 4e-3 }, t)).toBeCloseTo(0.005 + Math.pow(Math.pow(0.645, -0.5) + 0.5 * 4e-3 * t, -2), 12);
    }
  });

  it('is at half its reacting part after one half-life (ln 2 / k for first order, 1/(k A0) for second)', () => {
    const p1 = { order: 1, k: 3.5e-3, a0: 0.65, aInf: 0.005, origin_s: 0 };
    expect(curveAbsorbance(p1, Math.LN2 / p1.k)).toBeCloseTo(0.005 + 0.645 / 2, 12);
    const p2 = { order: 2, k: 0.02, a0: 0.65, aInf: 0.005, origin_s: 0 };
    expect(curveAbsorbance(p2, 1 / (p2.k * 0.645))).toBeCloseTo(0.005 + 0.645 / 2, 12);
  });

  it('counts time from the fit window\'s start, or from the first reading fitted', () => {
    const open = curveParameters(result(), 'first', 12)!;
    expect(open.origin_s).toBe(12);
    expect(curveAbsorbance(open, 12)).toBeCloseTo(0.65, 12);
    const set = curveParameters(result({}, { from_s: 30, to_s: null }), 'first', 31)!;
    expect(set.origin_s).toBe(30);
  });

  it('gives no curve for a model that has not been fitted', () => {
    expect(curveParameters(result({ k: null }), 'first', 0)).toBeNull();
    const r = result();
    expect(curveParameters({ ...r, models: { ...r.models, nth: { ...r.models.nth, order: null } } }, 'nth', 0)).toBeNull();
  });

  // simple-statistics as the independent oracle for straightness.
  it('the ln view of a first-order decay is a straight line of slope −k, the reciprocal view of second order one of slope k', () => {
    const t = Array.from({ length: 50 }, (_, i) => i * 12);
    const p1 = { order: 1, k: 3.5e-3, a0: 0.65, aInf: 0.005, origin_s: 0 };
    const ln = t.map((x) => [x, viewValue('ln', curveAbsorbance(p1, x), 0.005)!] as [number, number]);
    expect(linearRegression(ln).m).toBeCloseTo(-3.5e-3, 10);
    const p2 = { order: 2, k: 0.02, a0: 0.65, aInf: 0.005, origin_s: 0 };
    const rec = t.map((x) => [x, viewValue('reciprocal', curveAbsorbance(p2, x), 0.005)!] as [number, number]);
    expect(linearRegression(rec).m).toBeCloseTo(0.02, 10);
    // Negative control: a second-order decay is visibly curved in the ln view.
    const bent = t.map((x) => [x, viewValue('ln', curveAbsorbance(p2, x), 0.005)!] as [number, number]);
    expect(rSquared(bent, (x) => linearRegression(bent).b + linearRegression(bent).m * x)).toBeLessThan(0.99);
  });

  it('has no value in a linearised view at or below A∞, and uses each order\'s own A∞', () => {
    expect(viewValue('ln', 0.004, 0.005)).toBeNull();
    expect(viewValue('reciprocal', 0.005, 0.005)).toBeNull();
    expect(viewValue('absorbance', -0.01, 0.005)).toBe(-0.01);
    const r = demoAnalysis(10, 10);
    expect(viewBaseline(r, 'ln')).toBe(r.models.first.aInf);
    expect(viewBaseline(r, 'reciprocal')).toBe(r.models.second.aInf);
    expect(viewBaseline(r, 'absorbance')).toBeNull();
  });
});
