import { describe, expect, it } from 'vitest';
import { RunAnalyzer } from './runAnalyzer';
import { DEMO_RUN, simulateRun } from './reactionModel';

describe("forecast of k's CI at the target", () => {
  it('matches the CI the same run reaches when it is continued to the target', () => {
    // reference: what actually happens when the run goes on (mean over seeds of the real CI at the target)
    let ratioSum = 0;
    const seeds = [1, 2, 3, 4, 5];
    for (const seed of seeds) {
      const run = simulateRun({ ...DEMO_RUN, seed });
      const an = new RunAnalyzer();
      let predicted: number | null = null, now250: number | null = null, atTarget: number | null = null;
      for (let i = 0; i < run.time_s.length; i++) {
        an.add(run.time_s[i], run.absorbance[i]);
        if (run.time_s[i] === 250) { const r = an.flush(); predicted = r.stop.kRelCI95AtTarget; now250 = r.stop.kRelCI95Now; }
        if (run.time_s[i] === 594) atTarget = an.flush().stop.kRelCI95Now; // 3 half-lives: 3 ln2 / 3.5e-3 s
      }
      expect(predicted).not.toBeNull();
      // negative control: the forecast is not just today's CI, which is clearly wider
      expect(now250!).toBeGreaterThan(1.5 * predicted!);
      ratioSum += predicted! / atTarget!;
    }
    const ratio = ratioSum / seeds.length;
    expect(ratio).toBeGreaterThan(0.8);
    expect(ratio).toBeLessThan(1.25);
  });
});
