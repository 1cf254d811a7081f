import { describe, expect, it } from 'vitest';
import { HOLD_MIN_POINTS, StopAdvisor, type AdviceInput } from './stopAdvice';

const input = (o: Partial<AdviceInput>): AdviceInput => ({
  points: 100, time_s: 100, fitUsable: true, kRelCI95Now: 0.2, kRelCI95AtTarget: 0.03, fractionConverted: 0.3,
  targetFraction: 0.875, targetHalfLives: 3, precision: 0.05, orderDecided: false, drivingModel: 'first',
  predictedAt_s: 600, predictedAtStdErr_s: 5, plausibleModels: ['first'], readingsPerHalfLife: null, ...o,
});

describe('stop advice state machine', () => {
  it('goes gathering → estimating → settled → farEnough, counting readings not wall time', () => {
    const a = new StopAdvisor();
    expect(a.update(input({ points: 5 })).state).toBe('gathering');
    expect(a.update(input({ points: 100 })).state).toBe('estimating');
    expect(a.update(input({ points: 110, kRelCI95Now: 0.04 })).state).toBe('estimating'); // narrow, not held yet
    expect(a.update(input({ points: 110 + HOLD_MIN_POINTS - 1, kRelCI95Now: 0.04 })).state).toBe('estimating');
    const s = a.update(input({ points: 110 + HOLD_MIN_POINTS, kRelCI95Now: 0.04 }));
    expect(s.state).toBe('settled');
    expect(s.suggested).toBe(false);
    expect(s.earlyStopPossible).toBe(false); // order not decided
    const e = a.update(input({ points: 140, kRelCI95Now: 0.04, orderDecided: true, fractionConverted: 0.6 }));
    expect(e.earlyStopPossible).toBe(true);
    expect(e.reason).toMatch(/early stop/);
    const f = a.update(input({ points: 150, time_s: 321, kRelCI95Now: 0.03, fractionConverted: 0.9 }));
    expect(f.state).toBe('farEnough');
    expect(f.suggested).toBe(true);
    expect(f.atTime_s).toBe(321);
    // the first time the suggestion held is kept
    expect(a.update(input({ points: 160, time_s: 400, kRelCI95Now: 0.03, fractionConverted: 0.95 })).atTime_s).toBe(321);
  });

  it('a widening CI resets the hold', () => {
    const a = new StopAdvisor();
    a.update(input({ points: 100, kRelCI95Now: 0.04 }));
    a.update(input({ points: 130, kRelCI95Now: 0.06 }));
    expect(a.update(input({ points: 131, kRelCI95Now: 0.04, fractionConverted: 0.9 })).state).toBe('estimating');
  });
});
