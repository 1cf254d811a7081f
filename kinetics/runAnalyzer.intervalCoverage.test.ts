import { describe, expect, it } from 'vitest';
import { RunAnalyzer } from './runAnalyzer';
import { absorbanceSigma, DEMO_RUN, simulateRun, trueAbsorbance, type SimulatedRunSpec } from './reactionModel';
import type { AnalysisResult } from './analysisTypes';

// Coverage of the intervals the analyzer reports, over 400 seeded demo runs each (demo data,
// DEMO.md: first order, k = 3.5e-3 s⁻¹, A0 0.65, A∞ 0.005, σ_T = 0.001). The truth is the
// simulator's. A 95% interval should hold it in 93–97% of runs: 400 runs give a binomial
// SD of 1.1 points (√(0.95·0.05/400)), so the window is about ±2 SD. Runs are short and
// sparsely read so that 400 of them stay cheap.
const RUNS = 400;

function analyse(spec: SimulatedRunSpec): { r: AnalysisResult; run: ReturnType<typeof simulateRun> } {
  const run = simulateRun(spec);
  const a = new RunAnalyzer();
  for (let i = 0; i < run.time_s.length; i++) a.add(run.time_s[i]!, run.absorbance[i]!);
  return { r: a.flush(), run };
}
const within = (ci: readonly [number, number] | null, x: number): boolean => ci !== null && ci[0] <= x && x <= ci[1];

describe('coverage of the reported 95% intervals over 400 seeded runs', () => {
  it('k of first order stopped at 60 s, when A∞ rests on its bound and the interval is widened as well', { timeout: 120_000 }, () => {
    let covered = 0, atBound = 0, coveredAtBound = 0;
    for (let seed = 1; seed <= RUNS; seed++) {
      const { r } = analyse({ ...DEMO_RUN, seed, duration_s: 60, dt_s: 2 });
      const f = r.models.first;
      const hit = within(f.kCI95, DEMO_RUN.k);
      if (hit) covered++;
      if (f.aInfAtBound !== null) { atBound++; if (hit) coveredAtBound++; }
    }
    // The bound acts in a good part of these runs (0.3 half-lives read, the end not yet seen).
    expect(atBound).toBeGreaterThan(0.25 * RUNS);
    // On the bound the interval is the hull of the bounded fit's and the unbounded fit's
    // (boundedEnd.ts), so that a bound that is itself wrong (a blank off by more than its
    // allowance) still leaves the truth inside: it covers at least as often as the nominal level.
    expect(coveredAtBound / atBound).toBeGreaterThanOrEqual(0.93);
    expect(covered / RUNS).toBeGreaterThanOrEqual(0.93);
    expect(covered / RUNS).toBeLessThanOrEqual(0.98);
  });

  it('the initial rate (weighted slope of the first 5% of the change) covers the slope of the noise-free readings', { timeout: 120_000 }, () => {
    let covered = 0, reported = 0, seed = 0;
    // Seeds until 400 runs report an initial rate (a few early runs are read as zero order,
    // whose first 5% ends before the fifth reading).
    while (reported < RUNS && seed < 2 * RUNS) {
      seed++;
      const spec = { ...DEMO_RUN, seed, duration_s: 40, dt_s: 1 };
      const { r, run } = analyse(spec);
      const ir = r.initialRate;
      if (!ir) continue;
      reported++;
      // Its estimand: the same weighted straight line through the noise-free curve at the
      // same readings (closed-form weighted least squares; weights from the noise model at
      // the true absorbance, common practice σ_A = 0.434 σ_T / T).
      let sw = 0, st = 0, sy = 0, stt = 0, sty = 0;
      for (let i = 0; i < ir.readings; i++) {
        const t = run.time_s[i]!, y = trueAbsorbance(spec, t);
        const w = 1 / absorbanceSigma(y, spec.sigmaT) ** 2;
        sw += w; st += w * t; sy += w * y; stt += w * t * t; sty += w * t * y;
      }
      const slope = (sw * sty - st * sy) / (sw * stt - st * st);
      if (within(ir.slopeCI95_perSecond, slope)) covered++;
    }
    expect(reported).toBe(RUNS);
    expect(seed).toBeLessThan(1.2 * RUNS);
    expect(covered / reported).toBeGreaterThanOrEqual(0.93);
    expect(covered / reported).toBeLessThanOrEqual(0.97);
  });

  it('the order n of the n-th order fit (n ± t·SE) covers n = 1 on first-order runs read to 1.6 half-lives', { timeout: 300_000 }, () => {
    let covered = 0, reported = 0;
    for (let seed = 1; seed <= RUNS; seed++) {
      const { r } = analyse({ ...DEMO_RUN, seed, duration_s: 320, dt_s: 5 });
      const m = r.models.nth;
      if (m.order === null || m.orderStdErr === null) continue;
      reported++;
      // t(0.975, 60 dof) = 2.000, printed t-tables (65 readings less 4 parameters).
      if (Math.abs(m.order - 1) <= 2.000 * m.orderStdErr) covered++;
    }
    expect(reported).toBeGreaterThanOrEqual(0.95 * RUNS);
    expect(covered / reported).toBeGreaterThanOrEqual(0.93);
    expect(covered / reported).toBeLessThanOrEqual(0.97);
  });

  it('negative control: the same count rejects intervals of half the width (k at 60 s)', { timeout: 120_000 }, () => {
    let covered = 0;
    for (let seed = 1; seed <= RUNS; seed++) {
      const { r } = analyse({ ...DEMO_RUN, seed, duration_s: 60, dt_s: 2 });
      const ci = r.models.first.kCI95;
      const k = r.models.first.k;
      const half = ci && k !== null ? ([k - (k - ci[0]) / 2, k + (ci[1] - k) / 2] as const) : null;
      if (within(half, DEMO_RUN.k)) covered++;
    }
    expect(covered / RUNS).toBeLessThan(0.93);
  });
});
