/**
 * Runs fitted in concentration, end to end: `rateline calibrate --save`, `rateline analyze
 * --calibration`, `rateline record --calibration`, each spawned for real on demo data
 * (DEMO.md: ε = 1.30e5 M⁻¹ cm⁻¹, 1.00 cm, a 5.0 µM run, A0 ≈ 0.65).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { linearRegression, sum } from 'simple-statistics';
import { calibrationFileSchema } from '../../acquisition/files/calibrationFile';
import { calibrationSchema } from '../../acquisition/record/runRecordFormat';
import { ratelineIn, ROOT } from './ratelineCli';

const root = ROOT;
const standards = join(root, 'test', 'fixtures', 'demo-standards.csv');
const { dir, rateline } = ratelineIn('rateline-calibrated-');
const json = (...args: string[]) => {
  const r = rateline(...args, '--format', 'json');
  expect(r.err).toBe('');
  expect(r.code).toBe(0);
  return JSON.parse(r.out);
};
const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
const oneLine = (r: { code: number | null; out: string; err: string }, message: RegExp) => {
  expect(r.code).toBe(2);
  const lines = r.err.trim().split('\n');
  expect(lines).toHaveLength(1);
  expect(lines[0]).toMatch(message);
  expect(r.err).not.toMatch(/at .*\.ts:\d+/);
};

/** The demo standards as the test reads them itself, in µM. */
const data = readFileSync(standards, 'utf8').split('\n').filter((l) => /^\d/.test(l)).map((l) => l.split(',').map(Number) as [number, number]);
/** Slope through the origin by hand (handbook: least squares for y = b x, b = Σxy / Σx²), AU per µM. */
const slopeByHand = sum(data.map(([c, a]) => c * a)) / sum(data.map(([c]) => c * c));

beforeAll(() => {
  expect(rateline('calibrate', standards, '--save', 'cal.json').code).toBe(0);
  expect(rateline('calibrate', standards, '--intercept', '--save', 'cal-offset.json').code).toBe(0);
  expect(rateline('simulate', '--out', 'demo.csv').code).toBe(0);
  expect(rateline('simulate', '--order', 'second', '--out', 'second.csv').code).toBe(0);
  expect(rateline('simulate', '--order', 'zero', '--out', 'zero.csv').code).toBe(0);
});

describe('rateline calibrate --save', () => {
  it('writes a calibration file that reads back, with the line, ε, the range and a date', () => {
    const cal = calibrationFileSchema.parse(JSON.parse(readFileSync(join(dir, 'cal.json'), 'utf8')));
    // It is also a run record's calibration, so it can go into a header unchanged.
    expect(calibrationSchema.safeParse(cal).success).toBe(true);
    expect(cal.signal).toEqual({ name: 'concentration', unit: 'µM' });
    expect(rel(cal.slope, slopeByHand)).toBeLessThan(1e-12);
    expect(cal.intercept).toBe(0);
    expect(rel(cal.epsilon_perMperCm, slopeByHand * 1e6 / 1.0)).toBeLessThan(1e-12); // handbook: ε = slope / b, per M = per µM × 10⁶
    // DEMO.md: the demo's ε = 1.30e5 lies in the saved interval
    expect(cal.epsilonCI95_perMperCm![0]).toBeLessThan(1.3e5);
    expect(cal.epsilonCI95_perMperCm![1]).toBeGreaterThan(1.3e5);
    expect(cal.standards.concentrationRange).toEqual([0.5, 6]);
    expect(cal.standards.absorbanceRange_AU).toEqual([Math.min(...data.map((d) => d[1])), Math.max(...data.map((d) => d[1]))]);
    expect(cal.pathLength_cm).toBe(1);
    expect(cal.created).toMatch(/^\d{4}-\d{2}-\d{2}T/);
    const offset = calibrationFileSchema.parse(JSON.parse(readFileSync(join(dir, 'cal-offset.json'), 'utf8')));
    const ref = linearRegression(data); // simple-statistics as the oracle for the line with a blank offset
    expect(rel(offset.slope, ref.m)).toBeLessThan(1e-9);
    expect(Math.abs(offset.intercept - ref.b)).toBeLessThan(1e-9);
    // negative control: the schema refuses a file whose slope is not positive
    expect(calibrationFileSchema.safeParse({ ...cal, slope: -cal.slope }).success).toBe(false);
  });

  it('never overwrites an existing file', () => {
    const before = readFileSync(join(dir, 'cal.json'), 'utf8');
    oneLine(rateline('calibrate', standards, '--save', 'cal.json'), /^rateline calibrate: cal\.json is already a file, and a calibration file is never overwritten; choose another --save name\.$/);
    expect(readFileSync(join(dir, 'cal.json'), 'utf8')).toBe(before);
  });
});

describe('rateline analyze --calibration', () => {
  it('fits the demo run in µM: units say so, c0 = A0/(ε b) ≈ 5.0 µM lies in its interval, first-order k unchanged', () => {
    const abs = json('analyze', 'demo.csv');
    const conc = json('analyze', 'demo.csv', '--calibration', 'cal.json');
    expect(abs.units.signal).toBe('absorbance (AU)');
    expect(abs.calibration).toBeNull();
    expect(conc.units).toEqual({ time: 's', signal: 'concentration (µM)', k: { zero: 'µM s^-1', first: 's^-1', second: 'µM^-1 s^-1', nth: 'µM^(1-n) s^-1' } });
    expect(conc.calibration.signal).toEqual({ name: 'concentration', unit: 'µM' });
    // handbook: a linear map of the signal leaves a first-order k (and its SE) unchanged
    expect(rel(conc.models.first.k, abs.models.first.k)).toBeLessThan(1e-9);
    expect(rel(conc.models.first.kStdErr, abs.models.first.kStdErr)).toBeLessThan(1e-6);
    expect(conc.verdict.order).toBe(abs.verdict.order);
    // Beer–Lambert by hand: c0 = A0 / (ε b), with the slope fitted by hand through the origin
    const c0 = conc.calibration.c0;
    expect(rel(conc.models.first.a0, abs.models.first.a0 / slopeByHand)).toBeLessThan(1e-9);
    expect(rel(conc.models.first.aInf, abs.models.first.aInf / slopeByHand)).toBeLessThan(1e-6);
    expect(c0.model).toBe('first');
    expect(c0.value).toBe(conc.models.first.a0);
    // DEMO.md: the run is 5.0 µM of dye (A0 = 0.65 = 1.30e5 M⁻¹ cm⁻¹ × 1.00 cm × 5.0 µM)
    expect(rel(0.65 / (1.3e5 * 1.0) * 1e6, 5.0)).toBeLessThan(1e-12);
    expect(c0.ci95[0]).toBeLessThan(5.0);
    expect(c0.ci95[1]).toBeGreaterThan(5.0);
    // The calibration widens the interval beyond the fit noise alone, and never narrows it.
    expect(c0.stdErr).toBeGreaterThan(conc.models.first.a0StdErr);
    // negative control: a 2% wrong ε (5.1 µM) falls outside the interval
    expect(c0.ci95[1]).toBeLessThan(5.1);
    // a line through the origin counts the blank, so the demo run (down to ≈ 0.03 AU) is covered
    expect(conc.calibration.warnings).toEqual([]);
    expect(conc.warnings.join(' ')).not.toMatch(/absorbance noise model were applied/);
  });

  it('second order: k₂(conc) = k₂(abs) · ε b on a simulated second-order run', () => {
    const abs = json('analyze', 'second.csv');
    const conc = json('analyze', 'second.csv', '--calibration', 'cal.json');
    const offset = json('analyze', 'second.csv', '--calibration', 'cal-offset.json');
    expect(abs.verdict.order).toBe('second');
    expect(conc.verdict.order).toBe('second');
    const cal = JSON.parse(readFileSync(join(dir, 'cal.json'), 'utf8'));
    // handbook: 1/(A − A∞) = 1/(A0 − A∞) + k_A t and A − A∞ = ε b (c − c∞) give k_c = ε b · k_A
    const epsB_perM = cal.epsilon_perMperCm * cal.pathLength_cm;
    expect(rel(conc.models.second.k * 1e6, abs.models.second.k * epsB_perM)).toBeLessThan(1e-6); // µM⁻¹ s⁻¹ → M⁻¹ s⁻¹
    expect(rel(conc.models.second.k, abs.models.second.k * slopeByHand)).toBeLessThan(1e-6);
    // the same with a blank offset (the offset cancels in A − A∞)
    const offsetCal = JSON.parse(readFileSync(join(dir, 'cal-offset.json'), 'utf8'));
    expect(rel(offset.models.second.k, abs.models.second.k * offsetCal.slope)).toBeLessThan(1e-6);
    // the tolerance tells the conversions apart: the zero-order rule (dividing by ε b) is off by (ε b)² here
    expect(rel(conc.models.second.k, abs.models.second.k / slopeByHand)).toBeGreaterThan(0.9);
    expect(rel(conc.models.first.k, abs.models.first.k)).toBeLessThan(1e-9);
  });

  it('zero order: k₀(conc) = k₀(abs) / (ε b) on a simulated zero-order run', () => {
    const abs = json('analyze', 'zero.csv');
    const conc = json('analyze', 'zero.csv', '--calibration', 'cal.json');
    expect(abs.verdict.weights.zero).toBeGreaterThan(abs.verdict.weights.second);
    // handbook: A = A0 − k_A t with A = ε b c gives k_c = k_A / (ε b)
    expect(rel(conc.models.zero.k, abs.models.zero.k / slopeByHand)).toBeLessThan(1e-6);
    expect(rel(conc.models.zero.k, abs.models.zero.k)).toBeGreaterThan(1); // negative control: the units did change
  });

  it('takes a CSV of standards directly, fitted as rateline calibrate would', () => {
    const fromCsv = json('analyze', 'demo.csv', '--calibration', standards);
    const fromFile = json('analyze', 'demo.csv', '--calibration', 'cal.json');
    expect(fromCsv.units.signal).toBe('concentration (µM)');
    expect(fromCsv.models.second.k).toBe(fromFile.models.second.k);
    expect(fromCsv.calibration.source).toMatch(/standards, fitted now through the origin/);
  });

  it('the text report names the signal, the calibration and the units', () => {
    const r = rateline('analyze', 'demo.csv', '--calibration', 'cal.json');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^Signal: concentration \(µM\), by the calibration .*demo-standards\.csv: ε = 1\.300\d+e\+5 M⁻¹ cm⁻¹, 1 cm, through the origin \(from cal\.json\)$/m);
    expect(r.out).toMatch(/c0 \(µM\)\s+c∞ \(µM\)/);
    expect(r.out).toMatch(/^second\s+\S+\s+\[\S+, \S+\]\s+µM\^-1 s\^-1/m);
    expect(r.out).toMatch(/^ {2}c0 \(first order\) = 4\.99\d+ ± \S+ µM, 95% CI \[\S+, \S+\]; covers fit noise and the calibration line$/m);
    // negative control: without a calibration the report stays in absorbance
    const plain = rateline('analyze', 'demo.csv').out;
    expect(plain).toMatch(/^Signal: absorbance \(AU\)$/m);
    expect(plain).not.toMatch(/c0 \(/);
  });

  it('warns when readings lie outside the calibrated range or above the linear range', () => {
    // A line with a blank offset is vouched for only from its lowest standard (0.064 AU) up.
    const low = json('analyze', 'demo.csv', '--calibration', 'cal-offset.json');
    expect(low.calibration.warnings.join(' ')).toMatch(/^\d+ of 901 reading\(s\) lie outside the calibrated range \(0\.064–0\.781 AU; .*extrapolated/);
    expect(rateline('simulate', '--a0', '1.3', '--out', 'strong.csv').code).toBe(0);
    const high = json('analyze', 'strong.csv', '--calibration', 'cal.json');
    const w = high.calibration.warnings.join(' ');
    expect(w).toMatch(/lie outside the calibrated range \(0\.000–0\.781 AU/);
    expect(w).toMatch(/reading\(s\) above 1 AU, beyond the linear range of the calibration/);
    expect(rateline('analyze', 'strong.csv', '--calibration', 'cal.json').out).toMatch(/^ {2}- \d+ of 901 reading\(s\) lie outside the calibrated range/m);
    // negative control: within the standards nothing is said (the demo run with the line through the origin)
    expect(json('analyze', 'demo.csv', '--calibration', 'cal.json').calibration.warnings).toEqual([]);
  });

  const bad: [string, string, string, RegExp][] = [
    ['not JSON', 'broken.json', '{"format": "rateline-calibration",', /^broken\.json: not JSON, so not a calibration file; make one with rateline calibrate/],
    ['some other JSON', 'other.json', '{"a": 1}', /^other\.json: not a Rateline calibration file \(no "format": "rateline-calibration"\)/],
    ['a missing slope', 'noslope.json', '', /^noslope\.json: not a valid calibration file \(slope: .*\); save it again with rateline calibrate --save\.$/],
    ['a newer version', 'newer.json', '', /^newer\.json: calibration file version 2 is newer than this Rateline reads \(1\); update Rateline\.$/],
    ['no such file', 'absent.json', '', /^absent\.json: no such file; check the path of the calibration\.$/],
    ['bad standards', 'bad-standards.csv', 'concentration_uM,absorbance\n1,0.13\n2,x\n', /^bad-standards\.csv line 3: "x" in column absorbance is not a number; fix or remove the line\.$/],
  ];
  it.each(bad)('exits 2 with one line for a calibration with %s', (_what, name, content, message) => {
    const good = JSON.parse(readFileSync(join(dir, 'cal.json'), 'utf8'));
    if (name === 'noslope.json') { delete good.slope; content = JSON.stringify(good); }
    if (name === 'newer.json') content = JSON.stringify({ ...good, version: 2 });
    if (content) writeFileSync(join(dir, name), content);
    const r = rateline('analyze', 'demo.csv', '--calibration', name);
    oneLine(r, message);
    expect(r.out).toBe('');
  });
});

describe('rateline record --calibration', () => {
  it('keeps the calibration in the header; analyze then fits in concentration, unless --calibration none', () => {
    const rec = rateline('record', '--simulate', '--speed', 'max', '--max-seconds', '400', '--calibration', 'cal.json', '--out', 'cal-run.jsonl', '--progress', 'json');
    expect(rec.code).toBe(0);
    const header = JSON.parse(readFileSync(join(dir, 'cal-run.jsonl'), 'utf8').split('\n')[0]!);
    const cal = JSON.parse(readFileSync(join(dir, 'cal.json'), 'utf8'));
    expect(header.demo).toBe(true);
    expect(header.calibration).toEqual(cal);
    const auto = json('analyze', 'cal-run.jsonl');
    expect(auto.units.signal).toBe('concentration (µM)');
    expect(auto.calibration.source).toBe("the run record's header");
    const none = json('analyze', 'cal-run.jsonl', '--calibration', 'none');
    expect(none.units.signal).toBe('absorbance (AU)');
    expect(none.calibration).toBeNull();
    expect(rel(auto.models.first.k, none.models.first.k)).toBeLessThan(1e-9); // handbook: first-order k unchanged
    expect(rel(auto.models.first.a0, none.models.first.a0 / cal.slope)).toBeLessThan(1e-9); // Beer–Lambert by hand
    // negative control: a record without a calibration is analysed in absorbance
    expect(rateline('record', '--simulate', '--speed', 'max', '--max-seconds', '60', '--out', 'plain-run.jsonl', '--progress', 'json').code).toBe(0);
    expect(json('analyze', 'plain-run.jsonl').units.signal).toBe('absorbance (AU)');
  });

  it('refuses a bad calibration file before it records anything', () => {
    writeFileSync(join(dir, 'junk.json'), 'not a calibration');
    oneLine(rateline('record', '--simulate', '--calibration', 'junk.json', '--out', 'never.jsonl'), /^rateline record: --calibration junk\.json: not JSON, so not a calibration file/);
    expect(() => readFileSync(join(dir, 'never.jsonl'))).toThrow();
  });
});
