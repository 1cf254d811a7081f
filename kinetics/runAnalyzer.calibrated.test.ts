import { describe, expect, it } from 'vitest';
import { RunAnalyzer } from './runAnalyzer';
import { DEMO_RUN, simulateRun } from './reactionModel';

// Demo data (DEMO.md): the demo run, and a line with a blank offset, A = m c + a, m in AU per µM.
const run = simulateRun({ ...DEMO_RUN, seed: 3 });
const m = 0.1300644, a = 0.0021;
const rel = (x: number, y: number) => Math.abs(x - y) / Math.abs(y);

function fit(signal?: ConstructorParameters<typeof RunAnalyzer>[0]) {
  const an = new RunAnalyzer(signal);
  const line = signal?.signal;
  for (let i = 0; i < run.time_s.length; i++) {
    const A = run.absorbance[i]!;
    an.add(run.time_s[i]!, line ? (A - a) / m : A);
  }
  return an.flush();
}

describe('a calibrated signal, c = (A − a)/m, fitted by the same engine', () => {
  const abs = fit();
  const conc = fit({ signal: { name: 'concentration', unit: 'µM', absorbance: { slope: m, intercept: a } } });

  it('gives the absorbance fit in other units (handbook: a linear map of the signal)', () => {
    expect(rel(conc.models.first.k!, abs.models.first.k!)).toBeLessThan(1e-9); // first order: k unchanged
    expect(rel(conc.models.first.kStdErr!, abs.models.first.kStdErr!)).toBeLessThan(1e-6);
    expect(rel(conc.models.first.a0!, (abs.models.first.a0! - a) / m)).toBeLessThan(1e-9); // c0 = (A0 − a)/m
    expect(rel(conc.models.second.k!, abs.models.second.k! * m)).toBeLessThan(1e-6); // 1/(A − A∞) = 1/(m (c − c∞))
    // Zero order's end value (fitted at the plateau, or held on the blank, A∞ = 0 AU, which
    // is c∞ = −a/m) maps through the line: the same line, the same half-life (A0 − A∞ maps
    // to c0 − c∞ through the slope alone).
    expect(rel(conc.models.zero.k!, abs.models.zero.k! / m)).toBeLessThan(1e-6);
    expect(rel(conc.models.zero.aInf!, (abs.models.zero.aInf! - a) / m)).toBeLessThan(1e-6);
    // a zero-order run that has not reached its end holds it on the blank: c∞ = −a/m
    const line = simulateRun({ ...DEMO_RUN, order: 'zero', k: 6.5e-4, seed: 3 });
    const an = new RunAnalyzer({ signal: { name: 'concentration', unit: 'µM', absorbance: { slope: m, intercept: a } } });
    for (let i = 0; i < line.time_s.length; i++) an.add(line.time_s[i]!, (line.absorbance[i]! - a) / m);
    const held = an.flush().models.zero;
    expect(held.aInfFixed).toBe(true);
    expect(rel(held.aInf!, -a / m)).toBeLessThan(1e-12);
    expect(rel(conc.models.zero.halfLife_s!, abs.models.zero.halfLife_s!)).toBeLessThan(1e-6);
    expect(rel(conc.models.first.halfLife_s!, abs.models.first.halfLife_s!)).toBeLessThan(1e-6);
    expect(conc.outliers).toEqual(abs.outliers);
    expect(conc.units.k.second).toBe('µM^-1 s^-1');
    expect(conc.warnings.join(' ')).not.toMatch(/noise model were applied/);
  });

  it('negative control: a concentration signal without its line cannot be weighted from the absorbance noise, and says so when asked to', () => {
    const blind = fit({ signal: { name: 'concentration', unit: 'µM' }, weighted: true });
    expect(blind.warnings.join(' ')).toMatch(/weights from the absorbance noise model were applied to a concentration signal/);
    // weights taken at the concentration, not at its absorbance, move k by far more than the tolerance above
    expect(rel(blind.models.first.k!, abs.models.first.k!)).toBeGreaterThan(1e-6);
  });
});
