import { describe, expect, it } from 'vitest';
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { globalRateLawFit, intervalsAgree, type GlobalRun } from './globalRateLaw';
import { simulateRun, DEMO_RUN } from './reactionModel';
import { isolationCheck } from './isolation';

// Demo scenario (invented demo numbers): k = 0.35 M⁻¹ s⁻¹, order 1 in hypochlorite, 0.010/0.020/0.040 M,
// A0 0.65, A∞ 0.005, σ_T 0.001. Readings every 2 s over about three half-lives keep the test short.
const K2 = 0.35;
const CONC = [0.01, 0.02, 0.04];
function demoRuns(order = 1, seed = 1, k = K2): GlobalRun[] {
  return CONC.map((c, i) => {
    const kObs = k * c ** order;
    const run = simulateRun({ ...DEMO_RUN, k: kObs, dt_s: 2, duration_s: Math.round(3 * Math.LN2 / kObs), seed: seed + i });
    return { label: `c${c}`, concentration_M: c, time_s: run.time_s, absorbance: run.absorbance, kObsStart: kObs * 1.1, a0Start: 0.6, aInfStart: 0.02 };
  });
}

describe('global fit of a concentration series from its readings', () => {
  it('recovers k and m = 1 and matches ml-levenberg-marquardt on the same stacked data (independent oracle)', () => {
    const runs = demoRuns();
    const g = globalRateLawFit(runs, { k: 0.3, order: 0.9, heldOrder: 1 });
    if (!g.ok) throw new Error(g.error);
    expect(g.order.ci95![0]).toBeLessThan(1);
    expect(g.order.ci95![1]).toBeGreaterThan(1);
    expect(g.k.ci95![0]).toBeLessThan(K2);
    expect(g.k.ci95![1]).toBeGreaterThan(K2);
    expect(g.readings).toBe(runs.reduce((s, r) => s + r.time_s.length, 0));
    // the oracle: the same model over stacked (run, time) points, parameters [k, m, a0_1, aInf_1, …]
    const xs: number[] = [], ys: number[] = [];
    runs.forEach((r, j) => Array.from(r.time_s).forEach((t, q) => { xs.push(j * 1e6 + t); ys.push(r.absorbance[q]!); }));
    const model = (p: number[]) => (x: number) => {
      const j = Math.floor(x / 1e6), t = x - j * 1e6;
      return p[3 + 2 * j]! + (p[2 + 2 * j]! - p[3 + 2 * j]!) * Math.exp(-p[0]! * CONC[j]! ** p[1]! * t);
    };
    const theirs = levenbergMarquardt({ x: xs, y: ys }, model, {
      initialValues: [0.3, 0.9, 0.6, 0.02, 0.6, 0.02, 0.6, 0.02], maxIterations: 500, errorTolerance: 1e-14, improvementThreshold: 1e-12, damping: 1e-2, centralDifference: true, gradientDifference: 1e-7,
    });
    expect(Math.abs(g.order.value - theirs.parameterValues[1]!)).toBeLessThan(0.01 * g.order.stdErr!);
    // and with the order held at 1: k alone shared, [k, a0_1, aInf_1, …]
    const held = (p: number[]) => (x: number) => {
      const j = Math.floor(x / 1e6), t = x - j * 1e6;
      return p[2 + 2 * j]! + (p[1 + 2 * j]! - p[2 + 2 * j]!) * Math.exp(-p[0]! * CONC[j]! * t);
    };
    const theirsHeld = levenbergMarquardt({ x: xs, y: ys }, held, {
      initialValues: [0.3, 0.6, 0.02, 0.6, 0.02, 0.6, 0.02], maxIterations: 500, errorTolerance: 1e-14, improvementThreshold: 1e-12, damping: 1e-2, centralDifference: true, gradientDifference: 1e-7,
    });
    expect(Math.abs(g.k.value - theirsHeld.parameterValues[0]!)).toBeLessThan(0.01 * g.k.stdErr!);
    // negative control: a global fit that ignored the concentrations (m = 0) is far off
    const zero = globalRateLawFit(runs, { k: 0.005, order: 0, heldOrder: 0 });
    if (!zero.ok) throw new Error(zero.error);
    expect(Math.abs(zero.k.value - K2)).toBeGreaterThan(10 * g.k.stdErr!);
  });

  it('finds m = 2 in a series made second order in the reagent', () => {
    const g = globalRateLawFit(demoRuns(2, 5, 35), { k: 30, order: 1.8, heldOrder: 2 });
    if (!g.ok) throw new Error(g.error);
    expect(g.order.ci95![0]).toBeLessThan(2);
    expect(g.order.ci95![1]).toBeGreaterThan(2);
    expect(g.order.ci95![0]).toBeGreaterThan(1.5);
  });

  it('says whether two intervals agree', () => {
    expect(intervalsAgree('order m', [0.9, 1.1], [1.05, 1.2]).agree).toBe(true);
    expect(intervalsAgree('order m', [0.9, 1.0], [1.05, 1.2]).agree).toBe(false);
    expect(intervalsAgree('order m', null, [1, 2]).agree).toBeNull();
  });

  it('refuses a series without two concentrations, in one sentence', () => {
    const r = demoRuns();
    expect(globalRateLawFit([r[0]!], { k: 0.35, order: 1, heldOrder: 1 })).toMatchObject({ ok: false, error: expect.stringMatching(/two or more runs/) });
    expect(globalRateLawFit([r[0]!, r[0]!], { k: 0.35, order: 1, heldOrder: 1 })).toMatchObject({ ok: false, error: expect.stringMatching(/two or more concentrations/) });
  });
});

describe('isolation check', () => {
  it('the demo (hypochlorite ≥ 0.010 M over 5 µM dye) is well isolated', () => {
    const c = isolationCheck({ label: 'c0.01', excess_M: 0.01, followed_M: 5e-6, stoichiometry: 1, fractionConverted: 0.9, orderInExcess: 1 });
    expect(c.excessRatio).toBeCloseTo(2000, 9);
    expect(c.sufficient).toBe(true);
    expect(c.warning).toBeNull();
  });

  it('a five-fold excess warns and estimates k_obs low by ν[A]₀f/(2[B]₀)', () => {
    const c = isolationCheck({ label: 'run 2', excess_M: 5e-5, followed_M: 1e-5, stoichiometry: 1, fractionConverted: 0.8, orderInExcess: 1 });
    expect(c.excessRatio).toBeCloseTo(5, 12);
    expect(c.sufficient).toBe(false);
    expect(c.kObsBiasRelative).toBeCloseTo(-0.08, 12); // 1e-5·0.8/(2·5e-5)
    expect(c.warning).toMatch(/^run 2: the excess reagent is only 5\.0 times the followed species .* k_obs is about 8\.0% low/);
    // stoichiometry 2 mol per mol halves the excess ratio
    expect(isolationCheck({ label: 'x', excess_M: 5e-5, followed_M: 1e-5, stoichiometry: 2, fractionConverted: 0.8, orderInExcess: 1 }).excessRatio).toBeCloseTo(2.5, 12);
  });

  it('the estimate against a numerical solution of dA/dt = −k A B with B = B₀ − (A₀ − A): within a third of the bias', () => {
    // exact second-order kinetics, integrated finely (Euler steps of 0.01 s), then k_obs from ln(A0/A) at 80% conversion
    const k = 0.35, A0 = 1e-5, B0 = 5e-5;
    let A = A0, t = 0;
    while (A > 0.2 * A0) { const B = B0 - (A0 - A); A -= k * A * B * 0.01 * 1e3; t += 0.01 * 1e3; }
    const kObsEffective = Math.log(A0 / A) / t;
    const trueBias = kObsEffective / (k * B0) - 1;
    const est = isolationCheck({ label: 'x', excess_M: B0, followed_M: A0, stoichiometry: 1, fractionConverted: 0.8, orderInExcess: 1 }).kObsBiasRelative;
    expect(Math.sign(est)).toBe(Math.sign(trueBias));
    expect(Math.abs(est - trueBias)).toBeLessThan(Math.abs(trueBias) / 3);
  });

  it('a reagent used up before the followed species is said to break the isolation', () => {
    const c = isolationCheck({ label: 'run 3', excess_M: 1e-5, followed_M: 2e-5, stoichiometry: 1, fractionConverted: null, orderInExcess: 1 });
    expect(c.warning).toMatch(/used up before the followed species/);
  });
});
