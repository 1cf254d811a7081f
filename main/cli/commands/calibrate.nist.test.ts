import { describe, expect, it } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseStrd } from '../../../kinetics/fit/nistStrd';
import { ratelineIn, ROOT } from '../../../test/cli/ratelineCli';

// NIST StRD linear regression datasets (test/fixtures/nist-strd/, source in its README),
// run through the real `rateline calibrate` command end to end. Absorbance must lie in
// what a photometer reads (−1…10 AU), so y is divided by a power of ten (Norris 10³,
// NoInt1 10², NoInt2 10) and x read as µM: the slope per µM, the intercept, their SDs and
// the residual SD scale by that power exactly as the certified values do; R² does not.
const { dir, rateline } = ratelineIn('rateline-calibrate-nist-');

function standardsCsv(name: string, scale: number): { file: string; d: ReturnType<typeof parseStrd> } {
  const d = parseStrd(readFileSync(join(ROOT, 'test', 'fixtures', 'nist-strd', name), 'utf8'));
  const lines = ['# NIST StRD ' + name + ', y divided by ' + scale, 'concentration_uM,absorbance'];
  for (let i = 0; i < d.x.length; i++) lines.push(`${d.x[i]},${d.y[i]! / scale}`);
  const file = join(dir, name.replace('.dat', '.csv'));
  writeFileSync(file, lines.join('\n') + '\n');
  return { file, d };
}
const json = (...args: string[]) => {
  const r = rateline('calibrate', ...args, '--format', 'json');
  expect(r.err).toBe('');
  expect(r.code).toBe(0);
  return JSON.parse(r.out);
};
/** Relative agreement to the certified value's digits (15 significant: 1e-12 leaves room for the scaling). */
const certified = (got: number, value: number, rel = 1e-12) => expect(Math.abs(got - value)).toBeLessThanOrEqual(rel * Math.abs(value));

describe('rateline calibrate on NIST StRD, certified values', () => {
  it('Norris with --intercept: B0, B1, their SDs, the residual SD and R² (NIST StRD Norris, certified values)', () => {
    const { file } = standardsCsv('Norris.dat', 1e3);
    const j = json(file, '--intercept');
    certified(j.slope_AUperUnit * 1e3, 1.00211681802045);
    certified(j.slopeStdErr_AUperUnit * 1e3, 0.429796848199937e-3, 1e-10);
    certified(j.intercept_AU * 1e3, -0.262323073774029, 1e-10);
    certified(j.interceptStdErr_AU * 1e3, 0.232818234301152, 1e-10);
    certified(j.residualSd_AU * 1e3, 0.884796396144373, 1e-10);
    certified(j.rSquared, 0.999993745883712);
    expect(j.modelChoice.used).toBe('intercept');
    expect(j.modelChoice.reason).toMatch(/^with an intercept, as asked \(t-test of a = 0: p = 0\.2/);
  });

  it('NoInt1 and NoInt2 with --origin: B1, its SD, the residual SD and the uncentred R² (NIST StRD, certified values)', () => {
    const one = json(standardsCsv('NoInt1.dat', 1e2).file, '--origin');
    certified(one.slope_AUperUnit * 1e2, 2.07438016528926);
    certified(one.slopeStdErr_AUperUnit * 1e2, 0.165289256198347e-1, 1e-10);
    certified(one.residualSd_AU * 1e2, 3.56753034006338, 1e-10);
    certified(one.rSquared, 0.999365492298663);
    expect(one.intercept_AU).toBeNull();
    const two = json(standardsCsv('NoInt2.dat', 10).file, '--origin');
    certified(two.slope_AUperUnit * 10, 0.727272727272727);
    certified(two.slopeStdErr_AUperUnit * 10, 0.420827318078432e-1, 1e-10);
    certified(two.residualSd_AU * 10, 0.369274472937998, 1e-10);
    certified(two.rSquared, 0.993348115299335);
  });

  it('the text output says which line and why, the weighting, LOD/LOQ with their σ, outliers and lack of fit', () => {
    const { file } = standardsCsv('Norris.dat', 1e3);
    const r = rateline('calibrate', file);
    expect(r.code).toBe(0);
    // Left to the t-test, Norris's intercept (t = −1.13 on 34 dof from the certified B0 and SD) stays out.
    expect(r.out).toMatch(/Line: through the origin: the intercept does not differ from zero \(t-test p = 0\.2\d ≥ 0\.05\)\./);
    expect(r.out).toMatch(/Weighting: unweighted: no replicated standards to show how the noise grows with absorbance\./);
    expect(r.out).toMatch(/Limits \(ICH Q2\(R1\), LOD = 3\.3 σ\/S, LOQ = 10 σ\/S, σ = the residual SD of the line, [\d.e-]+ AU\): LOD [\d.e-]+ µM, LOQ [\d.e-]+ µM\./);
    expect(r.out).toMatch(/Outlying standards?: /);
    expect(r.out).toMatch(/Lack of fit: /);
    // LOD = 3.3 σ/S from the reported σ and slope (ICH Q2(R1)); negative control: 3 σ/S would not match
    const j = json(file);
    certified(j.detection.lod, 3.3 * j.residualSd_AU / j.slope_AUperUnit, 1e-12);
    expect(Math.abs(j.detection.lod - 3 * j.residualSd_AU / j.slope_AUperUnit)).toBeGreaterThan(1e-3 * j.detection.lod);
  });

  it('negative control: Norris forced through the origin misses the certified slope', () => {
    const j = json(standardsCsv('Norris.dat', 1e3).file, '--origin');
    expect(Math.abs(j.slope_AUperUnit * 1e3 - 1.00211681802045)).toBeGreaterThan(1e-5);
  });

  it('refuses, in one sentence each: flat standards, standards that fall with concentration, --intercept with --origin', () => {
    const flat = join(dir, 'flat.csv'), falling = join(dir, 'falling.csv');
    writeFileSync(flat, 'concentration_uM,absorbance\n1,0.3\n2,0.3\n3,0.3\n4,0.3\n');
    writeFileSync(falling, 'concentration_uM,absorbance\n1,0.4\n2,0.3\n3,0.2\n4,0.1\n');
    const one = (r: { code: number | null; out: string; err: string }, re: RegExp) => {
      expect(r.code).toBe(2);
      expect(r.out).toBe('');
      expect(r.err.trim().split('\n')).toHaveLength(1);
      expect(r.err).toMatch(re);
    };
    one(rateline('calibrate', flat), /flat\.csv: all 4 standards read 0\.3 AU whatever their concentration, so there is no line to fit; /);
    one(rateline('calibrate', falling), /falling\.csv: the absorbance falls as the concentration rises .*; check that the columns are not swapped/);
    one(rateline('calibrate', falling, '--intercept', '--origin'), /--intercept and --origin ask for two different lines/);
    // control: the same standards rising are fitted
    writeFileSync(falling, 'concentration_uM,absorbance\n1,0.1\n2,0.2\n3,0.3\n4,0.4\n');
    expect(rateline('calibrate', falling).code).toBe(0);
  });
});
