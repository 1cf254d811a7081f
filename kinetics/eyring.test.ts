import { describe, expect, it } from 'vitest';
import { linearRegression } from 'simple-statistics';
import { BOLTZMANN_J_PER_K, eyringFit, PLANCK_J_S } from './eyring';
import { arrheniusFit, predictRateConstant } from './arrhenius';
import { celsiusToKelvin, GAS_CONSTANT_J_PER_MOL_K as R } from './temperature';

// CODATA 2018 exact values (SI 2019): R = 8.314462618 J mol⁻¹ K⁻¹, k_B = 1.380649e-23 J K⁻¹, h = 6.62607015e-34 J s;
// scipy 1.17.1 scipy.constants gives the same during development.
describe('constants and closed forms', () => {
  it('uses the CODATA 2018 exact constants; k_B·T/h = 6.212 × 10¹² s⁻¹ at 298.15 K', () => {
    expect(R).toBe(8.314462618);
    expect(BOLTZMANN_J_PER_K).toBe(1.380649e-23);
    expect(PLANCK_J_S).toBe(6.62607015e-34);
    // scipy 1.17.1 during development: k*298.15/h = 6212437991620.116
    expect((BOLTZMANN_J_PER_K * 298.15) / PLANCK_J_S / 1e12).toBeCloseTo(6.212438, 6);
  });

  it('a rate that doubles between 298 K and 308 K means Ea = 52.90 kJ/mol (52.95 for 25 → 35 °C)', () => {
    // closed form (handbook): Ea = R ln 2 / (1/T1 − 1/T2)
    const at = (t1: number, t2: number) => arrheniusFit([{ temperature_C: t1, k: 1 }, { temperature_C: t2, k: 2 }]);
    const a = at(298 - 273.15, 308 - 273.15);
    const b = at(25, 35);
    if (!a.ok || !b.ok) throw new Error('fit failed');
    expect(a.activationEnergy_kJPerMol.toFixed(2)).toBe('52.90');
    expect(b.activationEnergy_kJPerMol.toFixed(2)).toBe('52.95');
    // negative control: a rate that doubles per 10 K from 0 °C is a different Ea
    const c = at(0, 10);
    expect(c.ok && c.activationEnergy_kJPerMol.toFixed(2)).not.toBe('52.90');
  });
});

// A textbook-style Arrhenius data set, from memory: the first-order decomposition of N₂O₅,
// k/s⁻¹ at 273–338 K, usually quoted with Ea ≈ 103 kJ/mol. Values recalled, not looked up.
const N2O5: [number, number][] = [[273, 7.87e-7], [298, 3.46e-5], [308, 1.35e-4], [318, 4.98e-4], [328, 1.5e-3], [338, 4.87e-3]];
const n2o5Runs = () => N2O5.map(([T, k]) => ({ temperature_C: T - 273.15, k }));

describe('Arrhenius on the N₂O₅ data set (unweighted)', () => {
  it('Ea and ln A agree with simple-statistics; Ea ≈ 103 kJ/mol as the textbooks quote', () => {
    const f = arrheniusFit(n2o5Runs());
    if (!f.ok) throw new Error(f.error);
    const ref = linearRegression(N2O5.map(([T, k]) => [1 / T, Math.log(k)])); // independent library
    expect(f.activationEnergy_kJPerMol).toBeCloseTo((-ref.m * R) / 1000, 9);
    expect(f.lnPreExponential).toBeCloseTo(ref.b, 9);
    expect(Math.round(f.activationEnergy_kJPerMol)).toBe(103);
    expect(f.uncertainty.basis).toBe('scatter');
    // scipy 1.17.1 linregress during development: stderr of Ea 0.4713 kJ/mol
    expect(f.activationEnergyStdErr_kJPerMol!).toBeCloseTo(0.4713, 3);
  });

  it('predicts k at a named temperature with its interval; warns outside the measured temperatures', () => {
    const f = arrheniusFit(n2o5Runs());
    if (!f.ok) throw new Error(f.error);
    const inside = predictRateConstant(f, 35);
    if ('ok' in inside) throw new Error(inside.error);
    // the fitted line at 308.15 K, from the oracle's slope and intercept
    const ref = linearRegression(N2O5.map(([T, k]) => [1 / T, Math.log(k)]));
    expect(inside.lnK).toBeCloseTo(ref.b + ref.m / 308.15, 9);
    expect(inside.outsideMeasuredRange).toBe(false);
    expect(inside.kCI95![0]).toBeLessThan(inside.k);
    expect(inside.kCI95![1]).toBeGreaterThan(inside.k);
    // handbook: SE of the fitted mean at x₀ = s √(1/n + (x₀ − x̄)²/Sxx)
    const xs = N2O5.map(([T]) => 1 / T), ys = N2O5.map(([, k]) => Math.log(k));
    const xb = xs.reduce((a, b) => a + b, 0) / xs.length;
    const sxx = xs.reduce((a, x) => a + (x - xb) ** 2, 0);
    const s = Math.sqrt(xs.reduce((a, x, i) => a + (ys[i]! - ref.b - ref.m * x) ** 2, 0) / (xs.length - 2));
    expect(inside.lnKStdErr!).toBeCloseTo(s * Math.sqrt(1 / xs.length + (1 / 308.15 - xb) ** 2 / sxx), 10);
    const far = predictRateConstant(f, 90);
    if ('ok' in far) throw new Error(far.error);
    expect(far.outsideMeasuredRange).toBe(true);
    expect(far.warnings[0]).toMatch(/^90 °C lies outside the measured temperatures \(-0\.1\d*–64\.8\d* °C\)/);
    // the interval widens away from the data (the covariance term at work)
    expect(far.lnKStdErr!).toBeGreaterThan(2 * inside.lnKStdErr!);
    expect(predictRateConstant(f, -300)).toMatchObject({ ok: false, error: expect.stringMatching(/not a physical temperature/) });
  });
});

describe('Eyring: ΔH‡, ΔS‡, ΔG‡ from ln(k/T) against 1/T', () => {
  it('recovers ΔH‡ and ΔS‡ from rate constants made by the Eyring equation itself', () => {
    const dH = 45_000, dS = -60; // J/mol, J/(mol K)
    // Eyring equation (handbook, κ = 1, c° = 1 M): k = (k_B T/h) exp(ΔS‡/R) exp(−ΔH‡/RT)
    const runs = [15, 20, 25, 30, 35].map((t) => {
      const T = celsiusToKelvin(t);
      const k = ((BOLTZMANN_J_PER_K * T) / PLANCK_J_S) * Math.exp(dS / R) * Math.exp(-dH / (R * T));
      return { temperature_C: t, k, kStdErr: 0.01 * k };
    });
    const e = eyringFit(runs);
    if (!e.ok) throw new Error(e.error);
    expect(e.activationEnthalpy_kJPerMol).toBeCloseTo(45, 9);
    expect(e.activationEntropy_JPerMolK).toBeCloseTo(-60, 7);
    expect(e.activationGibbs_kJPerMol).toBeCloseTo((dH - 298.15 * dS) / 1000, 8);
    expect(e.uncertainty.basis).toBe('internal');
    expect(e.assumptions).toMatch(/transmission coefficient 1, standard state c° = 1 mol dm⁻³; ΔG‡ at 298\.15 K/);
    // handbook relation for a reaction in solution: Ea = ΔH‡ + R T (at the mean temperature, nearly)
    const a = arrheniusFit(runs);
    if (!a.ok) throw new Error(a.error);
    expect(a.activationEnergy_kJPerMol - e.activationEnthalpy_kJPerMol).toBeCloseTo((R * 298.15) / 1000, 1);
    // negative control: fitting ln k instead of ln(k/T) misses ΔH‡ by about RT
    expect(Math.abs(a.activationEnergy_kJPerMol - 45)).toBeGreaterThan(2);
  });

  it('agrees with simple-statistics on the N₂O₅ data (unweighted), ΔG‡ from the line at 298.15 K', () => {
    const e = eyringFit(n2o5Runs(), 's^-1');
    if (!e.ok) throw new Error(e.error);
    const ref = linearRegression(N2O5.map(([T, k]) => [1 / T, Math.log(k / T)]));
    expect(e.activationEnthalpy_kJPerMol).toBeCloseTo((-ref.m * R) / 1000, 9);
    expect(e.activationEntropy_JPerMolK).toBeCloseTo((ref.b - Math.log(BOLTZMANN_J_PER_K / PLANCK_J_S)) * R, 7);
    // scipy 1.17.1 linregress during development: ΔH‡ 100.382 kJ/mol, ΔS‡ 6.635 J/(mol K), ΔG‡ 98.404 kJ/mol, SE(ΔS‡) 1.523
    expect(e.activationEnthalpy_kJPerMol).toBeCloseTo(100.382, 3);
    expect(e.activationEntropy_JPerMolK).toBeCloseTo(6.635, 2);
    expect(e.activationGibbs_kJPerMol).toBeCloseTo(98.404, 3);
    expect(e.activationEntropyStdErr_JPerMolK!).toBeCloseTo(1.5233, 3);
    // ΔG‡ = −R T ln(k h/(k_B T)) at 298.15 K with k from the line (handbook Eyring form)
    const k298 = 298.15 * Math.exp(ref.b + ref.m / 298.15);
    expect(e.activationGibbs_kJPerMol).toBeCloseTo((-R * 298.15 * Math.log((k298 * PLANCK_J_S) / (BOLTZMANN_J_PER_K * 298.15))) / 1000, 8);
  });

  it('says what is wrong with unusable input', () => {
    expect(eyringFit([{ temperature_C: 25, k: 1 }])).toMatchObject({ ok: false, error: expect.stringMatching(/^an Eyring line needs runs at two or more temperatures/) });
    expect(eyringFit([{ temperature_C: 25, k: 1 }, { temperature_C: 30, k: 0, label: 'run 2' }])).toMatchObject({ ok: false, error: expect.stringMatching(/^run 2: rate constant 0 is not positive/) });
  });
});
