import { describe, expect, it } from 'vitest';
import { RunData } from './runData';
import { RunAnalyzer } from '../../kinetics/runAnalyzer';

describe('run clock between readings', () => {
  const fed = (pace_ms: number) => {
    let now = 0;
    const run = new RunData((o) => new RunAnalyzer(o), () => now);
    // One reading a device second, arriving every pace_ms of host time.
    for (let i = 0; i <= 20; i++) { now = i * pace_ms; run.place(i, 0.5, 0); }
    return { run, at: (ms: number) => { now = 20 * pace_ms + ms; return run.runTimeNow(); } };
  };

  it('converts the host time since the last reading at the pace of the readings (a 100× simulated run)', () => {
    const { at } = fed(10);
    // 5 ms of host time after the reading at 20 s is half a reading interval: 20.5 s.
    expect(at(5)).toBeCloseTo(20.5, 9);
  });

  it('never runs more than one reading interval ahead of the last reading', () => {
    const { at } = fed(10);
    expect(at(10_000)).toBeCloseTo(21, 9);
  });

  it('keeps wall seconds for a run read in real time', () => {
    const { at } = fed(1000);
    expect(at(250)).toBeCloseTo(20.25, 9);
  });

  // Negative control: the plain wall-clock extrapolation puts a mark 5 ms after the reading
  // at 20.005 s, not at 20.5 s, on a 100× run.
  it('negative control: wall-clock extrapolation would differ', () => {
    const { at } = fed(10);
    expect(Math.abs(at(5) - (20 + 5 / 1000))).toBeGreaterThan(0.4);
  });
});
