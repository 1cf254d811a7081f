/**
 * What the charts draw in one frame, computed from the readings, the latest fit and
 * the chart's width: the readings reduced to the pixel columns, split into those
 * inside the fit window (drawn dark) and outside it (drawn pale, never deleted),
 * shown in the chosen view, and the residuals of the model that drives the advice.
 * Pure: no DOM, so it is tested and benchmarked on its own.
 */
import type { AnalysisResultView } from '../main/bridge/contract';
import { decimateMinMax, emptyDecimated, lowerBound, type DecimatedSeries } from './decimate';
import { curveAbsorbance, curveParameters, viewBaseline, viewValue } from './fitCurves';
import type { ReceivedReadings } from './receivedReadings';
import type { ChartView } from './store';

export interface ChartFrame {
  /** Time after mixing (s) of each drawn point. */
  x: number[];
  inWindow: (number | null)[];
  outside: (number | null)[];
  residual: (number | null)[];
  xMin: number;
  xMax: number;
  yMin: number;
  yMax: number;
  /**
   * Half-height of the residual axis: the 98th percentile of |residual|, so that one
   * spike (ringed as an outlier on the chart above) does not flatten the noise band.
   */
  residualMax: number;
  /** Readings the view could not show (at or below A∞ in a linearised view). */
  hidden: number;
  /** Points drawn, and readings they stand for. */
  drawn: number;
  represented: number;
  /** The fit window in time after mixing, open ends filled with the data's ends. */
  windowFrom: number;
  windowTo: number;
  baseline: number | null;
  /** Time after mixing of the first reading the fit saw (the origin of its time axis). */
  firstInWindow_s: number;
  /** Index in the readings of the first reading the analyzer was fed (its outlier indices count from there). */
  firstFedIndex: number;
}

export interface ChartFrameInput {
  readings: ReceivedReadings;
  /** Run-clock time of mixing; null: time zero is the first reading's clock zero. */
  timeZero_s: number | null;
  analysis: AnalysisResultView | null;
  fitWindow: { from_s: number | null; to_s: number | null };
  view: ChartView;
  /** Plot width in CSS pixels: one column per pixel. */
  columns: number;
}

export function emptyFrame(): ChartFrame {
  return {
    x: [], inWindow: [], outside: [], residual: [], xMin: 0, xMax: 1, yMin: 0, yMax: 1, residualMax: 0,
    hidden: 0, drawn: 0, represented: 0, windowFrom: 0, windowTo: 1, baseline: null, firstInWindow_s: 0, firstFedIndex: 0,
  };
}

/**
 * Build the frame. `scratch` holds the reduction's buffers between frames so that a
 * redraw does not allocate; `shifted` the times after mixing.
 */
export class ChartFrameBuilder {
  private reduced: DecimatedSeries = emptyDecimated(4096);
  private reducedKey = '';
  private absResiduals: number[] = [];
  private shifted = new Float64Array(0);
  private shiftedCount = 0;
  private shiftedZero = NaN;
  private shiftedGeneration = -1;

  build(input: ChartFrameInput, out: ChartFrame = emptyFrame()): ChartFrame {
    const { readings, analysis, view } = input;
    const n = readings.count;
    const zero = input.timeZero_s ?? 0;
    const t = this.timesAfterMixing(readings, zero);
    out.x.length = 0; out.inWindow.length = 0; out.outside.length = 0; out.residual.length = 0;
    out.hidden = 0; out.drawn = 0; out.represented = n; out.residualMax = 0;
    out.baseline = viewBaseline(analysis, view);
    if (n === 0) {
      out.xMin = 0; out.xMax = 60; out.yMin = 0; out.yMax = 1; out.windowFrom = 0; out.windowTo = 60;
      return out;
    }
    const tFirst = t[0]!, tLast = t[n - 1]!;
    out.xMin = Math.min(tFirst, 0);
    out.xMax = tLast > out.xMin ? tLast : out.xMin + 1;
    // The service fits only readings at or after time zero (t ≥ 0), inside the window.
    out.firstFedIndex = lowerBound(t, n, 0);
    const firstInWindow = lowerBound(t, n, Math.max(0, input.fitWindow.from_s ?? 0));
    out.firstInWindow_s = firstInWindow < n ? t[firstInWindow]! : 0;
    out.windowFrom = input.fitWindow.from_s ?? Math.max(0, out.firstInWindow_s);
    out.windowTo = input.fitWindow.to_s ?? out.xMax;
    // A new fit alone does not move the readings: reuse their reduction then.
    const key = `${readings.generation}|${n}|${zero}|${input.columns}|${out.xMin}|${out.xMax}`;
    if (key !== this.reducedKey) {
      decimateMinMax(t, readings.absorbance, n, out.xMin, out.xMax, input.columns, this.reduced);
      this.reducedKey = key;
    }
    const r = this.reduced;
    const drive = analysis ? curveParameters(analysis, analysis.drivingModel, out.firstInWindow_s) : null;
    let yMin = Infinity, yMax = -Infinity;
    this.absResiduals.length = 0;
    for (let i = 0; i < r.count; i++) {
      const ti = r.x[i]!;
      const a = r.y[i]!;
      const v = viewValue(view, a, out.baseline, analysis?.direction === 'rising');
      const inside = ti >= out.windowFrom && ti <= out.windowTo;
      out.x.push(ti);
      if (v === null) out.hidden++;
      else {
        if (v < yMin) yMin = v;
        if (v > yMax) yMax = v;
      }
      out.inWindow.push(inside ? v : null);
      out.outside.push(inside ? null : v);
      let res: number | null = null;
      if (drive && inside) {
        // Residuals in absorbance whatever the view: what the fit actually minimised.
        res = a - curveAbsorbance(drive, ti);
        this.absResiduals.push(Math.abs(res));
      }
      out.residual.push(res);
    }
    out.drawn = r.count;
    if (this.absResiduals.length) {
      this.absResiduals.sort((p, q) => p - q);
      out.residualMax = this.absResiduals[Math.min(this.absResiduals.length - 1, Math.floor(0.98 * this.absResiduals.length))]!;
    }
    if (!(yMax >= yMin)) { yMin = 0; yMax = 1; }
    const pad = Math.max((yMax - yMin) * 0.06, Math.abs(yMax) * 1e-3, 1e-6);
    out.yMin = yMin - pad;
    out.yMax = yMax + pad;
    return out;
  }

  /** Times after mixing, kept between frames and extended only by the new readings. */
  private timesAfterMixing(readings: ReceivedReadings, zero: number): Float64Array {
    const n = readings.count;
    if (zero !== this.shiftedZero || n < this.shiftedCount || readings.generation !== this.shiftedGeneration) this.shiftedCount = 0;
    if (this.shifted.length < n) {
      let cap = Math.max(1024, this.shifted.length);
      while (cap < n) cap *= 2;
      const next = new Float64Array(cap);
      next.set(this.shifted.subarray(0, this.shiftedCount));
      this.shifted = next;
    }
    for (let i = this.shiftedCount; i < n; i++) this.shifted[i] = readings.time_s[i]! - zero;
    this.shiftedCount = n;
    this.shiftedZero = zero;
    this.shiftedGeneration = readings.generation;
    return this.shifted;
  }
}
