import { describe, expect, it } from 'vitest';
import { demoAnalysis } from '../test/e2e/fakeBridge';
import { ChartFrameBuilder } from './chartData';
import { ReceivedReadings } from './receivedReadings';

function firstOrderReadings(n: number, dt: number, start_s = 0, spike?: number) {
  const s = new ReceivedReadings();
  const time_s: number[] = [], absorbance: number[] = [];
  for (let i = 0; i < n; i++) {
    const t = start_s + i * dt;
    time_s.push(t);
    absorbance.push(0.005 + 0.645 * Math.exp(-3.5e-3 * Math.max(0, t)) + (i === spike ? 0.2 : 0));
  }
  s.append({ fromIndex: 0, time_s, absorbance, flags: new Array<number>(n).fill(0) });
  return s;
}

describe('what the chart draws in a frame', () => {
  it('splits the readings into those inside the fit window and those left out, deleting none', () => {
    const readings = firstOrderReadings(200, 1);
    const f = new ChartFrameBuilder().build({ readings, timeZero_s: null, analysis: demoAnalysis(200, 199), fitWindow: { from_s: 20, to_s: 150 }, view: 'absorbance', columns: 800 });
    expect(f.drawn).toBe(200);
    const inside = f.inWindow.filter((v) => v !== null).length;
    const outside = f.outside.filter((v) => v !== null).length;
    expect(inside).toBe(131); // 20 … 150 inclusive
    expect(inside + outside).toBe(200);
  });

  it('draws the residuals of the driving model, zero for readings that lie on it', () => {
    const readings = firstOrderReadings(300, 2);
    const f = new ChartFrameBuilder().build({ readings, timeZero_s: null, analysis: demoAnalysis(300, 598), fitWindow: { from_s: null, to_s: null }, view: 'absorbance', columns: 800 });
    // demoAnalysis fits first order with A0 0.65, A∞ 0.005, k 3.5e-3, the same curve as the readings.
    for (const r of f.residual) expect(Math.abs(r!)).toBeLessThan(1e-12);
  });

  it('shifts time to after mixing and rings the outliers the analyzer counted from time zero', () => {
    // Readings from −10 s on the mixing clock; the service feeds the analyzer from t = 0, so its
    // outlier index 30 is reading 40 of the run.
    const readings = firstOrderReadings(120, 1, 0, 40);
    const f = new ChartFrameBuilder().build({ readings, timeZero_s: 10, analysis: demoAnalysis(110, 109), fitWindow: { from_s: null, to_s: null }, view: 'absorbance', columns: 800 });
    expect(f.xMin).toBe(-10);
    expect(f.firstFedIndex).toBe(10);
    expect(readings.absorbance[30 + f.firstFedIndex]! - readings.absorbance[39]!).toBeGreaterThan(0.15);
    // Readings before mixing are drawn pale: outside the window.
    expect(f.outside.slice(0, 10).every((v) => v !== null)).toBe(true);
  });

  it('leaves out of a linearised view the readings at or below A∞, and says how many', () => {
    const readings = new ReceivedReadings();
    readings.append({ fromIndex: 0, time_s: [0, 1, 2, 3], absorbance: [0.5, 0.2, 0.004, 0.003], flags: [0, 0, 0, 0] });
    const f = new ChartFrameBuilder().build({ readings, timeZero_s: null, analysis: demoAnalysis(4, 3), fitWindow: { from_s: null, to_s: null }, view: 'ln', columns: 800 });
    expect(f.hidden).toBe(2);
    expect(f.inWindow[0]).toBeCloseTo(Math.log(0.495), 12);
  });

  it('reduces a long run to the pixel columns and keeps its extremes on the axis', () => {
    const readings = firstOrderReadings(200_000, 0.01, 0, 123_456);
    const f = new ChartFrameBuilder().build({ readings, timeZero_s: null, analysis: null, fitWindow: { from_s: null, to_s: null }, view: 'absorbance', columns: 600 });
    expect(f.drawn).toBeLessThanOrEqual(4 * 600 + 2);
    expect(f.represented).toBe(200_000);
    expect(f.yMax).toBeGreaterThan(readings.absorbance[123_456]!); // the spike is inside the axis
  });

  it('starts the time shift over when the readings are cleared for a new run of the same length', () => {
    const b = new ChartFrameBuilder();
    const readings = firstOrderReadings(50, 1);
    b.build({ readings, timeZero_s: null, analysis: null, fitWindow: { from_s: null, to_s: null }, view: 'absorbance', columns: 100 });
    readings.clear();
    readings.append({ fromIndex: 0, time_s: Array.from({ length: 50 }, (_, i) => 1000 + i), absorbance: new Array<number>(50).fill(0.3), flags: new Array<number>(50).fill(0) });
    const f = b.build({ readings, timeZero_s: null, analysis: null, fitWindow: { from_s: null, to_s: null }, view: 'absorbance', columns: 100 });
    expect(f.x[0]).toBe(1000);
  });
});
