import { describe, expect, it } from 'vitest';
import { linearRegression } from 'simple-statistics';
import { fitSeriesLine, interval95, predictionStdErr } from './seriesLine';
import { rateLawFromSeries } from './rateLawSeries';
import { arrheniusFit, predictRateConstant } from './arrhenius';
import { seededRandom } from './random';
import { celsiusToKelvin, GAS_CONSTANT_J_PER_MOL_K as R } from './temperature';

// Demo scenario (invented demo numbers): k = 0.35 M⁻¹ s⁻¹ at 25 °C, order 1 in hypochlorite,
// hypochlorite 0.010/0.020/0.040 M, Ea = 48 kJ/mol, 15–35 °C.
const K2 = 0.35;
const CONC = [0.01, 0.02, 0.04];
const EA_J = 48_000;
const kAt = (tC: number) => K2 * Math.exp((-EA_J / R) * (1 / celsiusToKelvin(tC) - 1 / 298.15));
// handbook tables: z(0.975) = 1.960; Student t two-sided 95%, t(1) = 12.706, t(3) = 3.182
const Z = 1.96, T1 = 12.706, T3 = 3.182;

describe('a line through a series, weighted by the runs’ own standard errors', () => {
  it('three runs on a perfect line: the internal uncertainty (z), not a vanishing scatter', () => {
    const se = CONC.map((c) => 0.01 * K2 * c); // 1% per run
    const line = fitSeriesLine(CONC.map(Math.log), CONC.map((c) => Math.log(K2 * c)), se.map((s, i) => s / (K2 * CONC[i]!)));
    if (!line.ok) throw new Error(line.error);
    expect(line.basis).toBe('internal');
    expect(line.birgeRatio!).toBeLessThan(1e-6);
    // handbook weighted least squares: Var b = 1/Σw(x − x̄)², w = 1/σ²; here σ = 0.01 for every point
    const x = CONC.map(Math.log);
    const xb = x.reduce((a, b) => a + b, 0) / 3;
    const sxx = x.reduce((a, v) => a + (v - xb) ** 2, 0) / 0.01 ** 2;
    expect(line.slopeStdErr!).toBeCloseTo(Math.sqrt(1 / sxx), 12);
    expect(line.coverageFactor!).toBeCloseTo(Z, 3);
    expect(line.basisReason).toMatch(/Birge ratio 0\.00 ≤ 1.*internal/);
    // negative control: the scatter alone (the unweighted line) gives an SE a thousand times smaller
    const scatter = fitSeriesLine(x, CONC.map((c) => Math.log(K2 * c) + 1e-9 * Math.sin(1e3 * c)), null);
    if (!scatter.ok) throw new Error(scatter.error);
    expect(scatter.basis).toBe('scatter');
    expect(scatter.slopeStdErr!).toBeLessThan(line.slopeStdErr! / 1000);
  });

  it('runs that scatter more than their SEs allow: the external uncertainty, internal × Birge ratio, with t(N−2)', () => {
    const x = [1, 2, 3, 4, 5];
    const y = [1.1, 1.9, 3.2, 3.8, 5.1];
    const sigma = [0.02, 0.02, 0.02, 0.02, 0.02];
    const line = fitSeriesLine(x, y, sigma);
    if (!line.ok) throw new Error(line.error);
    // independent library: with equal weights the weighted line is the ordinary one
    const ref = linearRegression(x.map((v, i) => [v, y[i]!]));
    expect(line.slope).toBeCloseTo(ref.m, 12);
    expect(line.intercept).toBeCloseTo(ref.b, 12);
    const chi2 = x.reduce((a, v, i) => a + ((y[i]! - ref.b - ref.m * v) / 0.02) ** 2, 0);
    expect(line.chiSquare!).toBeCloseTo(chi2, 8);
    expect(line.birgeRatio!).toBeCloseTo(Math.sqrt(chi2 / 3), 10);
    expect(line.basis).toBe('external');
    expect(line.slopeStdErr!).toBeCloseTo(line.internalSlopeStdErr! * line.birgeRatio!, 12);
    expect(line.coverageFactor!).toBeCloseTo(T3, 3);
    // with equal weights the external SE is the ordinary s/√Sxx (handbook)
    const s = Math.sqrt(x.reduce((a, v, i) => a + (y[i]! - ref.b - ref.m * v) ** 2, 0) / 3);
    expect(line.slopeStdErr!).toBeCloseTo(s / Math.sqrt(10), 12);
  });

  it('two runs (no dof): the internal uncertainty, and it says so', () => {
    const line = fitSeriesLine([0, 1], [1, 3], [0.1, 0.2]);
    if (!line.ok) throw new Error(line.error);
    expect(line.basis).toBe('internal');
    expect(line.dof).toBe(0);
    expect(line.birgeRatio).toBeNull();
    // two points: slope = Δy/Δx exactly, Var b = σ1² + σ2² (handbook propagation of a difference)
    expect(line.slope).toBeCloseTo(2, 12);
    expect(line.slopeStdErr!).toBeCloseTo(Math.sqrt(0.01 + 0.04), 12);
    expect(line.basisReason).toMatch(/no degree of freedom.*internal/);
  });

  it('the SE of a prediction uses the full covariance (Var a + x₀² Var b + 2 x₀ Cov)', () => {
    const line = fitSeriesLine([1, 2, 3, 4], [2.1, 3.9, 6.2, 7.8], null);
    if (!line.ok) throw new Error(line.error);
    // handbook: SE of the fitted mean at x₀ = s √(1/n + (x₀ − x̄)²/Sxx)
    const s = Math.sqrt(line.covariance!.slope * 5); // Var b = s²/Sxx, Sxx = 5
    for (const x0 of [0, 2.5, 7]) expect(predictionStdErr(line.covariance, x0)!).toBeCloseTo(s * Math.sqrt(1 / 4 + (x0 - 2.5) ** 2 / 5), 12);
    // negative control: leaving out the covariance term is wrong away from x̄
    const noCov = Math.sqrt(line.covariance!.intercept + 49 * line.covariance!.slope);
    expect(Math.abs(noCov - predictionStdErr(line.covariance, 7)!)).toBeGreaterThan(0.1 * noCov);
  });
});

/**
 * Coverage: synthetic series of k_obs with a known SE (no run simulation): each k_obs is
 * drawn normal about its true value with SE = 3% of it, and reports that SE, as a run's
 * own fit would. The rule (internal with z while R_B ≤ 1, external with t otherwise) never
 * reports less than either uncertainty, so it is conservative by design: its expected
 * coverage is P(R_B ≤ 1)·0.95 + P(|Z| < t·R_B, R_B > 1) = 0.9659 (1 dof), 0.9684 (2 dof),
 * 0.9695 (3 dof), computed during development with scipy 1.17.1 (chi2, t, quad). Each
 * check holds the observed share at 93% or more and within 3 binomial SE of that value;
 * with 1 dof also at 97% or less. With 2 or 3 dof the rule's own expectation lies just
 * below 97%, so a 97% ceiling would pass or fail by the seed's luck; it is not asserted.
 */
const SERIES = 4000;
const SIGMA_REL = 0.03;
const EXPECTED = { 1: 0.9659, 2: 0.9684, 3: 0.9695 } as const;
function expectCoverage(covered: number, dof: 1 | 2 | 3) {
  const share = covered / SERIES;
  expect(share).toBeGreaterThanOrEqual(0.93);
  if (dof === 1) expect(share).toBeLessThanOrEqual(0.97);
  expect(Math.abs(share - EXPECTED[dof])).toBeLessThan(3 * Math.sqrt((EXPECTED[dof] * (1 - EXPECTED[dof])) / SERIES));
}
const drawn = (rng: ReturnType<typeof seededRandom>, truth: number) => ({ value: truth * (1 + SIGMA_REL * rng.normal()), se: SIGMA_REL * truth });

describe('coverage of the series intervals over seeded synthetic series', () => {
  it('order m (1 dof) and k through the origin (2 dof) from three concentrations', () => {
    const rng = seededRandom(1);
    let order = 0, k = 0;
    for (let s = 0; s < SERIES; s++) {
      const runs = CONC.map((c) => { const d = drawn(rng, K2 * c); return { concentration_M: c, kObs_perSecond: d.value, kObsStdErr_perSecond: d.se }; });
      const r = rateLawFromSeries(runs);
      if (!r.ok) throw new Error(r.error);
      if (r.orderCI95![0] < 1 && 1 < r.orderCI95![1]) order++;
      if (r.kCI95![0] < K2 && K2 < r.kCI95![1]) k++;
    }
    expectCoverage(order, 1);
    expectCoverage(k, 2);
  });

  it('negative control: the internal interval alone, when the runs understate their SE by half, covers far less', () => {
    const rng = seededRandom(7);
    let covered = 0;
    for (let s = 0; s < SERIES; s++) {
      const y = CONC.map((c) => Math.log(K2 * c) + SIGMA_REL * rng.normal());
      const line = fitSeriesLine(CONC.map(Math.log), y, CONC.map(() => SIGMA_REL / 2));
      if (!line.ok) throw new Error(line.error);
      const ci = interval95(line.slope, line.internalSlopeStdErr, Z);
      if (ci![0] < 1 && 1 < ci![1]) covered++;
    }
    expect(covered / SERIES).toBeLessThan(0.8);
  });

  it('Ea and the predicted k at 40 °C from five temperatures (15–35 °C)', () => {
    const rng = seededRandom(2);
    const temps = [15, 20, 25, 30, 35];
    let ea = 0, pred = 0;
    for (let s = 0; s < SERIES; s++) {
      const runs = temps.map((t) => { const d = drawn(rng, kAt(t)); return { temperature_C: t, k: d.value, kStdErr: d.se }; });
      const f = arrheniusFit(runs);
      if (!f.ok) throw new Error(f.error);
      const [lo, hi] = f.activationEnergyCI95_kJPerMol!;
      if (lo < 48 && 48 < hi) ea++;
      const p = predictRateConstant(f, 40);
      if ('ok' in p) throw new Error(p.error);
      if (p.kCI95![0] < kAt(40) && kAt(40) < p.kCI95![1]) pred++;
    }
    expectCoverage(ea, 3);
    expectCoverage(pred, 3);
  });
});
