import { describe, expect, it } from 'vitest';
import { demoAnalysis } from '../test/e2e/fakeBridge';
import { adviceWords, finishWords } from './adviceText';

const withStop = (stop: Partial<ReturnType<typeof demoAnalysis>['stop']>) => {
  const r = demoAnalysis(300, 300);
  return { ...r, stop: { ...r.stop, ...stop } };
};

describe('the stop advice in words', () => {
  it('says each state in words, not by colour alone', () => {
    expect(adviceWords(null, false).headline).toBe('Not running');
    expect(adviceWords(null, true).headline).toBe('Waiting for readings');
    expect(adviceWords(withStop({ state: 'gathering', reason: '' }), true).headline).toBe('Gathering points');
    expect(adviceWords(withStop({ state: 'estimating' }), true).headline).toBe('Estimating: keep going');
    expect(adviceWords(withStop({ state: 'settled', suggested: false }), true).headline).toBe('Settled: not yet at the target');
    expect(adviceWords(withStop({ state: 'farEnough', suggested: true }), true).headline).toBe('Far enough: stop now');
    expect(adviceWords(withStop({ state: 'farEnough', suggested: false }), true).headline).toBe('Far enough, but not settled');
  });

  it('says what an early stop costs in the precision of k', () => {
    const w = adviceWords(withStop({ state: 'settled', suggested: false, earlyStopPossible: true, kRelCI95Now: 0.031, kRelCI95AtTarget: 0.018 }), true);
    expect(w.earlyStop).toBe('Stopping early is possible: k is known to ±3.1% now, against ±1.8% at the target.');
    // The detail does not repeat the cost the early-stop line gives; it names the target.
    expect(w.detail).toMatch(/^k has settled and the order is decided; the target \(87\.5% converted\) is not reached yet\.$/);
    expect(adviceWords(withStop({ earlyStopPossible: false }), true).earlyStop).toBeNull();
    // Once the stop is suggested there is nothing early about it.
    expect(adviceWords(withStop({ state: 'farEnough', suggested: true, earlyStopPossible: true }), true).earlyStop).toBeNull();
  });

  it('gives the finishing time with a 95 % interval, in wall-clock time at the run\'s speed', () => {
    // ±1.96 standard errors (normal approximation): 10 s → ±20 s.
    const r = withStop({ predictedAt_s: 600, predictedAtStdErr_s: 10 });
    expect(finishWords(r, 400, null)).toBe('Target reached at t ≈ 600 ± 20 s (95 %), about 3 min 20 s from now.');
    expect(finishWords(r, 400, 50)).toBe('Target reached at t ≈ 600 ± 20 s (95 %), about 4 s from now.');
    expect(finishWords(r, 650, 1)).toBe('Target reached at t ≈ 600 s.');
    expect(finishWords(withStop({ predictedAt_s: null }), 100, 1)).toBe('Finishing time: not predictable yet.');
  });
});
