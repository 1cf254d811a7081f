import { describe, expect, it } from 'vitest';
import { benchState, demoAnalysis } from '../test/e2e/fakeBridge';
import { applyEvent, createStore } from './store';

const batch = (runId: string, fromIndex: number, n: number, t0 = fromIndex) => ({
  type: 'readings' as const, runId, fromIndex,
  time_s: Array.from({ length: n }, (_, i) => t0 + i), absorbance: Array.from({ length: n }, (_, i) => 0.6 - 0.001 * (t0 + i)), flags: new Array<number>(n).fill(0),
});

describe('the screen store', () => {
  it('appends readings in run order and counts them', () => {
    const store = createStore();
    applyEvent(store, batch('r1', 0, 100), 0);
    applyEvent(store, batch('r1', 100, 50), 50);
    const s = store.get();
    expect(s.pointCount).toBe(150);
    expect(s.readings.time_s[149]).toBe(149);
    expect(s.readings.absorbance[10]).toBeCloseTo(0.59, 12);
  });

  it('adds only the new part of a batch sent again, and counts a hole it never received', () => {
    const store = createStore();
    applyEvent(store, batch('r1', 0, 100), 0);
    applyEvent(store, batch('r1', 90, 20), 0); // 90..109: ten already held
    expect(store.get().pointCount).toBe(110);
    expect(store.get().readings.time_s[109]).toBe(109);
    applyEvent(store, batch('r1', 120, 5), 0); // 110..119 never came
    expect(store.get().pointCount).toBe(115);
    expect(store.get().readings.missed).toBe(10);
  });

  it('starts over for a new run and ignores a late result of the old one', () => {
    const store = createStore();
    applyEvent(store, batch('r1', 0, 40), 0);
    applyEvent(store, { type: 'state', state: { ...benchState(0), runId: 'r2' } }, 0);
    expect(store.get().pointCount).toBe(0);
    applyEvent(store, { type: 'analysis', runId: 'r1', atCount: 40, result: demoAnalysis(40, 39) }, 0);
    expect(store.get().analysis).toBeNull();
    applyEvent(store, { type: 'analysis', runId: 'r2', atCount: 0, result: demoAnalysis(0, 0) }, 0);
    expect(store.get().analysis).not.toBeNull();
  });

  it('makes a new state object on every change and leaves the old one as it was', () => {
    const store = createStore();
    const before = store.get();
    let calls = 0;
    store.subscribe(() => calls++);
    applyEvent(store, { type: 'rejected', counts: { ...benchState(0).rejected, checksum: 3 }, reason: 'checksum', line: '$R,12.0,0.51*FFFF' }, 0);
    const after = store.get();
    expect(after).not.toBe(before);
    expect(before.rejected).toEqual({});
    expect(after.rejected.checksum).toBe(3);
    expect(after.lastRejected).toEqual({ reason: 'checksum', line: '$R,12.0,0.51*FFFF' });
    expect(Object.isFrozen(after)).toBe(true);
    // An update that changes nothing tells nobody.
    store.update(() => {});
    expect(calls).toBe(1);
  });

  it('keeps warnings as messages, the last few only', () => {
    const store = createStore();
    for (let i = 0; i < 10; i++) applyEvent(store, { type: 'warning', message: `w${i}`, at: '' }, 0);
    expect(store.get().messages.map((m) => m.text)).toEqual(['w4', 'w5', 'w6', 'w7', 'w8', 'w9']);
  });

  it('measures how fast the run clock goes against the wall clock', () => {
    const store = createStore();
    // 50 readings of 1 s each per wall second: a 50× simulation.
    for (let k = 0; k < 10; k++) applyEvent(store, batch('r1', k * 5, 5), k * 100);
    expect(store.get().readings.runSecondsPerWallSecond()).toBeCloseTo(45 / 0.9, 6);
    expect(store.get().readings.readingsPerWallSecond()).toBeCloseTo(45 / 0.9, 6);
  });
});
