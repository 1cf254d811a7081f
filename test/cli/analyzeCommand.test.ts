import { describe, expect, it, beforeAll } from 'vitest';
import { writeFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ratelineIn } from './ratelineCli';

const { dir, rateline } = ratelineIn('rateline-analyze-');

const MODEL_KEYS = ['k', 'kStdErr', 'kCI95', 'a0', 'aInf', 'halfLife_s', 'halfLifeStdErr_s', 'aicc', 'rss', 'dof'];

describe('rateline simulate and analyze, run for real', () => {
  beforeAll(() => {
    const s = rateline('simulate', '--out', 'demo.csv', '--spikes', '2');
    expect(s.code).toBe(0);
  });

  it('writes the demo run and analyses it as first order, JSON with every key present', () => {
    const csv = readFileSync(join(dir, 'demo.csv'), 'utf8').split('\n');
    expect(csv[0]).toMatch(/demo data/);
    expect(csv[1]).toBe('time_s,absorbance');
    expect(csv.filter((l) => /^\d/.test(l))).toHaveLength(901);
    const r = rateline('analyze', 'demo.csv', '--format', 'json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    for (const key of ['points', 'duration_s', 'verdict', 'models', 'halfLivesElapsed', 'stop', 'outliers', 'units']) expect(j).toHaveProperty(key);
    expect(j.points).toBe(901);
    expect(j.duration_s).toBe(900);
    expect(Object.keys(j.verdict.weights).sort()).toEqual(['first', 'second', 'zero']);
    for (const m of ['zero', 'first', 'second', 'nth']) for (const k of MODEL_KEYS) expect(j.models[m]).toHaveProperty(k);
    expect(j.models.nth).toHaveProperty('order');
    expect(j.models.nth).toHaveProperty('orderStdErr');
    for (const k of ['suggested', 'atTime_s', 'reason', 'predictedAt_s']) expect(j.stop).toHaveProperty(k);
    expect(j.verdict.order).toBe('first');
    // DEMO.md: k_obs = 3.5e-3 s^-1, half-life ≈ 198 s; the simulated truth lies in the CI
    expect(j.models.first.kCI95[0]).toBeLessThan(3.5e-3);
    expect(j.models.first.kCI95[1]).toBeGreaterThan(3.5e-3);
    expect(j.units.k.first).toBe('s^-1');
    expect(j.outliers).toHaveLength(2);
    expect(j.stop.suggested).toBe(true);
  });

  it('prints a readable text table by default', () => {
    const r = rateline('analyze', 'demo.csv');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/Order: first order/);
    expect(r.out).toMatch(/^first\s+0\.003/m);
    expect(r.out).toMatch(/noise only/);
  });

  it('takes --from/--to, --half-lives and --precision', () => {
    const j = JSON.parse(rateline('analyze', 'demo.csv', '--format=json', '--from', '30', '--to', '600', '--half-lives', '2', '--precision', '0.02').out);
    expect(j.window).toEqual({ from_s: 30, to_s: 600 });
    expect(j.pointsInWindow).toBe(571);
    expect(j.targetHalfLives).toBe(2);
  });

  it('holds A∞ with --a-inf, fits unweighted with --weights none, and keeps spikes with --robust off', () => {
    const run = (...o: string[]) => JSON.parse(rateline('analyze', 'demo.csv', '--format', 'json', ...o).out);
    const held = run('--a-inf', '0.005');
    expect(held.models.first.aInf).toBe(0.005);
    expect(held.models.first.aInfFixed).toBe(true);
    // Holding a parameter the data would fit anyway narrows k's interval.
    const free = run();
    expect(held.models.first.kStdErr).toBeLessThan(free.models.first.kStdErr);
    // DEMO.md: k_obs = 3.5e-3 s^-1; weighted and unweighted both cover it, with different k.
    const plain = run('--weights', 'none');
    expect(plain.models.first.kCI95[0]).toBeLessThan(3.5e-3);
    expect(plain.models.first.kCI95[1]).toBeGreaterThan(3.5e-3);
    expect(plain.models.first.k).not.toBe(free.models.first.k);
    // Negative control: without the robust fit the two spikes are not listed as outliers.
    expect(run('--robust', 'off').outliers).toHaveLength(0);
    expect(rateline('analyze', 'demo.csv', '--weights', 'x').err.trim()).toBe('rateline analyze: --weights x is not known; use noise or none.');
  });

  it('reads a semicolon file with decimal commas', () => {
    const lines = readFileSync(join(dir, 'demo.csv'), 'utf8').split('\n').slice(1).filter(Boolean).map((l) => l.replace(',', ';').replace('.', ','));
    writeFileSync(join(dir, 'semi.csv'), lines.join('\n'));
    const j = JSON.parse(rateline('analyze', 'semi.csv', '--format', 'json').out);
    expect(j.points).toBe(901);
    expect(j.verdict.order).toBe('first');
  });

  const bad: [string, string, RegExp][] = [
    ['no such file', 'missing.csv', /^missing\.csv: no such file; check the path\.$/],
    ['missing column', 'nocol.csv', /^nocol\.csv line 1: no "absorbance" column/],
    ['non-numeric cell', 'text.csv', /^text\.csv line 4: "abc" in column absorbance is not a number; fix or remove the line\.$/],
    ['time backwards', 'back.csv', /^back\.csv line 4: time goes backwards \(512 s after 514 s\); sort the file or remove the line\.$/],
    ['too few points', 'few.csv', /^few\.csv: only 3 reading\(s\); a fit needs at least 10\./],
  ];
  it.each(bad)('exits 2 with one line for %s', (_what, file, message) => {
    writeFileSync(join(dir, 'nocol.csv'), 'time_s,abs\n0,1\n');
    writeFileSync(join(dir, 'text.csv'), 'time_s,absorbance\n0,0.6\n1,0.5\nabc,abc\n'.replace('abc,abc', '2,abc'));
    writeFileSync(join(dir, 'back.csv'), 'time_s,absorbance\n510,0.6\n514,0.5\n512,0.4\n');
    writeFileSync(join(dir, 'few.csv'), 'time_s,absorbance\n0,0.6\n1,0.5\n2,0.4\n');
    const r = rateline('analyze', file);
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    const lines = r.err.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(message);
    expect(r.err).not.toMatch(/at .*\.ts:\d+/); // no stack trace
  });

  it('exits 2 on bad options', () => {
    expect(rateline('analyze', 'demo.csv', '--precision', '2').code).toBe(2);
    expect(rateline('analyze', 'demo.csv', '--bogus', '1').code).toBe(2);
    expect(rateline('simulate').code).toBe(2);
    expect(rateline('simulate', '--order', 'third', '--out', 'x.csv').code).toBe(2);
  });

  it('simulates each order with the same half-life by default', () => {
    for (const order of ['zero', 'second', '1.5']) {
      expect(rateline('simulate', '--order', order, '--duration', '400', '--out', `o${order}.csv`).code).toBe(0);
      const j = JSON.parse(rateline('analyze', `o${order}.csv`, '--format', 'json').out);
      const hl = order === 'zero' ? j.models.zero.halfLife_s : order === 'second' ? j.models.second.halfLife_s : j.models.nth.halfLife_s;
      // ln2 / 3.5e-3 s = 198.0 s (DEMO.md half-life), within a few SE
      expect(Math.abs(hl - Math.LN2 / 3.5e-3)).toBeLessThan(5);
    }
  });
});
