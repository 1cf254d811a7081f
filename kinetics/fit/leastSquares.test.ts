import { describe, expect, it } from 'vitest';
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { fitLeastSquares } from './leastSquares';
import type { FitProblem } from './fitTypes';
import { simulateRun, DEMO_RUN, absorbanceSigma, trueAbsorbance } from '../reactionModel';
import { studentTQuantile } from './studentT';

// Integrated rate laws, parameters [a0, aInf, k].
const firstOrder = (t: number, p: Float64Array): number => p[1]! + (p[0]! - p[1]!) * Math.exp(-p[2]! * t);
const secondOrder = (t: number, p: Float64Array): number => {
  const c0 = p[0]! - p[1]!;
  return p[1]! + c0 / (1 + c0 * p[2]! * t);
};

function decayProblem(model: FitProblem['model'], t: Float64Array, a: Float64Array, start: [number, number, number]): FitProblem {
  return {
    parameters: [
      { name: 'a0', value: start[0] },
      { name: 'aInf', value: start[1] },
      { name: 'k', value: start[2], min: 0 },
    ],
    x: t,
    y: a,
    model,
  };
}

describe('fitLeastSquares against ml-levenberg-marquardt (independent oracle)', () => {
  const cases = [
    { name: 'first-order decay (demo run)', order: 'first' as const, k: 3.5e-3, model: firstOrder },
    { name: 'second-order decay', order: 'second' as const, k: 8e-3, model: secondOrder },
  ];
  for (const c of cases) {
    it(`${c.name}: same estimates and no worse sum of squares`, () => {
      // independent oracle: ml-levenberg-marquardt on the same data, unweighted
      const run = simulateRun({ ...DEMO_RUN, order: c.order, k: c.k, duration_s: 600, seed: 11 });
      const start: [number, number, number] = [0.6, 0.02, c.k * 1.5];
      const ours = fitLeastSquares(decayProblem(c.model, run.time_s, run.absorbance, start));
      const theirs = levenbergMarquardt(
        { x: Array.from(run.time_s), y: Array.from(run.absorbance) },
        ([a0, aInf, k]: number[]) => (t: number) => c.model(t, Float64Array.of(a0!, aInf!, k!)),
        { initialValues: [...start], maxIterations: 2000, errorTolerance: 1e-14, improvementThreshold: 1e-12, damping: 1e-2, centralDifference: true, gradientDifference: 1e-7 },
      );
      expect(ours.converged).toBe(true);
      const names = ['a0', 'aInf', 'k'];
      names.forEach((name, j) => {
        const fp = ours.byName[name]!;
        // agreement far inside the statistical uncertainty
        expect(Math.abs(fp.value - theirs.parameterValues[j]!)).toBeLessThan(0.01 * fp.stdErr!);
      });
      expect(ours.rss).toBeLessThanOrEqual(theirs.parameterError * (1 + 1e-9));
      // and the truth lies within a few standard errors
      expect(Math.abs(ours.byName.k!.value - c.k)).toBeLessThan(4 * ours.byName.k!.stdErr!);
    });
  }

  it('negative control: fitting first-order data with the second-order law leaves a worse sum of squares', () => {
    const run = simulateRun({ ...DEMO_RUN, duration_s: 900, seed: 3 });
    const first = fitLeastSquares(decayProblem(firstOrder, run.time_s, run.absorbance, [0.6, 0.01, 0.003]));
    const second = fitLeastSquares(decayProblem(secondOrder, run.time_s, run.absorbance, [0.6, 0.01, 0.01]));
    expect(second.rss).toBeGreaterThan(1.5 * first.rss);
    expect(second.aicc!).toBeGreaterThan(first.aicc! + 10);
  });
});

describe('weights, covariance and the reported statistics', () => {
  it('weighted fit with the true σ gives a reduced chi-square near 1 and k within its CI', () => {
    // common practice: with correct σ_i, χ²/dof ≈ 1 ± √(2/dof)
    const run = simulateRun({ ...DEMO_RUN, seed: 5 });
    const w = new Float64Array(run.time_s.length);
    for (let i = 0; i < w.length; i++) w[i] = 1 / absorbanceSigma(trueAbsorbance(DEMO_RUN, run.time_s[i]!), DEMO_RUN.sigmaT) ** 2;
    const fit = fitLeastSquares({ ...decayProblem(firstOrder, run.time_s, run.absorbance, [0.5, 0, 0.01]), weights: w });
    expect(Math.abs(fit.chiSquare / fit.dof - 1)).toBeLessThan(4 * Math.sqrt(2 / fit.dof));
    const [lo, hi] = fit.byName.k!.ci!;
    expect(lo).toBeLessThan(DEMO_RUN.k);
    expect(hi).toBeGreaterThan(DEMO_RUN.k);
    // AICc by its definition, K = nFree + 1
    const n = fit.n, K = 4;
    expect(fit.aicc).toBeCloseTo(n * Math.log(fit.chiSquare / n) + 2 * K + (2 * K * (K + 1)) / (n - K - 1), 10);
    // correlation is the covariance normalised
    const cov = fit.covariance!, cor = fit.correlation!;
    expect(cor[2]).toBeCloseTo(cov[2]! / Math.sqrt(cov[0]! * cov[8]!), 12);
  });

  it('fixed parameters keep their value and leave the covariance', () => {
    const run = simulateRun({ ...DEMO_RUN, seed: 8 });
    const problem = decayProblem(firstOrder, run.time_s, run.absorbance, [0.5, 0.005, 0.01]);
    problem.parameters[1]!.fixed = true;
    const fit = fitLeastSquares(problem);
    expect(fit.byName.aInf!.value).toBe(0.005);
    expect(fit.byName.aInf!.stdErr).toBeNull();
    expect(fit.freeNames).toEqual(['a0', 'k']);
    expect(fit.covariance!.length).toBe(4);
    expect(fit.dof).toBe(fit.n - 2);
  });

  it('a bound that binds is reported and warned about', () => {
    const run = simulateRun({ ...DEMO_RUN, seed: 9 });
    const problem = decayProblem(firstOrder, run.time_s, run.absorbance, [0.5, 0.005, 0.001]);
    problem.parameters[2]!.max = 0.003; // true k is 0.0035
    const fit = fitLeastSquares(problem);
    expect(fit.byName.k!.value).toBe(0.003);
    expect(fit.byName.k!.atBound).toBe(true);
    expect(fit.warnings.some((w) => /upper bound/.test(w))).toBe(true);
  });

  it('plain-language warnings instead of NaN: too few points, singular, not converged', () => {
    const x = Float64Array.of(1, 2, 3);
    const y = Float64Array.of(1, 2, 3.5);
    const few = fitLeastSquares({ parameters: [{ name: 'a', value: 1 }, { name: 'b', value: 1 }, { name: 'c', value: 1 }, { name: 'd', value: 1 }], x, y, model: (t, p) => p[0]! + p[1]! * t + p[2]! * t * t + p[3]! * t * t * t });
    expect(few.ok).toBe(false);
    expect(few.warnings.join(' ')).toMatch(/too few points/);
    const exact = fitLeastSquares({ parameters: [{ name: 'a', value: 1 }, { name: 'b', value: 1 }, { name: 'c', value: 0 }], x, y, model: (t, p) => p[0]! + p[1]! * t + p[2]! * t * t });
    expect(exact.ok).toBe(true);
    expect(exact.residualSd).toBeNull();
    expect(exact.aicc).toBeNull();
    expect(exact.warnings.join(' ')).toMatch(/too few points for standard errors/);
    const singular = fitLeastSquares({ parameters: [{ name: 'a', value: 1 }, { name: 'b', value: 1 }, { name: 'ghost', value: 1 }], x: Float64Array.of(1, 2, 3, 4, 5), y: Float64Array.of(1, 2, 3, 4, 6), model: (t, p) => p[0]! + p[1]! * t });
    expect(singular.covariance).toBeNull();
    expect(singular.byName.a!.stdErr).toBeNull();
    expect(singular.warnings.join(' ')).toMatch(/singular/);
    const run = simulateRun({ ...DEMO_RUN, seed: 2 });
    const stopped = fitLeastSquares({ ...decayProblem(firstOrder, run.time_s, run.absorbance, [0.2, 0.3, 0.05]), options: { maxIterations: 1 } });
    expect(stopped.converged).toBe(false);
    expect(stopped.warnings.join(' ')).toMatch(/did not converge/);
  });

  it('points that cannot be used are left out with a warning, not turned into NaN', () => {
    const run = simulateRun({ ...DEMO_RUN, seed: 4 });
    const y = Float64Array.from(run.absorbance);
    y[10] = NaN;
    y[20] = Infinity;
    const fit = fitLeastSquares(decayProblem(firstOrder, run.time_s, y, [0.5, 0, 0.01]));
    expect(fit.n).toBe(y.length - 2);
    expect(Number.isFinite(fit.chiSquare)).toBe(true);
    expect(fit.warnings.join(' ')).toMatch(/2 point\(s\)/);
  });
});

describe('options and failure modes', () => {
  it('intervals use Student t at the chosen confidence', () => {
    // handbook t-table: t(0.95, 12) = 1.7823 for a 90% interval on 12 dof
    const run = simulateRun({ ...DEMO_RUN, duration_s: 14, seed: 6 });
    const fit = fitLeastSquares({ ...decayProblem(firstOrder, run.time_s, run.absorbance, [0.6, 0.005, 0.003]), options: { confidence: 0.9 } });
    // 15 points, 3 free parameters: 12 dof
    expect(fit.dof).toBe(12);
    const k = fit.byName.k!;
    expect((k.ci![1] - k.value) / k.stdErr!).toBeCloseTo(1.7823, 4);
    expect(studentTQuantile(0.95, 12)).toBeCloseTo(1.7823, 4);
    expect(fit.confidence).toBe(0.9);
  });

  it('a model that throws gives a failed fit with the reason, never an exception', () => {
    const fit = fitLeastSquares({
      parameters: [{ name: 'a', value: 1 }],
      x: Float64Array.of(1, 2, 3),
      y: Float64Array.of(1, 2, 3),
      model: () => {
        throw new Error('bad model');
      },
    });
    expect(fit.ok).toBe(false);
    expect(fit.warnings.join(' ')).toMatch(/model function failed: bad model/);
  });

  it('bad parameter set-ups are refused in one sentence', () => {
    const base = { x: Float64Array.of(1, 2, 3), y: Float64Array.of(1, 2, 3), model: (t: number, p: Float64Array) => p[0]! * t };
    expect(fitLeastSquares({ ...base, parameters: [{ name: 'a', value: NaN }] }).warnings[0]).toMatch(/finite starting value/);
    expect(fitLeastSquares({ ...base, parameters: [{ name: 'a', value: 1, min: 2, max: 1 }] }).warnings[0]).toMatch(/admit no value/);
    expect(fitLeastSquares({ ...base, parameters: [{ name: 'a', value: 1 }, { name: 'a', value: 2 }] }).warnings[0]).toMatch(/named twice/);
    const outside = fitLeastSquares({ ...base, parameters: [{ name: 'a', value: 5, max: 2 }] });
    expect(outside.warnings[0]).toMatch(/started outside its bounds/);
    expect(outside.byName.a!.value).toBeLessThanOrEqual(2);
  });
});

describe('robust fitting against a bubble spike', () => {
  it('the reported covariance is the one of a weighted fit with the final robust weights', () => {
    // consistency: IRLS at convergence is a weighted least-squares fit with weights w_i·ρ_i
    const run = simulateRun({ ...DEMO_RUN, seed: 23 });
    const y = Float64Array.from(run.absorbance);
    y[200] += 0.2;
    const robust = fitLeastSquares({ ...decayProblem(firstOrder, run.time_s, y, [0.6, 0.01, 0.003]), options: { robust: 'tukey' } });
    const start = robust.parameters.map((p) => p.value) as [number, number, number];
    const refit = fitLeastSquares({ ...decayProblem(firstOrder, run.time_s, y, start), weights: robust.robustWeights! });
    expect(refit.byName.k!.value / robust.byName.k!.value).toBeCloseTo(1, 6);
    expect(refit.chiSquare / robust.chiSquare).toBeCloseTo(1, 6);
    // (JᵀWJ)⁻¹ alike; the scale differs only by dof: points of weight 0 still count in the
    // robust fit's n (as in the usual M-estimation software), the refit leaves them out.
    const unscaled = (f: typeof robust, i: number): number => f.covariance![i]! / (f.chiSquare / f.dof);
    for (const i of [0, 4, 8, 2]) expect(unscaled(refit, i) / unscaled(robust, i)).toBeCloseTo(1, 4);
    expect(refit.n).toBeLessThan(robust.n);
  });

  it('unweighted too: the spike is caught and k stays within 1 SE of the spike-free fit', () => {
    const run = simulateRun({ ...DEMO_RUN, seed: 21 });
    const clean = fitLeastSquares(decayProblem(firstOrder, run.time_s, run.absorbance, [0.6, 0.01, 0.003]));
    const spiked = Float64Array.from(run.absorbance);
    spiked[300] += 0.2;
    for (const loss of ['huber', 'tukey'] as const) {
      const robust = fitLeastSquares({ ...decayProblem(firstOrder, run.time_s, spiked, [0.6, 0.01, 0.003]), options: { robust: loss } });
      expect(Math.abs(robust.byName.k!.value - clean.byName.k!.value)).toBeLessThan(clean.byName.k!.stdErr!);
      expect(robust.outliers).toContain(300);
    }
  });

  for (const loss of ['huber', 'tukey'] as const) {
    it(`${loss}: one +0.2 AU spike does not bias k; the plain fit is visibly biased`, () => {
      // common practice: M-estimation (Huber 1.345, Tukey 4.685) with MAD scale resists gross outliers
      const run = simulateRun({ ...DEMO_RUN, seed: 21 });
      // Weighted by the instrument's noise model, as the engine fits a run.
      const weights = new Float64Array(run.time_s.length);
      for (let i = 0; i < weights.length; i++) weights[i] = 1 / absorbanceSigma(run.absorbance[i]!, DEMO_RUN.sigmaT) ** 2;
      const clean = fitLeastSquares({ ...decayProblem(firstOrder, run.time_s, run.absorbance, [0.6, 0.01, 0.003]), weights });
      const spiked = Float64Array.from(run.absorbance);
      const at = 300; // near t = 1/k, where the data pull hardest on k
      spiked[at] += 0.2;
      const plain = fitLeastSquares({ ...decayProblem(firstOrder, run.time_s, spiked, [0.6, 0.01, 0.003]), weights });
      const robust = fitLeastSquares({ ...decayProblem(firstOrder, run.time_s, spiked, [0.6, 0.01, 0.003]), weights, options: { robust: loss } });
      const se = clean.byName.k!.stdErr!;
      expect(Math.abs(robust.byName.k!.value - clean.byName.k!.value)).toBeLessThan(se);
      expect(Math.abs(plain.byName.k!.value - clean.byName.k!.value)).toBeGreaterThan(se);
      expect(robust.outliers).toContain(at);
      expect(robust.outliers.length).toBeLessThan(run.time_s.length * 0.05);
      expect(plain.outliers).toEqual([]);
      expect(robust.robustWeights![at]!).toBeLessThan(0.5);
      expect(robust.residuals![at]!).toBeGreaterThan(0.15); // the spike still shows in the residuals
      expect(robust.warnings).toEqual([]);
    });
  }
});
