import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { linearRegression } from 'simple-statistics';
import { calibrate, predictConcentration, type Calibration, type CalibrationStandard } from './calibration';
import { fUpperTail } from './calibrationChecks';
import { parseStrd } from './fit/nistStrd';
import { noisyAbsorbance } from './reactionModel';
import { seededRandom } from './random';
import { concentrationsAfterMixing } from './dilution';

const nist = (name: string) => parseStrd(readFileSync(join(__dirname, '../test/fixtures/nist-strd', name), 'utf8'));
const must = (s: CalibrationStandard[], o = {}): Calibration => { const c = calibrate(s, o); if (!c.ok) throw new Error(c.error); return c.calibration; };
const asStandards = (x: Float64Array | number[], y: Float64Array | number[]): CalibrationStandard[] => Array.from(x, (c, i) => ({ concentration_M: c, absorbance: y[i] }));

// DEMO.md (demo data): ε = 1.30e5 M⁻¹ cm⁻¹, 1.00 cm, σ_T = 0.001; standards 0.5–6.0 µM.
const LEVELS_uM = [0.5, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0];
function standards(seed: number, blank_AU: number, replicates = 1, sigmaT = 0.001): CalibrationStandard[] {
  const rng = seededRandom(seed);
  return LEVELS_uM.flatMap((c) => Array.from({ length: replicates }, () => ({ concentration_M: c * 1e-6, absorbance: noisyAbsorbance(1.3e5 * c * 1e-6 + blank_AU, { sigmaT }, rng) })));
}

describe('the calibration code against NIST StRD', () => {
  it('Norris with an intercept: certified B0, B1, their SDs and the residual SD (NIST StRD Norris, certified values)', () => {
    const d = nist('Norris.dat');
    const c = must(asStandards(d.x, d.y), { intercept: true });
    expect(c.slope_perM).toBeCloseTo(1.00211681802045, 12);
    expect(c.intercept_AU).toBeCloseTo(-0.262323073774029, 12);
    expect(c.slopeStdErr_perM!).toBeCloseTo(0.429796848199937e-3, 14);
    expect(c.interceptStdErr_AU!).toBeCloseTo(0.232818234301152, 12);
    expect(c.residualSd_AU!).toBeCloseTo(0.884796396144373, 12);
    // and the self-test: the intercept does not differ from 0 (|t| = 1.13), so 'auto' goes through the origin
    expect(must(asStandards(d.x, d.y)).modelChoice.used).toBe('origin');
  });
  it('NoInt1 and NoInt2 through the origin (NIST StRD, certified values)', () => {
    const one = nist('NoInt1.dat'), two = nist('NoInt2.dat');
    const a = must(asStandards(one.x, one.y), { intercept: false });
    expect(a.slope_perM).toBeCloseTo(2.07438016528926, 12);
    expect(a.slopeStdErr_perM!).toBeCloseTo(0.165289256198347e-1, 13);
    const b = must(asStandards(two.x, two.y), { intercept: false });
    expect(b.slope_perM).toBeCloseTo(0.727272727272727, 12);
    expect(b.slopeStdErr_perM!).toBeCloseTo(0.420827318078432e-1, 13);
    expect(b.residualSd_AU!).toBeCloseTo(0.369274472937998, 12);
  });
  it('negative control: Norris forced through the origin misses the certified slope', () => {
    const d = nist('Norris.dat');
    expect(Math.abs(must(asStandards(d.x, d.y), { intercept: false }).slope_perM - 1.00211681802045)).toBeGreaterThan(1e-4);
  });
});

describe('origin or intercept, said with its reason', () => {
  it('a real 5 mAU blank is kept (t-test), and the unknown comes back right (before: ε 1.5% high, unknown 25% off, no warning)', () => {
    const std = standards(5, 0.005, 3, 0.0002);
    const c = must(std);
    expect(c.modelChoice.used).toBe('intercept');
    expect(c.modelChoice.reason).toMatch(/a = 0 is rejected/);
    expect(Math.abs(c.epsilon_perMperCm / 1.3e5 - 1)).toBeLessThan(0.005);
    const unknown = predictConcentration(c, 1.3e5 * 0.2e-6 + 0.005);
    expect(unknown.ci_M![0]).toBeLessThan(0.2e-6);
    expect(unknown.ci_M![1]).toBeGreaterThan(0.2e-6);
    // negative control: the origin line on the same standards is off by more than its own interval
    const origin = must(std, { intercept: false });
    const wrong = predictConcentration(origin, 1.3e5 * 0.2e-6 + 0.005);
    expect(wrong.ci_M![0]).toBeGreaterThan(0.2e-6);
  });
  it('no blank offset: the origin line is used and said so', () => {
    const c = must(standards(6, 0, 3, 0.0002));
    expect(c.modelChoice.used).toBe('origin');
    expect(c.modelChoice.reason).toMatch(/does not differ from zero/);
  });
  it('weighted by the noise model when replicates show the noise growing with absorbance; the ordinary line agrees with simple-statistics', () => {
    const std = LEVELS_uM.flatMap((c) => [0, 1, 2].map(() => c)).map((c, i) => ({ concentration_M: c * 1e-6, absorbance: 0.13 * c * (1 + 0.02 * Math.sin(7 * i)) }));
    const c = must(std);
    expect(c.weighting.weighted).toBe(true);
    expect(c.weighting.reason).toMatch(/replicates' SD grows/);
    const plain = must(std, { weighted: false, intercept: true });
    const ref = linearRegression(std.map((s) => [s.concentration_M, s.absorbance])); // simple-statistics oracle
    expect(plain.slope_perM / ref.m).toBeCloseTo(1, 12);
  });
});

describe('LOD, LOQ, odd standards, lack of fit, zero dof and bad input', () => {
  it('LOD = 3.3 σ/S and LOQ = 10 σ/S (ICH Q2(R1)), σ the residual SD or the blank replicates\' SD', () => {
    const c = must(standards(7, 0.003), { intercept: true, weighted: false });
    expect(c.detection!.lod_M).toBeCloseTo((3.3 * c.residualSd_AU!) / c.slope_perM, 15);
    expect(c.detection!.loq_M).toBeCloseTo((10 * c.residualSd_AU!) / c.slope_perM, 15);
    expect(c.detection!.sigmaFrom).toBe('residual SD of the line');
    const blank = [0.0031, 0.0024, 0.0035, 0.0029];
    const b = must(standards(7, 0.003), { blankAbsorbances: blank });
    const m = blank.reduce((s, v) => s + v) / 4;
    const sd = Math.sqrt(blank.reduce((s, v) => s + (v - m) ** 2, 0) / 3);
    expect(b.detection!.lod_M).toBeCloseTo((3.3 * sd) / b.slope_perM, 15);
    expect(b.detection!.sigmaFrom).toBe('SD of the blank replicates');
  });
  it('a standard that does not belong is named (externally studentised residual, checked against a leave-one-out refit)', () => {
    const std = standards(8, 0.003);
    std[3] = { ...std[3], absorbance: std[3].absorbance + 0.03 };
    const c = must(std, { intercept: true, weighted: false });
    expect(c.outlyingStandards.map((o) => o.index)).toEqual([3]);
    // oracle: simple-statistics line without standard 4; t = deleted residual / its SE
    const rest = std.filter((_, i) => i !== 3).map((s) => [s.concentration_M, s.absorbance]);
    const lo = linearRegression(rest);
    const n = rest.length, xs = rest.map((p) => p[0]), xm = xs.reduce((a, b) => a + b) / n;
    const sxx = xs.reduce((a, x) => a + (x - xm) ** 2, 0);
    const s = Math.sqrt(rest.reduce((a, p) => a + (p[1] - lo.b - lo.m * p[0]) ** 2, 0) / (n - 2));
    const x3 = std[3].concentration_M;
    const t = (std[3].absorbance - lo.b - lo.m * x3) / (s * Math.sqrt(1 + 1 / n + (x3 - xm) ** 2 / sxx));
    expect(c.outlyingStandards[0].t).toBeCloseTo(t, 8);
    expect(c.warnings.join(' ')).toMatch(/standard 4 .* does not belong/);
  });
  it('lack of fit when standards are replicated: a bent response is caught, a straight one is not', () => {
    // F tail: F(0.95; 1, 10) = 4.96 (from memory, standard F tables)
    expect(fUpperTail(4.965, 1, 10)).toBeCloseTo(0.05, 3);
    const bent = LEVELS_uM.flatMap((c, j) => [0, 1, 2].map((r) => ({ concentration_M: c * 1e-6, absorbance: 0.13 * c - 0.004 * c * c + 0.001 * Math.sin(3 * j + r) })));
    const straight = LEVELS_uM.flatMap((c, j) => [0, 1, 2].map((r) => ({ concentration_M: c * 1e-6, absorbance: 0.13 * c + 0.001 * Math.sin(3 * j + r) })));
    expect(must(bent, { weighted: false }).lackOfFit!.p).toBeLessThan(0.01);
    expect(must(straight, { weighted: false }).lackOfFit!.p).toBeGreaterThan(0.05);
  });
  it('two standards: no uncertainty claimed (before: "± 0.000000")', () => {
    const c = must([{ concentration_M: 1e-6, absorbance: 0.13 }, { concentration_M: 2e-6, absorbance: 0.26 }], { intercept: true });
    expect(c.slopeStdErr_perM).toBeNull();
    expect(c.residualSd_AU).toBeNull();
    expect(c.warnings.join(' ')).toMatch(/no degrees of freedom/);
  });
  it('a huge absorbance is refused with one sentence (before: slope = Infinity)', () => {
    const out = calibrate([{ concentration_M: 1e-6, absorbance: 0.13 }, { concentration_M: 2e-6, absorbance: 1e308 }, { concentration_M: 3e-6, absorbance: 1e308 }]);
    expect(out.ok).toBe(false);
    if (!out.ok) expect(out.error).toMatch(/not finite/);
  });
});

describe('concentrations after mixing (C1V1 = C2V2)', () => {
  it('each stock diluted into the total volume, with the dilution shown', () => {
    const mix = concentrationsAfterMixing([
      { name: 'dye', stock_M: 50e-6, volume_mL: 0.3 },
      { name: 'hypochlorite', stock_M: 0.1, volume_mL: 0.3 },
      { name: 'water', stock_M: 0, volume_mL: 2.4 },
    ]);
    expect(mix.ok).toBe(true);
    if (!mix.ok) return;
    expect(mix.total_mL).toBeCloseTo(3.0, 12);
    expect(mix.species[0].concentration_M).toBeCloseTo(5e-6, 18);
    expect(mix.species[1].concentration_M).toBeCloseTo(0.01, 15);
    expect(mix.species[1].working).toBe('hypochlorite: 0.1 M × 0.3 mL / 3 mL = 0.01 M');
  });
  it('a negative or missing volume is refused', () => {
    expect(concentrationsAfterMixing([{ name: 'dye', stock_M: 1, volume_mL: -1 }]).ok).toBe(false);
  });
});
