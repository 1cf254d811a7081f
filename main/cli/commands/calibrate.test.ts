import { describe, expect, it } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { linearRegression, rSquared, sum, mean } from 'simple-statistics';
import { demoStandardsCsv } from '../../../test/fixtures/demoStandards';
import { ratelineIn, ROOT } from '../../../test/cli/ratelineCli';

const root = ROOT;
const fixture = join(root, 'test', 'fixtures', 'demo-standards.csv');
const { dir, rateline } = ratelineIn('rateline-calibrate-');
const json = (...args: string[]) => {
  const r = rateline(...args, '--format', 'json');
  expect(r.err).toBe('');
  expect(r.code).toBe(0);
  return JSON.parse(r.out);
};

/** The standards as the test reads them itself, straight from the file. */
function points(text: string): [number, number][] {
  return text.split('\n').filter((l) => /^\d/.test(l)).map((l) => l.split(',').map(Number) as [number, number]);
}
const data = points(readFileSync(fixture, 'utf8'));
const close = (a: number, b: number, rel = 1e-9) => expect(Math.abs(a - b)).toBeLessThanOrEqual(rel * Math.max(Math.abs(b), 1e-300));
// handbook: Student t table, two-sided 95%: t(12) = 2.1788, t(13) = 2.1604
const T12 = 2.1788, T13 = 2.1604;

describe('rateline calibrate, run for real on the demo standards', () => {
  it('the demo standards file is what the generator writes, says it is demo data, and starts with a # comment', () => {
    const text = readFileSync(fixture, 'utf8');
    expect(text).toBe(demoStandardsCsv());
    expect(text.split('\n')[0]).toMatch(/^# .*demo data/);
    expect(data).toHaveLength(14);
    // DEMO.md: 0.5–6.0 µM standards, ε = 1.30e5 M⁻¹ cm⁻¹, 1.00 cm → A = ε b c within the noise (σ_A ≤ 0.003 AU)
    for (const [c, a] of data) expect(Math.abs(a - 1.3e5 * c * 1e-6)).toBeLessThan(0.005);
  });

  it('with --intercept: slope, intercept, R², residuals and SEs agree with simple-statistics and the handbook formulas', () => {
    const j = json('calibrate', fixture, '--intercept');
    const ref = linearRegression(data); // independent library: ordinary least squares y = m x + b
    expect(j.concentrationUnit).toBe('µM');
    close(j.slope_AUperUnit, ref.m);
    close(j.intercept_AU, ref.b, 1e-7);
    close(j.rSquared, rSquared(data, (x) => ref.m * x + ref.b), 1e-12);
    // handbook: ε = slope / b, slope per M = slope per µM × 10⁶
    close(j.epsilon_perMperCm, ref.m * 1e6 / 1.0);
    const n = data.length;
    const cBar = mean(data.map((p) => p[0]));
    const sxx = sum(data.map(([c]) => (c - cBar) ** 2));
    const ssRes = sum(data.map(([c, a]) => (a - ref.m * c - ref.b) ** 2));
    const s = Math.sqrt(ssRes / (n - 2)); // handbook: residual SD on n − 2 dof
    close(j.residualSd_AU, s, 1e-7);
    close(j.slopeStdErr_AUperUnit, s / Math.sqrt(sxx), 1e-7); // handbook: s_b = s / √Sxx
    close(j.interceptStdErr_AU, s * Math.sqrt(1 / n + cBar ** 2 / sxx), 1e-7); // handbook: s_a = s √(1/n + c̄²/Sxx)
    close(j.slopeCI95_AUperUnit[1] - j.slope_AUperUnit, T12 * j.slopeStdErr_AUperUnit, 1e-4);
    close(j.epsilonCI95_perMperCm[0], j.epsilon_perMperCm - T12 * j.epsilonStdErr_perMperCm, 1e-6);
    close(j.interceptCI95_AU[1] - j.intercept_AU, T12 * j.interceptStdErr_AU, 1e-4);
    expect(j.dof).toBe(12);
    expect(j.n).toBe(data.length);
    expect(j.distinctConcentrations).toBe(new Set(data.map((p) => p[0])).size);
    expect(j.pathLength_cm).toBe(1);
    expect(j.residuals).toHaveLength(14);
    j.residuals.forEach((r: { line: number; concentration: number; absorbance: number; fitted_AU: number; residual_AU: number }, i: number) => {
      expect(r.line).toBe(i + 3); // comment line, header, then the standards
      expect(Math.abs(r.residual_AU - (data[i][1] - ref.m * data[i][0] - ref.b))).toBeLessThan(1e-9);
      expect(Math.abs(r.fitted_AU - (ref.m * data[i][0] + ref.b))).toBeLessThan(1e-9);
    });
    // negative control: the centred R² of a wrong slope is visibly worse than the one reported
    expect(Math.abs(j.rSquared - rSquared(data, (x) => 1.02 * ref.m * x + ref.b))).toBeGreaterThan(1e-4);
    // DEMO.md: the true ε 1.30e5 lies in the CI
    expect(j.epsilonCI95_perMperCm[0]).toBeLessThan(1.3e5);
    expect(j.epsilonCI95_perMperCm[1]).toBeGreaterThan(1.3e5);
  });

  it('--predict reads unknowns back with the handbook inverse-prediction standard error', () => {
    const j = json('calibrate', fixture, '--intercept', '--predict', '0.30', '0.65');
    const ref = linearRegression(data);
    const n = data.length;
    const cBar = mean(data.map((p) => p[0]));
    const aBar = mean(data.map((p) => p[1]));
    const sxx = sum(data.map(([c]) => (c - cBar) ** 2));
    const s = Math.sqrt(sum(data.map(([c, a]) => (a - ref.m * c - ref.b) ** 2)) / (n - 2));
    // handbook (calibration curve, one reading of the unknown): s_c = (s/m) √(1 + 1/n + (A₀ − Ā)² / (m² Sxx))
    const se = (a0: number) => (s / ref.m) * Math.sqrt(1 + 1 / n + (a0 - aBar) ** 2 / (ref.m ** 2 * sxx));
    expect(j.predictions).toHaveLength(2);
    for (const [i, a0] of [0.3, 0.65].entries()) {
      const p = j.predictions[i];
      close(p.concentration, (a0 - ref.b) / ref.m, 1e-7);
      close(p.stdErr, se(a0), 1e-6);
      close(p.ci95[1] - p.concentration, T12 * p.stdErr, 1e-4);
      // negative control: leaving out the 1/m term (the unknown's own reading) gives a clearly smaller SE
      const wrong = (s / ref.m) * Math.sqrt(1 / n + (a0 - aBar) ** 2 / (ref.m ** 2 * sxx));
      expect(p.stdErr / wrong).toBeGreaterThan(1.5);
      expect(p.warnings).toEqual([]);
    }
    // DEMO.md: a run at 5.0 µM reads A ≈ 0.65
    expect(Math.abs(j.predictions[1].concentration - 5.0)).toBeLessThan(3 * j.predictions[1].stdErr);
    // outside the standards: extrapolation is said
    expect(json('calibrate', fixture, '--predict', '1.2').predictions[0].warnings.join(' ')).toMatch(/extrapolated/);
  });

  it('without --intercept the line goes through the origin (handbook formulas for y = b x)', () => {
    const j = json('calibrate', fixture);
    const sxy = sum(data.map(([c, a]) => c * a));
    const sx2 = sum(data.map(([c]) => c * c));
    const b = sxy / sx2; // handbook: least squares through the origin, b = Σxy / Σx²
    const n = data.length;
    const ssRes = sum(data.map(([c, a]) => (a - b * c) ** 2));
    const s = Math.sqrt(ssRes / (n - 1));
    expect(j.intercept_AU).toBeNull();
    expect(j.dof).toBe(13);
    close(j.slope_AUperUnit, b, 1e-12);
    close(j.slopeStdErr_AUperUnit, s / Math.sqrt(sx2), 1e-7); // handbook: s_b = s / √Σx²
    close(j.slopeCI95_AUperUnit[0], b - T13 * s / Math.sqrt(sx2), 1e-6);
    close(j.rSquared, 1 - ssRes / sum(data.map(([, a]) => a * a)), 1e-12); // common practice: uncentred R² through the origin
    const a0 = 0.3;
    const p = json('calibrate', fixture, '--predict', String(a0)).predictions[0];
    close(p.concentration, a0 / b, 1e-12);
    close(p.stdErr, (s / b) * Math.sqrt(1 + a0 ** 2 / (b * b * sx2)), 1e-6); // handbook: through the origin
    // negative control: the with-intercept slope differs from Σxy/Σx² by more than the tolerance used
    expect(Math.abs(linearRegression(data).m - b) / b).toBeGreaterThan(1e-4);
  });

  it('--path-cm divides ε by the path length; mM and semicolons with decimal commas give the same ε', () => {
    const base = json('calibrate', fixture);
    close(json('calibrate', fixture, '--path-cm', '0.5').epsilon_perMperCm, base.epsilon_perMperCm * 2, 1e-12); // handbook: ε = slope / b
    const semi = ['concentration_mM;absorbance', ...data.map(([c, a]) => `${String(c / 1000).replace('.', ',')};${String(a).replace('.', ',')}`)].join('\n');
    writeFileSync(join(dir, 'semi.csv'), semi + '\n');
    const j = json('calibrate', 'semi.csv');
    expect(j.concentrationUnit).toBe('mM');
    close(j.epsilon_perMperCm, base.epsilon_perMperCm, 1e-9);
    close(j.slope_AUperUnit, base.slope_AUperUnit * 1000, 1e-9);
  });

  it('prints a readable text report by default', () => {
    const r = rateline('calibrate', fixture, '--intercept', '--predict', '0.3');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/concentrations in µM/);
    expect(r.out).toMatch(/slope = 0\.13006\d* ± 0\.00013 AU per µM {3}95% CI \[0\.12979\d*, 0\.13034\d*\]/);
    expect(r.out).toMatch(/ε {5}= \(1\.3006\d* ± 0\.0013\)e5 M⁻¹ cm⁻¹/);
    const ref = linearRegression(data);
    const last = r.out.split('\n').find((l) => /^ +16 /.test(l))!.trim().split(/ +/);
    expect(last.slice(0, 3)).toEqual(['16', '6.000', '0.7807']);
    expect(Number(last[3])).toBeCloseTo(ref.m * 6 + ref.b, 4); // simple-statistics line at 6 µM
    expect(Number(last[4])).toBeCloseTo(0.7807 - (ref.m * 6 + ref.b), 4);
    expect(r.out).toMatch(/A = 0\.3: c = 2\.30\d+ ± 0\.00\d+ µM/);
    expect(r.out).toMatch(/Warnings: none/);
  });

  it('warns when a standard is above the usual linear range', () => {
    writeFileSync(join(dir, 'high.csv'), 'concentration_uM,absorbance\n' + [...data.map(([c, a]) => `${c},${a}`), '10,1.25', '12,1.45'].join('\n') + '\n');
    const j = json('calibrate', 'high.csv', '--intercept');
    expect(j.warnings.join(' ')).toMatch(/2 standard\(s\) read above 1 AU/);
    // negative control: the demo standards alone raise no warning
    expect(json('calibrate', fixture, '--intercept').warnings).toEqual([]);
  });

  const bad: [string, string[], string, RegExp][] = [
    ['missing absorbance column', ['nocol.csv'], '# demo data\nconcentration_uM,abs\n1,0.1\n', /^nocol\.csv line 2: no "absorbance" column \(the header has "concentration_um", "abs"\); name the columns/],
    ['no concentration column', ['noconc.csv'], 'c,absorbance\n1,0.1\n', /^noconc\.csv line 1: no concentration column .*concentration_uM\.$/],
    ['a cell that is no number', ['text.csv'], 'concentration_uM,absorbance\n1,0.13\n2,0.26\n3,abc\n', /^text\.csv line 4: "abc" in column absorbance is not a number; fix or remove the line\.$/],
    ['a negative concentration', ['neg.csv'], 'concentration_uM,absorbance\n1,0.13\n-2,0.26\n3,0.39\n', /^neg\.csv line 3: the concentration is negative; correct it or remove the standard\.$/],
    ['one concentration only', ['one.csv'], 'concentration_uM,absorbance\n1,0.13\n1,0.131\n', /^one\.csv: 1 distinct concentration\(s\) among 2 standard\(s\)/],
    ['no such file', ['missing.csv'], '', /^missing\.csv: no such file; check the path\.$/],
    ['--predict that is not a number', [fixture, '--predict', 'x.csv'], '', /^rateline calibrate: --predict x\.csv is not an absorbance \(put FILE before --predict\)/],
    ['no file', ['--intercept'], '', /^rateline calibrate: no file given/],
  ];
  it.each(bad)('exits 2 with one line for %s', (_what, argv, content, message) => {
    if (content) writeFileSync(join(dir, argv[0]), content);
    const r = rateline('calibrate', ...argv);
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    const lines = r.err.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(message);
    expect(r.err).not.toMatch(/at .*\.ts:\d+/);
  });

  it('says how to use it', () => {
    const r = rateline('calibrate', '--help');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/concentration_uM/);
  });
});
