import { beforeAll, describe, expect, it } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { convert } from 'jcampconverter';
import Papa from 'papaparse';
import { runJcamp } from '../../../acquisition/exports/jcampExport';
import { ratelineIn } from '../../../test/cli/ratelineCli';

const { dir, rateline } = ratelineIn('rateline-export-');

/** The demo run as the test reads it itself, straight from the simulated CSV. */
let run: { t: number[]; a: number[] };

beforeAll(() => {
  expect(rateline('simulate', '--duration', '300', '--out', 'demo.csv').code).toBe(0);
  const rows = readFileSync(join(dir, 'demo.csv'), 'utf8').split('\n').filter((l) => /^\d/.test(l)).map((l) => l.split(',').map(Number));
  run = { t: rows.map((r) => r[0]!), a: rows.map((r) => r[1]!) };
}, 60_000);

describe('rateline export, run for real', () => {
  it('writes JCAMP-DX that an independent reader (jcampconverter) reads back reading for reading', () => {
    const r = rateline('export', 'demo.csv', '--to', 'jcamp', '--out', 'demo.jdx');
    expect(r.code).toBe(0);
    const text = readFileSync(join(dir, 'demo.jdx'), 'utf8');
    const parsed = convert(text, { keepRecordsRegExp: /.*/ });
    const entry = parsed.flatten[0]!;
    const data = entry.spectra[0]!.data;
    expect(data.x).toHaveLength(run.t.length);
    // JCAMP-DX: stored Y × YFACTOR (1e-6 AU) = the absorbance to within half a micro-AU.
    run.t.forEach((t, i) => expect(data.x[i]).toBeCloseTo(t, 9));
    run.a.forEach((a, i) => expect(Math.abs(data.y[i]! - a)).toBeLessThanOrEqual(5e-7 + 1e-12));
    expect(entry.spectra[0]!.xUnits).toBe('SECONDS');
    expect(entry.spectra[0]!.yUnits).toBe('ABSORBANCE');
    expect(entry.meta['RATELINE NOTE']).toBeDefined();
    // Negative control: a reader that ignored YFACTOR would be a million times off.
    expect(Math.abs(data.y[0]! / 1e-6 - run.a[0]!)).toBeGreaterThan(1000);
  });

  it('writes the annotated CSV that papaparse (an independent reader) reads back', () => {
    const r = rateline('export', 'demo.csv', '--to', 'csv', '--out', 'demo-export.csv');
    expect(r.code).toBe(0);
    const text = readFileSync(join(dir, 'demo-export.csv'), 'utf8');
    const parsed = Papa.parse<Record<string, string>>(text, { header: true, comments: '#', skipEmptyLines: true });
    expect(parsed.errors).toEqual([]);
    expect(parsed.meta.fields).toEqual(['time_s', 'time_after_mixing_s', 'absorbance', 'flags']);
    expect(parsed.data).toHaveLength(run.t.length);
    parsed.data.forEach((row, i) => {
      expect(Number(row.time_s)).toBe(run.t[i]);
      expect(Number(row.absorbance)).toBe(run.a[i]);
    });
    expect(text).toMatch(/^# order verdict: /m);
  });

  it('never overwrites a file, and says what to do', () => {
    writeFileSync(join(dir, 'taken.jdx'), 'keep me');
    const r = rateline('export', 'demo.csv', '--to', 'jcamp', '--out', 'taken.jdx');
    expect(r.code).toBe(2);
    expect(r.err.trim()).toBe('rateline export: taken.jdx exists already; an export never overwrites a file, so give a new name.');
    expect(readFileSync(join(dir, 'taken.jdx'), 'utf8')).toBe('keep me');
  });

  it('refuses an unknown format and a missing file in one line each', () => {
    const a = rateline('export', 'demo.csv', '--to', 'xls', '--out', 'x');
    expect(a.code).toBe(2);
    expect(a.err.trim().split('\n')).toHaveLength(1);
    const b = rateline('export', 'nope.csv', '--to', 'csv', '--out', 'y.csv');
    expect(b.code).toBe(2);
    expect(b.err).toMatch(/nope\.csv/);
    expect(b.err).not.toMatch(/\n\s+at /);
  });
});

describe('JCAMP-DX writer', () => {
  it('writes uneven readings as (XY..XY) pairs, one a line (JCAMP-DX 5.01 XYPOINTS)', () => {
    const out = runJcamp({
      title: 'gap', origin: 'test', owner: '', started: null, wavelength_nm: null, path_cm: null, temperature_C: null, demo: false,
      time_s: Float64Array.from([0, 1, 2, 5]), absorbance: Float64Array.from([0.5, 0.49, 0.481, 0.4534567]), notes: [],
    });
    if (!out.ok) throw new Error(out.error);
    expect(out.text).toContain('##XYPOINTS=(XY..XY)\n0, 500000\n1, 490000\n2, 481000\n5, 453457\n##END=\n');
    expect(out.text).not.toContain('##XYDATA');
    expect(out.text).toContain('##FIRSTY=0.5\n');
  });

  it('refuses a non-finite reading in one sentence', () => {
    const out = runJcamp({
      title: 'bad', origin: 'test', owner: '', started: null, wavelength_nm: null, path_cm: null, temperature_C: null, demo: false,
      time_s: Float64Array.from([0, 1]), absorbance: Float64Array.from([0.5, Number.NaN]), notes: [],
    });
    expect(out).toEqual({ ok: false, error: 'JCAMP-DX export: reading 2 is not a finite number; it cannot be written.' });
  });
});
