import { describe, expect, it } from 'vitest';
import { linearRegression } from 'simple-statistics';
import { calibrate, predictConcentration, absorbanceToConcentration, type CalibrationStandard, type Calibration } from './calibration';
import { noisyAbsorbance } from './reactionModel';
import { seededRandom } from './random';
import { studentTQuantile } from './fit/studentT';

// DEMO.md (demo data): standards 0.5–6.0 µM, ε = 1.30e5 M⁻¹ cm⁻¹, 1.00 cm, σ_T = 0.001.
const EPSILON = 1.3e5;
const LEVELS_uM = [0.5, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0];

function demoStandards(seed: number, replicates = 3, blank_AU = 0.004): CalibrationStandard[] {
  const rng = seededRandom(seed);
  const out: CalibrationStandard[] = [];
  for (const c of LEVELS_uM) {
    for (let r = 1; r <= replicates; r++) {
      const trueA = EPSILON * 1.0 * c * 1e-6 + blank_AU;
      out.push({ concentration_M: c * 1e-6, absorbance: noisyAbsorbance(trueA, { sigmaT: 0.001 }, rng), replicate: r });
    }
  }
  return out;
}

/** The plain line these checks are about: unweighted, with an intercept (the self-tests are in calibrationChecks.test.ts). */
function mustCalibrate(standards: CalibrationStandard[], opts = {}): Calibration {
  const out = calibrate(standards, { intercept: true, weighted: false, ...opts });
  if (!out.ok) throw new Error(out.error);
  return out.calibration;
}

describe('Beer–Lambert calibration on the demo standards', () => {
  it('recovers ε within its confidence interval, with no linear-range warning', () => {
    // DEMO.md demo values: ε = 1.30e5 M⁻¹ cm⁻¹, b = 1.00 cm, A up to about 0.78
    const cal = mustCalibrate(demoStandards(42));
    const [lo, hi] = cal.epsilonCI_perMperCm!;
    expect(lo).toBeLessThan(EPSILON);
    expect(hi).toBeGreaterThan(EPSILON);
    expect(Math.abs(cal.epsilon_perMperCm / EPSILON - 1)).toBeLessThan(0.01);
    expect(cal.n).toBe(21);
    expect(cal.dof).toBe(19);
    expect(cal.distinctConcentrations).toBe(7);
    expect(cal.warnings).toEqual([]);
    // blank offset found too
    expect(Math.abs(cal.intercept_AU - 0.004)).toBeLessThan(4 * cal.interceptStdErr_AU!);
  });

  it('slope and intercept agree with simple-statistics linearRegression', () => {
    // independent oracle: simple-statistics linearRegression
    const std = demoStandards(7);
    const ref = linearRegression(std.map((s) => [s.concentration_M, s.absorbance]));
    const cal = mustCalibrate(std);
    expect(cal.slope_perM / ref.m).toBeCloseTo(1, 12);
    expect(cal.intercept_AU).toBeCloseTo(ref.b, 12);
  });

  it('ε with path length: ε = slope / b', () => {
    const std = demoStandards(3);
    const one = mustCalibrate(std, { pathLength_cm: 1 });
    const half = mustCalibrate(std, { pathLength_cm: 0.5 });
    expect(half.epsilon_perMperCm).toBeCloseTo(2 * one.epsilon_perMperCm, 6);
    expect(half.epsilonStdErr_perMperCm!).toBeCloseTo(2 * one.epsilonStdErr_perMperCm!, 6);
  });

  it('the 95% CI of ε covers the truth about 95% of the time (homoscedastic noise)', () => {
    // common practice: a correct 95% interval covers the true value in 95% of repeats;
    // 400 repeats give a binomial SD of about 1.1 percentage points.
    const rng = seededRandom(99);
    let covered = 0;
    const repeats = 400;
    for (let k = 0; k < repeats; k++) {
      const std = LEVELS_uM.map((c) => ({ concentration_M: c * 1e-6, absorbance: EPSILON * c * 1e-6 + 0.003 + 0.002 * rng.normal() }));
      const [lo, hi] = mustCalibrate(std).epsilonCI_perMperCm!;
      if (lo <= EPSILON && EPSILON <= hi) covered++;
    }
    expect(covered / repeats).toBeGreaterThan(0.92);
    expect(covered / repeats).toBeLessThan(0.98);
  });
});

describe('inverse prediction', () => {
  it('SE matches the handbook calibration-curve formula computed by hand', () => {
    // handbook formula: s_c = (s_y/b) √(1/m + 1/n + (y0 − ȳ)² / (b² Σ(x − x̄)²))
    const std = demoStandards(11);
    const cal = mustCalibrate(std);
    const xs = std.map((s) => s.concentration_M);
    const ys = std.map((s) => s.absorbance);
    const n = xs.length;
    const xbar = xs.reduce((a, b) => a + b, 0) / n;
    const ybar = ys.reduce((a, b) => a + b, 0) / n;
    let sxx = 0, sxy = 0;
    for (let i = 0; i < n; i++) { sxx += (xs[i]! - xbar) ** 2; sxy += (xs[i]! - xbar) * (ys[i]! - ybar); }
    const b = sxy / sxx;
    const a = ybar - b * xbar;
    let ss = 0;
    for (let i = 0; i < n; i++) ss += (ys[i]! - a - b * xs[i]!) ** 2;
    const sy = Math.sqrt(ss / (n - 2));
    for (const [y0, m] of [[0.65, 1], [0.3, 3], [0.07, 2]] as const) {
      const byHand = (sy / b) * Math.sqrt(1 / m + 1 / n + (y0 - ybar) ** 2 / (b * b * sxx));
      const est = predictConcentration(cal, y0, m);
      expect(est.concentration_M).toBeCloseTo((y0 - a) / b, 15);
      expect(est.stdErr_M! / byHand).toBeCloseTo(1, 10);
      const t = studentTQuantile(0.975, n - 2);
      expect(est.ci_M![1] - est.concentration_M).toBeCloseTo(t * byHand, 15);
      expect(est.warnings).toEqual([]);
    }
  });

  it('negative control: leaving out the 1/m term gives a different SE', () => {
    const cal = mustCalibrate(demoStandards(11));
    const one = predictConcentration(cal, 0.65, 1).stdErr_M!;
    const many = predictConcentration(cal, 0.65, 10).stdErr_M!;
    expect(many).toBeLessThan(0.5 * one);
  });

  it('through the origin: s_c = (s_y/b) √(1/m + y0²/(b² Σx²))', () => {
    // handbook formula for a line through the origin (Var b = s²/Σx²)
    const std = demoStandards(5, 2, 0);
    const cal = mustCalibrate(std, { intercept: false });
    expect(cal.intercept_AU).toBe(0);
    expect(cal.interceptStdErr_AU).toBeNull();
    const xs = std.map((s) => s.concentration_M);
    const ys = std.map((s) => s.absorbance);
    const sxx = xs.reduce((acc, x) => acc + x * x, 0);
    const b = xs.reduce((acc, x, i) => acc + x * ys[i]!, 0) / sxx;
    const ss = ys.reduce((acc, y, i) => acc + (y - b * xs[i]!) ** 2, 0);
    const sy = Math.sqrt(ss / (xs.length - 1));
    const y0 = 0.4;
    const byHand = (sy / b) * Math.sqrt(1 + (y0 * y0) / (b * b * sxx));
    expect(predictConcentration(cal, y0).stdErr_M! / byHand).toBeCloseTo(1, 10);
  });

  it('warns when the unknown lies outside the standards', () => {
    const cal = mustCalibrate(demoStandards(1));
    expect(predictConcentration(cal, 1.2).warnings.join(' ')).toMatch(/extrapolated/);
  });

  it('converts an absorbance series to concentration', () => {
    const cal = mustCalibrate(demoStandards(2));
    const a = Float64Array.of(0.65, 0.325, 0.004, 99);
    const c = absorbanceToConcentration(cal, a, 3);
    expect(c.length).toBe(3);
    for (let i = 0; i < 3; i++) expect(c[i]).toBeCloseTo((a[i]! - cal.intercept_AU) / cal.slope_perM, 15);
    expect(c[0]! * 1e6).toBeCloseTo(5.0, 1); // demo run: A ≈ 0.65 is 5.0 µM
  });
});

describe('linear range and bad standards', () => {
  it('warns about a standard above 1 AU', () => {
    const std = [...demoStandards(4), { concentration_M: 10e-6, absorbance: 1.31 }];
    const cal = mustCalibrate(std);
    expect(cal.warnings.join(' ')).toMatch(/above 1 AU/);
  });

  it('warns when the standards curve (saturating response), not when they are straight', () => {
    // common practice: a significant quadratic term flags curvature
    const rng = seededRandom(12);
    const curved = LEVELS_uM.map((c) => {
      const lin = EPSILON * c * 1e-6;
      return { concentration_M: c * 1e-6, absorbance: lin / (1 + 0.25 * lin) + 0.001 * rng.normal() };
    });
    const bent = mustCalibrate(curved);
    expect(bent.curvatureP!).toBeLessThan(0.01);
    expect(bent.warnings.join(' ')).toMatch(/residuals curve/);
    const straight = mustCalibrate(demoStandards(12));
    expect(straight.curvatureP!).toBeGreaterThan(0.01);
    expect(straight.warnings.join(' ')).not.toMatch(/curve/);
  });

  it('bad standards are errors as values with one clear sentence', () => {
    const one = calibrate([{ concentration_M: 1e-6, absorbance: 0.13 }, { concentration_M: 1e-6, absorbance: 0.14 }]);
    expect(one.ok).toBe(false);
    if (!one.ok) expect(one.error).toMatch(/at least 2 different concentrations/);
    const nan = calibrate([{ concentration_M: 1e-6, absorbance: NaN }, { concentration_M: 2e-6, absorbance: 0.26 }]);
    expect(nan.ok).toBe(false);
    if (!nan.ok) expect(nan.error).toMatch(/^standard 1 .*not a number/);
    const neg = calibrate([{ concentration_M: -1e-6, absorbance: 0.1 }, { concentration_M: 2e-6, absorbance: 0.26 }]);
    expect(neg.ok).toBe(false);
    if (!neg.ok) expect(neg.error).toMatch(/negative/);
    const below = calibrate([{ concentration_M: 1e-6, absorbance: -0.2 }, { concentration_M: 2e-6, absorbance: 0.26 }]);
    expect(below.ok).toBe(false);
    if (!below.ok) expect(below.error).toMatch(/^standard 1 .*absorbance is negative/);
    // a few mAU below the blank is noise: accepted
    expect(calibrate([{ concentration_M: 0, absorbance: -0.002 }, { concentration_M: 2e-6, absorbance: 0.26 }, { concentration_M: 4e-6, absorbance: 0.52 }]).ok).toBe(true);
    expect(calibrate([], {}).ok).toBe(false);
    expect(calibrate(demoStandards(1), { pathLength_cm: 0 }).ok).toBe(false);
  });

  it('two standards give a line without uncertainty, and say so', () => {
    const out = calibrate([{ concentration_M: 1e-6, absorbance: 0.131 }, { concentration_M: 5e-6, absorbance: 0.652 }]);
    expect(out.ok).toBe(true);
    if (!out.ok) return;
    expect(out.calibration.epsilonCI_perMperCm).toBeNull();
    expect(out.calibration.warnings.join(' ')).toMatch(/no degrees of freedom/);
    expect(predictConcentration(out.calibration, 0.3).stdErr_M).toBeNull();
  });
});
