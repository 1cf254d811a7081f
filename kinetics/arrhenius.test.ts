import { describe, expect, it } from 'vitest';
import { linearRegression } from 'simple-statistics';
import { arrheniusFit, type RateAtTemperature } from './arrhenius';
import { celsiusToKelvin, GAS_CONSTANT_J_PER_MOL_K as R } from './temperature';

// Demo scenario (DEMO.md, invented demo numbers): k = 0.35 M⁻¹ s⁻¹ at 25.0 °C, Ea = 48 kJ/mol.
const EA_J = 48_000;
const kAt = (tC: number) => 0.35 * Math.exp((-EA_J / R) * (1 / celsiusToKelvin(tC) - 1 / celsiusToKelvin(25)));
const demoRuns = (): RateAtTemperature[] => [15, 20, 25, 30, 35].map((t) => ({ temperature_C: t, k: kAt(t) }));

describe('Arrhenius fit', () => {
  it('recovers the activation energy and pre-exponential factor from exact rate constants', () => {
    const r = arrheniusFit(demoRuns());
    if (!r.ok) throw new Error(r.error);
    expect(r.activationEnergy_kJPerMol).toBeCloseTo(48, 9);
    // Handbook form of the Arrhenius equation: A = k / exp(−Ea/RT) at any one temperature.
    expect(r.preExponential).toBeCloseTo(0.35 / Math.exp(-EA_J / (R * 298.15)), 2);
    expect(r.preExponential / (0.35 / Math.exp(-EA_J / (R * 298.15)))).toBeCloseTo(1, 9);
  });

  it('matches the handbook two-point form Ea = R ln(k2/k1) / (1/T1 − 1/T2)', () => {
    const runs = [{ temperature_C: 20, k: 0.21 }, { temperature_C: 30, k: 0.43 }];
    const r = arrheniusFit(runs);
    if (!r.ok) throw new Error(r.error);
    const twoPoint = (R * Math.log(0.43 / 0.21)) / (1 / 293.15 - 1 / 303.15) / 1000;
    expect(r.activationEnergy_kJPerMol).toBeCloseTo(twoPoint, 9);
    expect(r.activationEnergyStdErr_kJPerMol).toBeNull();
    expect(r.warnings.join(' ')).toMatch(/no degrees of freedom/);
  });

  it('agrees with simple-statistics on noisy unweighted data (independent oracle)', () => {
    const noise = [0.03, -0.05, 0.02, 0.04, -0.03];
    const runs = demoRuns().map((r, i) => ({ ...r, k: r.k * Math.exp(noise[i]!) }));
    const r = arrheniusFit(runs);
    if (!r.ok) throw new Error(r.error);
    const oracle = linearRegression(runs.map((p) => [1 / celsiusToKelvin(p.temperature_C), Math.log(p.k)]));
    expect(r.activationEnergy_kJPerMol).toBeCloseTo((-oracle.m * R) / 1000, 9);
    expect(r.lnPreExponential).toBeCloseTo(oracle.b, 9);
    const [lo, hi] = r.activationEnergyCI95_kJPerMol!;
    expect(lo).toBeLessThan(r.activationEnergy_kJPerMol);
    expect(hi).toBeGreaterThan(r.activationEnergy_kJPerMol);
  });

  it('weights the runs by their rate-constant uncertainty', () => {
    const runs = demoRuns().map((r, i) => ({ ...r, k: r.k * (i === 0 ? 1.3 : 1), kStdErr: r.k * (i === 0 ? 0.5 : 0.01) }));
    const r = arrheniusFit(runs);
    if (!r.ok) throw new Error(r.error);
    expect(r.weighted).toBe(true);
    // The badly measured first run barely moves Ea.
    expect(Math.abs(r.activationEnergy_kJPerMol - 48)).toBeLessThan(0.5);
  });

  // Negative control: the fit given the temperatures in the wrong unit (°C read as kelvin) misses Ea.
  it('negative control: the Ea check fails when °C are taken for kelvin', () => {
    const runs = demoRuns();
    const eaNear48 = (r: ReturnType<typeof arrheniusFit>): boolean => r.ok && Math.abs(r.activationEnergy_kJPerMol - 48) < 0.5;
    expect(eaNear48(arrheniusFit(runs))).toBe(true);
    // temperature_C − 273.15 is what the fit sees when a °C value is read as a kelvin one
    expect(eaNear48(arrheniusFit(runs.map((p) => ({ ...p, temperature_C: p.temperature_C - 273.15 }))))).toBe(false);
  });

  it('says what is wrong with unusable input', () => {
    expect(arrheniusFit([{ temperature_C: 25, k: 0.3 }])).toMatchObject({ ok: false, error: expect.stringMatching(/two or more/) });
    expect(arrheniusFit([{ temperature_C: 25, k: 0.3 }, { temperature_C: 25, k: 0.31 }])).toMatchObject({ ok: false, error: expect.stringMatching(/same temperature/) });
    expect(arrheniusFit([{ temperature_C: 25, k: 0.3 }, { temperature_C: 30, k: -1, label: 'run B' }])).toMatchObject({ ok: false, error: expect.stringMatching(/^run B: rate constant -1/) });
  });
});
