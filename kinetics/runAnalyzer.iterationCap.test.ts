import { describe, expect, it } from 'vitest';
import { RunAnalyzer } from './runAnalyzer';
import { DEMO_RUN, simulateRun } from './reactionModel';
import { coreFitTally, resetCoreFitTally } from './models/coreFit';

// A refit that stops at the fit core's iteration cap is wasted work and reports a point
// that is not a minimum. Demo runs (demo data, DEMO.md: first order, k = 3.5e-3 s⁻¹,
// σ_T = 0.001, 1 s sampling) replayed through the analyzer, counted by the core's tally.
const tallyTotal = (): { fits: number; capHits: number } => {
  let fits = 0, capHits = 0;
  for (const t of Object.values(coreFitTally)) { fits += t.fits; capHits += t.capHits; }
  return { fits, capHits };
};

describe('iteration-cap hits of the fit core on demo replays', () => {
  for (const seed of [1, 2, 3]) {
    it(`seed ${seed}, 900 s: no refit past the first 60 readings stops at the cap`, () => {
      const run = simulateRun({ ...DEMO_RUN, seed });
      const a = new RunAnalyzer();
      for (let i = 0; i < run.time_s.length; i++) {
        if (i === 60) resetCoreFitTally();
        a.add(run.time_s[i]!, run.absorbance[i]!);
      }
      a.flush();
      const t = tallyTotal();
      expect(t.fits).toBeGreaterThan(100); // second order and its unbounded refit, n-th order
      expect(t.capHits).toBe(0);
    });
  }

  it('negative control: the tally does count cap hits, as on the first 13 readings of seed 2 (not yet bent)', () => {
    // The first seconds of a run have not bent (the curve falls 0.35% a second): the
    // second-order fit slides along a flat valley and stops at the cap. The tally must
    // see it; these early refits are the known remainder.
    const run = simulateRun({ ...DEMO_RUN, seed: 2, duration_s: 12 });
    resetCoreFitTally();
    const a = new RunAnalyzer();
    for (let i = 0; i < run.time_s.length; i++) a.add(run.time_s[i]!, run.absorbance[i]!);
    a.flush();
    expect(tallyTotal().capHits).toBeGreaterThan(0);
  });
});
