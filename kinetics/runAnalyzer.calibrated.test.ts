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
    // Zero order ends on the blank, c∞ = 0, which is A∞ = a in absorbance: A = A0 − k t down to a.
    const held = fit({ fixedAInf: a });
    expect(rel(conc.models.zero.k!, held.models.zero.k! / m)).toBeLessThan(1e-6);
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
