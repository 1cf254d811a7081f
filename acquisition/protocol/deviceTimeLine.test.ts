import { describe, expect, it } from 'vitest';
import { DeviceTimeLine, TIME_JUMP_PACE_FACTOR, TIME_JUMP_SLACK_S } from './deviceTimeLine';

/** Feeds (device s, host ms) pairs; returns the refusal reason of each, or 'ok'. */
function feed(clock: DeviceTimeLine, lines: Array<[number, number?]>): string[] {
  return lines.map(([t, h]) => {
    const r = clock.check(t, h);
    if (r) return r.reason;
    clock.accept(t, h);
    return 'ok';
  });
}

describe('the device time line', () => {
  it('refuses one corrupted time far ahead, keeps its time line, and takes the next reading', () => {
    const clock = new DeviceTimeLine();
    const steady = Array.from({ length: 30 }, (_, i): [number, number] => [i, i * 1000]);
    expect(feed(clock, steady).every((r) => r === 'ok')).toBe(true);
    expect(feed(clock, [[1e15, 30_000], [30, 30_000], [31, 31_000]])).toEqual(['timeJump', 'ok', 'ok']);
    expect(clock.lastTime_s).toBe(31);
    expect(clock.check(1e15, 32_000)?.detail).toBe('device time leaps from 31 s to 1000000000000000 s while 1.0 s passed on this computer');
  });

  it('lets a genuine gap pass: a cable pulled for two minutes, the device clock running on', () => {
    const clock = new DeviceTimeLine();
    feed(clock, Array.from({ length: 10 }, (_, i): [number, number] => [i, i * 1000]));
    expect(feed(clock, [[9 + 120, 9_000 + 120_000], [130, 130_000]])).toEqual(['ok', 'ok']);
  });

  it('holds the rule at its boundary: 1.5 × the host time elapsed plus 10 s', () => {
    const at = (jump_s: number): string => {
      const clock = new DeviceTimeLine();
      feed(clock, [[0, 0]]);
      return feed(clock, [[jump_s, 4000]])[0]!;
    };
    const limit = TIME_JUMP_PACE_FACTOR * 4 + TIME_JUMP_SLACK_S; // 16 s after 4 s of host time
    expect(at(limit)).toBe('ok');
    expect(at(limit + 0.01)).toBe('timeJump');
  });

  it('measures the pace of a device that plays its clock fast (an emulator at 50×), so its cable gap passes too', () => {
    const clock = new DeviceTimeLine();
    // One device second every 20 ms of host time, for 3 s of host time.
    feed(clock, Array.from({ length: 150 }, (_, i): [number, number] => [i, i * 20]));
    // The line is down for 800 ms: the emulator's clock ran 40 s on.
    expect(feed(clock, [[149 + 40, 149 * 20 + 800]])).toEqual(['ok']);
    // Still, a time of 1e15 s is nowhere near 50×.
    expect(clock.check(1e15, 149 * 20 + 820)?.reason).toBe('timeJump');
  });

  it('refuses time going backwards, and without host times only that', () => {
    const clock = new DeviceTimeLine();
    expect(feed(clock, [[5], [1e15], [4], [1e15]])).toEqual(['ok', 'ok', 'timeBackwards', 'ok']);
  });

  it('starts afresh after a reset (the device identified itself again)', () => {
    const clock = new DeviceTimeLine();
    feed(clock, [[100, 0], [101, 1000]]);
    clock.reset();
    expect(feed(clock, [[2, 2000], [3, 3000]])).toEqual(['ok', 'ok']);
  });
});
