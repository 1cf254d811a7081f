import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { linearRegression, rSquared as ssRSquared, linearRegressionLine } from 'simple-statistics';
import { linearFit } from './linearFit';
import { parseStrd, type StrdDataset } from './nistStrd';
import { seededRandom } from '../random';

const dir = join(__dirname, '../../test/fixtures/nist-strd');
const load = (file: string): StrdDataset => parseStrd(readFileSync(join(dir, file), 'utf8'));
const digits = (a: number, b: number): number => (a === b ? 16 : -Math.log10(Math.abs(a - b) / Math.abs(b)));

describe('linearFit against NIST StRD', () => {
  it('Norris (with intercept): estimates, standard deviations, residual SD and R²', () => {
    // NIST StRD Norris, certified values
    const ds = load('Norris.dat');
    const fit = linearFit({ x: ds.x, y: ds.y });
    const [b0, b1] = ds.parameters;
    expect(fit.ok).toBe(true);
    expect(digits(fit.intercept, b0!.certified)).toBeGreaterThanOrEqual(9);
    expect(digits(fit.slope, b1!.certified)).toBeGreaterThanOrEqual(9);
    expect(digits(fit.byName.intercept!.stdErr!, b0!.certifiedSd)).toBeGreaterThanOrEqual(9);
    expect(digits(fit.byName.slope!.stdErr!, b1!.certifiedSd)).toBeGreaterThanOrEqual(9);
    expect(digits(fit.residualSd!, ds.residualSd)).toBeGreaterThanOrEqual(9);
    expect(digits(fit.rSquared!, ds.rSquared!)).toBeGreaterThanOrEqual(9);
    expect(fit.dof).toBe(ds.x.length - 2);
  });

  it('NoInt1 (through the origin): estimate, standard deviation, residual SD and uncentred R²', () => {
    // NIST StRD NoInt1, certified values
    const ds = load('NoInt1.dat');
    const fit = linearFit({ x: ds.x, y: ds.y, intercept: false });
    const [b1] = ds.parameters;
    expect(fit.intercept).toBe(0);
    expect(fit.byName.intercept).toBeUndefined();
    expect(digits(fit.slope, b1!.certified)).toBeGreaterThanOrEqual(9);
    expect(digits(fit.byName.slope!.stdErr!, b1!.certifiedSd)).toBeGreaterThanOrEqual(9);
    expect(digits(fit.residualSd!, ds.residualSd)).toBeGreaterThanOrEqual(9);
    expect(digits(fit.rSquared!, ds.rSquared!)).toBeGreaterThanOrEqual(9);
    expect(fit.dof).toBe(ds.x.length - 1);
  });

  it('negative control: NoInt1 fitted with an intercept misses the through-origin certified slope', () => {
    // NIST StRD NoInt1, certified values (no-intercept model)
    const ds = load('NoInt1.dat');
    const fit = linearFit({ x: ds.x, y: ds.y, intercept: true });
    expect(digits(fit.slope, ds.parameters[0]!.certified)).toBeLessThan(2);
  });

  it('negative control: Norris with the one-pass variance formula in single precision loses the SD', () => {
    // NIST StRD Norris, certified values: shows the check is sharp enough to catch cancellation
    const ds = load('Norris.dat');
    const f32 = Math.fround;
    let sx = 0, sxx = 0;
    for (const v of ds.x) { sx = f32(sx + v); sxx = f32(sxx + f32(v * v)); }
    const n = ds.x.length;
    const sxxOnePass = f32(sxx - f32((sx * sx) / n));
    const fit = linearFit({ x: ds.x, y: ds.y });
    const seWrong = fit.residualSd! / Math.sqrt(sxxOnePass);
    expect(digits(seWrong, ds.parameters[1]!.certifiedSd)).toBeLessThan(digits(fit.byName.slope!.stdErr!, ds.parameters[1]!.certifiedSd) - 3);
  });
});

describe('linearFit against simple-statistics', () => {
  it('slope, intercept and R² agree on random lines', () => {
    // independent oracle: simple-statistics linearRegression and rSquared
    const rng = seededRandom(7);
    for (let trial = 0; trial < 20; trial++) {
      const n = 5 + Math.floor(rng.uniform() * 40);
      const pts: [number, number][] = [];
      const a = rng.normal() * 3;
      const b = rng.normal() * 2;
      for (let i = 0; i < n; i++) {
        const x = rng.uniform() * 10;
        pts.push([x, a + b * x + 0.3 * rng.normal()]);
      }
      const ref = linearRegression(pts);
      const fit = linearFit({ x: pts.map((p) => p[0]), y: pts.map((p) => p[1]) });
      expect(fit.slope).toBeCloseTo(ref.m, 10);
      expect(fit.intercept).toBeCloseTo(ref.b, 10);
      expect(fit.rSquared!).toBeCloseTo(ssRSquared(pts, linearRegressionLine(ref)), 10);
    }
  });

  it('integer weights act as replicated points (common practice identity)', () => {
    // common practice: weight k ≡ the point repeated k times (for estimates and χ²)
    const x = [0.5, 1, 2, 3, 4, 5, 6];
    const y = [0.066, 0.128, 0.262, 0.391, 0.517, 0.652, 0.778];
    const w = [1, 3, 2, 1, 4, 1, 2];
    const fx: number[] = [];
    const fy: number[] = [];
    x.forEach((xi, i) => { for (let k = 0; k < w[i]!; k++) { fx.push(xi); fy.push(y[i]!); } });
    const weighted = linearFit({ x, y, weights: w });
    const replicated = linearRegression(fx.map((xi, i) => [xi, fy[i]!]));
    expect(weighted.slope).toBeCloseTo(replicated.m, 12);
    expect(weighted.intercept).toBeCloseTo(replicated.b, 12);
    expect(weighted.sumWeights).toBe(fx.length);
  });

  it('CI is slope ± t(0.975, n − 2)·SE', () => {
    // handbook t-table: t(0.975, 5) = 2.5706
    const fit = linearFit({ x: [1, 2, 3, 4, 5, 6, 7], y: [2.1, 3.9, 6.2, 7.8, 10.1, 12.2, 13.8] });
    const [lo, hi] = fit.byName.slope!.ci!;
    expect((hi - lo) / 2 / fit.byName.slope!.stdErr!).toBeCloseTo(2.5706, 4);
  });

  it('bad input gives a value with one clear message, never a throw', () => {
    expect(linearFit({ x: [1, 1, 1], y: [1, 2, 3] }).warnings[0]).toMatch(/all x values are equal/);
    expect(linearFit({ x: [1], y: [1] }).ok).toBe(false);
    const nan = linearFit({ x: [1, 2, NaN], y: [1, 2, 3] });
    expect(nan.ok).toBe(false);
    expect(nan.warnings[0]).toMatch(/point 3/);
    const two = linearFit({ x: [1, 2], y: [1, 3] });
    expect(two.ok).toBe(true);
    expect(two.byName.slope!.stdErr).toBeNull();
  });
});
