import { describe, expect, it } from 'vitest';
import { RunAnalyzer } from './runAnalyzer';
import { DEMO_RUN, simulateRun, type SimulatedRunSpec } from './reactionModel';

function analyse(o: Partial<SimulatedRunSpec>, opts = {}) {
  const run = simulateRun({ ...DEMO_RUN, ...o });
  const an = new RunAnalyzer(opts);
  for (let i = 0; i < run.time_s.length; i++) an.add(run.time_s[i], run.absorbance[i]);
  return an.flush();
}

describe('run-level warnings and notes', () => {
  it('warns that nothing is reacting when the signal stays flat', () => {
    const r = analyse({ k: 1e-9 });
    expect(r.warnings.join(' ')).toMatch(/nothing seems to be reacting/);
    expect(r.stop.suggested).toBe(false);
  });

  it('warns that the signal has faded into the noise long after the end', () => {
    // 15 half-lives: what is left (0.645 × 2^−15 AU) is far under the noise (~0.0004 AU)
    const r = analyse({ duration_s: 3000 });
    expect(r.warnings.join(' ')).toMatch(/faded into the noise/);
    // negative control: the demo run (4.5 half-lives) carries no such warning
    expect(analyse({}).warnings.join(' ')).not.toMatch(/faded|nothing/);
  });

  it('always says the CI covers noise only, and reports units for each model', () => {
    const r = analyse({});
    expect(r.uncertaintyNote).toMatch(/noise only/);
    expect(r.units.k).toEqual({ zero: 'AU s^-1', first: 's^-1', second: 'AU^-1 s^-1', nth: 'AU^(1-n) s^-1' });
  });

  it('leaves readings with time going backwards out and says so', () => {
    const an = new RunAnalyzer();
    for (let i = 0; i < 50; i++) an.add(i, 0.6 - 0.001 * i);
    an.add(10, 0.5);
    const r = an.flush();
    expect(r.points).toBe(50);
    expect(r.warnings.join(' ')).toMatch(/1 reading\(s\) with time going backwards were left out/);
  });
});
