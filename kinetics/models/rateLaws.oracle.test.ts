import { describe, expect, it } from 'vitest';
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { linearRegression } from 'simple-statistics';
import { DEMO_RUN, absorbanceSigma, simulateRun, type SimulatedRunSpec } from '../reactionModel';
import { fitZeroOrder, zeroOrderLaw } from './zeroOrder';
import { fitFirstOrder, firstOrderLaw } from './firstOrder';
import { fitSecondOrder, secondOrderLaw } from './secondOrder';
import { fitNthOrder, nthOrderLaw } from './nthOrder';
import { fitted, seriesOf, simulatedSeries } from '../../test/fixtures/simulatedFitSeries';
import type { FittedModel, RateLaw } from './modelTypes';

const base = { aInfMin: -0.03 };
const demo = (o: Partial<SimulatedRunSpec>): SimulatedRunSpec => ({ ...DEMO_RUN, ...o });
const se = (f: FittedModel, j: number): number => Math.sqrt(f.covariance[j * f.params.length + j]);

/**
 * Independent oracle: ml-levenberg-marquardt on the same weighted problem, pre-whitened
 * (y_i/σ_i against f(t_i)/σ_i, unit weights: its own weighting scales the error and the
 * step differently). Its damping is not scaled per parameter, so it is handed parameters
 * divided by their starting magnitudes, and only the parameters the model depends on.
 */
function oracle(law: RateLaw, spec: SimulatedRunSpec, start: number[], nFree = start.length): number[] {
  const r = simulateRun(spec);
  const sigma = Array.from(r.absorbance, (a) => absorbanceSigma(Math.max(0, a), spec.sigmaT));
  const scale = start.map((v) => Math.abs(v) || 1);
  const p = (q: number[]) => { const pp = Float64Array.from(start); for (let j = 0; j < nFree; j++) pp[j] = q[j] * scale[j]; return pp; };
  const g = new Float64Array(start.length);
  const fit = levenbergMarquardt(
    { x: Array.from(r.time_s, (_, i) => i), y: Array.from(r.absorbance, (a, i) => a / sigma[i]) },
    (q) => { const pp = p(q); return (i) => law.value(r.time_s[i], pp) / sigma[i]; },
    {
      initialValues: new Array(nFree).fill(1), maxIterations: 1000, errorTolerance: 1e-12, improvementThreshold: 1e-9, damping: 1e-2,
      jacobianFunction: (q) => { const pp = p(q); return (i) => { law.gradient(r.time_s[i], pp, g); return Array.from(g.subarray(0, nFree), (x, j) => (x * scale[j]) / sigma[i]); }; },
    },
  );
  return fit.parameterValues.map((v, j) => v * scale[j]);
}

describe('rate-law fits against independent oracles', () => {
  it('zero order equals simple-statistics linearRegression on the unweighted line', () => {
    const spec = demo({ order: 'zero', k: 6.5e-4 });
    const r = simulateRun(spec);
    const fit = fitted(fitZeroOrder(seriesOf(r.time_s, r.absorbance, false), base));
    // simple-statistics linearRegression (ordinary least squares), an independent implementation
    const ref = linearRegression(Array.from(r.time_s, (t, i) => [t, r.absorbance[i]]));
    expect(fit.params[0]).toBeCloseTo(-ref.m, 12);
    expect(fit.params[1]).toBeCloseTo(ref.b, 10);
    // negative control: the same comparison fails against the oracle on data one reading off by 0.1 mAU
    const nudged = Array.from(r.time_s, (t, i): [number, number] => [t, r.absorbance[i]! + (i === 100 ? 1e-4 : 0)]);
    expect(Math.abs(fit.params[0] + linearRegression(nudged).m)).toBeGreaterThan(0.5 * 10 ** -12);
  });

  const cases: { name: string; law: RateLaw; spec: SimulatedRunSpec; fit: () => FittedModel; start: number[]; nFree?: number }[] = [
    { name: 'first', law: firstOrderLaw, spec: demo({ order: 'first' }), fit: () => fitted(fitFirstOrder(simulatedSeries(demo({ order: 'first' })), base)), start: [0.002, 0.6, 0.01] },
    { name: 'second', law: secondOrderLaw, spec: demo({ order: 'second', k: 7.8e-3 }), fit: () => fitted(fitSecondOrder(simulatedSeries(demo({ order: 'second', k: 7.8e-3 })), base)), start: [0.005, 0.6, 0.01] },
    { name: 'zero (weighted)', law: zeroOrderLaw, spec: demo({ order: 'zero', k: 6.5e-4 }), fit: () => fitted(fitZeroOrder(simulatedSeries(demo({ order: 'zero', k: 6.5e-4 })), base)), start: [0.001, 0.6, 0], nFree: 2 },
  ];
  for (const c of cases) {
    it(`${c.name} order matches ml-levenberg-marquardt within 0.05 standard errors`, () => {
      const fit = c.fit();
      expect(fit.ok).toBe(true);
      const ref = oracle(c.law, c.spec, c.start, c.nFree);
      // ml-levenberg-marquardt 5.1.0 as the oracle, same weights and model
      for (const j of [0, 1]) expect(Math.abs(fit.params[j] - ref[j])).toBeLessThan(0.05 * se(fit, j));
      // negative control: the oracle on a run with k 2% higher is told apart by the same test
      expect(Math.abs(fit.params[0] - oracle(c.law, { ...c.spec, k: c.spec.k * 1.02 }, c.start, c.nFree)[0])).toBeGreaterThan(0.05 * se(fit, 0));
    });
  }

  it('n-th order finds n near 1 on first-order data and near 2 on second-order data, with n within 3 SE', () => {
    const f1 = fitted(fitNthOrder(simulatedSeries(demo({ order: 'first' })), { ...base, start: Float64Array.from([0.003, 0.65, 0.005, 1.3]) }));
    const f2 = fitted(fitNthOrder(simulatedSeries(demo({ order: 'second', k: 7.8e-3 })), { ...base, start: Float64Array.from([0.003, 0.65, 0.005, 1.3]) }));
    expect(Math.abs(f1.params[3] - 1)).toBeLessThan(3 * se(f1, 3));
    expect(Math.abs(f2.params[3] - 2)).toBeLessThan(3 * se(f2, 3));
    expect(se(f1, 3)).toBeLessThan(0.05);
  });

  it('recovers the simulated k of each order within 3 standard errors', () => {
    // the simulator's true values are the reference: a correct fit lands within ~3 SE
    const runs: [FittedModel, number][] = [
      [fitted(fitZeroOrder(simulatedSeries(demo({ order: 'zero', k: 6.5e-4 })), base)), 6.5e-4],
      [fitted(fitFirstOrder(simulatedSeries(demo({ order: 'first' })), base)), 3.5e-3],
      [fitted(fitSecondOrder(simulatedSeries(demo({ order: 'second', k: 7.8e-3 })), base)), 7.8e-3],
    ];
    for (const [fit, k] of runs) expect(Math.abs(fit.params[0] - k)).toBeLessThan(3 * se(fit, 0));
  });
});

describe('analytic Jacobians', () => {
  const laws: [RateLaw, number[]][] = [
    [zeroOrderLaw, [6e-4, 0.65, 0]],
    [firstOrderLaw, [3.5e-3, 0.65, 0.005]],
    [secondOrderLaw, [8e-3, 0.65, 0.005]],
    [nthOrderLaw, [4e-3, 0.65, 0.005, 1.6]],
    [nthOrderLaw, [4e-3, 0.65, 0.005, 0.5]],
  ];
  for (const [law, p0] of laws) {
    it(`${law.name} (${p0.join(', ')}) matches central differences`, () => {
      // definition of the derivative: (f(p + h) − f(p − h)) / 2h
      const p = Float64Array.from(p0);
      const g = new Float64Array(p.length);
      for (const t of [0, 50, 200, 600]) {
        law.gradient(t, p, g);
        for (let j = 0; j < p.length; j++) {
          const h = 1e-6 * Math.max(Math.abs(p[j]), 1e-3);
          const up = Float64Array.from(p); up[j] += h;
          const dn = Float64Array.from(p); dn[j] -= h;
          const fd = (law.value(t, up) - law.value(t, dn)) / (2 * h);
          expect(Math.abs(g[j] - fd)).toBeLessThan(1e-5 * Math.max(1, Math.abs(fd)));
        }
      }
    });
  }
});
