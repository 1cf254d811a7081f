import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fitReport, formatWithUncertainty } from './report';
import { fitLeastSquares } from './leastSquares';
import { linearFit } from './linearFit';
import { parseStrd } from './nistStrd';

const dir = join(__dirname, '../../test/fixtures/nist-strd');

describe('number formatting', () => {
  // common practice (GUM 7.2.6): state the uncertainty with at most two significant digits
  const cases: Array<[number, number | null, string]> = [
    [238.94212918, 2.7070075241, '238.9 ± 2.7'],
    [0.0035027453, 0.0000017581, '(3.5027 ± 0.0018)e-3'],
    [0.65002, 0.00021, '0.65002 ± 0.00021'],
    [130012.3, 1520, '(1.300 ± 0.015)e5'],
    [1.5, null, '1.5'],
  ];
  const misses = (format: (value: number, se: number | null) => string): number => cases.filter(([v, se, want]) => format(v, se) !== want).length;

  it('standard error to two significant figures, value to the same place', () => {
    for (const [v, se, want] of cases) expect(formatWithUncertainty(v, se)).toBe(want);
  });

  it('negative control: the same cases fail on formatters that round the usual wrong ways', () => {
    expect(misses(formatWithUncertainty)).toBe(0);
    // fixed decimals, as toFixed(2) prints them (238.94 ± 2.71)
    expect(misses((v, se) => (se === null ? String(v) : `${v.toFixed(2)} ± ${se.toFixed(2)}`))).toBeGreaterThanOrEqual(4);
    // three significant figures on the uncertainty instead of two
    expect(misses((v, se) => (se === null ? String(v) : `${v.toPrecision(4)} ± ${se.toPrecision(3)}`))).toBeGreaterThanOrEqual(4);
  });
});

describe('fitReport', () => {
  it('reports a NIST fit with ± SE, CI, correlations, χ², dof and AICc', () => {
    // NIST StRD Misra1a, certified values: b1 = 238.94 ± 2.71, b2 = (5.5016 ± 0.0727)e-4
    const ds = parseStrd(readFileSync(join(dir, 'Misra1a.dat'), 'utf8'));
    const fit = fitLeastSquares({
      parameters: [{ name: 'b1', value: 500 }, { name: 'b2', value: 1e-4 }],
      x: ds.x,
      y: ds.y,
      model: (x, p) => p[0]! * (1 - Math.exp(-p[1]! * x)),
    });
    const text = fitReport(fit, { title: 'Misra1a (NIST StRD)', units: { b1: 'mL' } });
    expect(text).toContain('Misra1a (NIST StRD)');
    expect(text).toContain('b1 = 238.9 ± 2.7 mL');
    expect(text).toContain('b2 = (5.502 ± 0.073)e-4');
    expect(text).toMatch(/95% CI \[23\d\.\d, 24\d\.\d\]/);
    expect(text).toContain('degrees of freedom 12');
    expect(text).toMatch(/b1 – b2: -?0\.\d{3}/);
    expect(text).toMatch(/residual SD = 0\.101879/);
    expect(text).toMatch(/AICc = -?\d/);
    expect(text).not.toContain('NaN');
    expect(text).not.toContain('Warnings');
  });

  it('shows fixed parameters, missing standard errors and warnings in plain words', () => {
    const fit = fitLeastSquares({
      parameters: [{ name: 'a', value: 1 }, { name: 'b', value: 2, fixed: true }, { name: 'c', value: 0 }, { name: 'd', value: 0 }],
      x: Float64Array.of(1, 2, 3),
      y: Float64Array.of(3, 4, 6),
      model: (x, p) => p[0]! + p[1]! * x + p[2]! * x * x + p[3]! * x * x * x,
    });
    const text = fitReport(fit);
    expect(text).toContain('b = 2 (fixed)');
    expect(text).toContain('(no standard error)');
    expect(text).toContain('Warnings:');
    expect(text).toMatch(/too few points for standard errors/);
    expect(text).not.toContain('NaN');
  });

  it('prints a straight-line fit too', () => {
    // NIST StRD Norris, certified values: slope 1.00211681802045 ± 0.000429796848199937
    const ds = parseStrd(readFileSync(join(dir, 'Norris.dat'), 'utf8'));
    const text = fitReport(linearFit({ x: ds.x, y: ds.y }));
    expect(text).toContain('slope     = 1.00212 ± 0.00043');
    expect(text).toContain('intercept = -0.26 ± 0.23');
  });
});
