/**
 * The live chart: readings against time after mixing with the fitted curve of each
 * order drawn over them, a residuals strip under it on the same time axis, and the
 * fit window set by dragging across the chart. Drawing only: the numbers come from
 * the service, the reduction from chartData.
 */
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';
import type { AnalysisResultView } from '../../main/bridge/contract';
import { ChartFrameBuilder, emptyFrame, type ChartFrame } from '../chartData';
import { CURVE_MODELS, curveAbsorbance, curveParameters, viewValue, type CurveModel } from '../fitCurves';
import type { ReceivedReadings } from '../receivedReadings';
import type { ChartView, RunMark } from '../store';
import { PALETTE } from './palette';

export interface ChartInput {
  readings: ReceivedReadings;
  timeZero_s: number | null;
  analysis: AnalysisResultView | null;
  fitWindow: { from_s: number | null; to_s: number | null };
  view: ChartView;
  marks: RunMark[];
  wavelength_nm: number | null;
}

export interface RunChart {
  draw(input: ChartInput): ChartFrame;
  resize(width: number, mainHeight: number, residualHeight: number): void;
  /** Axis text at `scale` × its usual 14 px (the large-text mode for a projector). */
  setTextScale(scale: number): void;
}

const AXIS_PX = 14;
const LABEL_SIZE = 22;
const AXIS_FONT = `${AXIS_PX}px system-ui, sans-serif`;
const LABEL_FONT = `bold ${AXIS_PX}px system-ui, sans-serif`;
/** The text scale every chart's axes follow (1, or larger for a projector). */
let textScale = 1;

function axis(label: string, size = 64): uPlot.Axis {
  return {
    label, stroke: PALETTE.ink, font: AXIS_FONT, labelFont: LABEL_FONT, size: () => Math.round(size * textScale), labelSize: LABEL_SIZE,
    grid: { stroke: PALETTE.grid, width: 1 }, ticks: { stroke: PALETTE.grid, width: 1 },
    // Tick labels with a true minus sign and no float noise (0.30000000000000004).
    values: (_u, splits) => splits.map((v) => String(Number(v.toPrecision(6))).replace('-', '−')),
  };
}

function dots(fill: string, size: number): uPlot.Series {
  return { stroke: fill, width: 0, paths: () => null, points: { show: true, size, fill, stroke: fill, width: 0 } };
}

export function createRunChart(
  mainEl: HTMLElement,
  residualEl: HTMLElement,
  onWindow: (from_s: number, to_s: number | null) => void,
): RunChart {
  const builder = new ChartFrameBuilder();
  let frame = emptyFrame();
  let last: ChartInput | null = null;

  const clipped = (u: uPlot, paint: (px: number) => void): void => {
    if (!last) return;
    const { left, top, width, height } = u.bbox;
    u.ctx.save();
    u.ctx.beginPath();
    u.ctx.rect(left, top, width, height);
    u.ctx.clip();
    paint(devicePixelRatio || 1);
    u.ctx.restore();
  };
  // Under the readings: the veil over what the fit leaves out, and the fitted curves,
  // so that the curves never hide the points they were fitted to.
  const under = (u: uPlot): void => clipped(u, (px) => {
    const { left, top, width, height } = u.bbox;
    const wl = u.valToPos(frame.windowFrom, 'x', true);
    const wr = u.valToPos(frame.windowTo, 'x', true);
    u.ctx.fillStyle = PALETTE.veil;
    if (wl > left) u.ctx.fillRect(left, top, Math.min(wl, left + width) - left, height);
    if (wr < left + width) u.ctx.fillRect(Math.max(wr, left), top, left + width - Math.max(wr, left), height);
    drawCurves(u, last!, frame, px);
  });
  // Over them: outlier rings and the marks.
  const over = (u: uPlot): void => clipped(u, (px) => {
    drawOutliers(u, last!, frame, px);
    drawMarks(u, last!, px);
  });

  const main = new uPlot(
    {
      width: 800, height: 400,
      legend: { show: false },
      scales: { x: { time: false, auto: false }, y: { auto: false } },
      axes: [axis('t after mixing / s', 50), axis('A', 70)],
      series: [{}, dots(PALETTE.ink, 4), dots(PALETTE.pale, 4)],
      cursor: { drag: { x: true, y: false, setScale: false }, sync: { key: 'rateline-run' }, points: { show: false } },
      select: { show: true, left: 0, top: 0, width: 0, height: 0 },
      hooks: {
        drawClear: [under],
        draw: [over],
        setSelect: [
          (u) => {
            if (u.select.width < 4) return;
            const from = u.posToVal(u.select.left, 'x');
            const to = u.posToVal(u.select.left + u.select.width, 'x');
            u.setSelect({ left: 0, top: 0, width: 0, height: 0 }, false);
            // A drag that reaches the last reading leaves the window open at the end, so it follows the run.
            const openEnd = to >= frame.xMax - (frame.xMax - frame.xMin) * 0.01;
            onWindow(Math.max(0, from), openEnd ? null : to);
          },
        ],
      },
    },
    [[], [], []],
    mainEl,
  );

  const residual = new uPlot(
    {
      width: 800, height: 130,
      legend: { show: false },
      scales: { x: { time: false, auto: false }, y: { auto: false } },
      axes: [axis('', 28), {
        ...axis('residual', 70),
        // Zero and one tick each way, at a round value: the strip is short, its scale must still read.
        splits: (_u, _i, min, max) => {
          const m = Math.max(Math.abs(min), Math.abs(max)) * 0.8;
          if (!(m > 0)) return [0];
          const p = Math.pow(10, Math.floor(Math.log10(m)));
          const r = Math.floor(m / p) * p;
          return [-r, 0, r];
        },
      }],
      series: [{}, dots(PALETTE.residual, 3)],
      cursor: { sync: { key: 'rateline-run' }, drag: { x: false, y: false }, points: { show: false } },
      hooks: {
        draw: [
          (u) => {
            const y0 = u.valToPos(0, 'y', true);
            u.ctx.save();
            u.ctx.strokeStyle = PALETTE.ink;
            u.ctx.lineWidth = devicePixelRatio || 1;
            u.ctx.beginPath();
            u.ctx.moveTo(u.bbox.left, y0);
            u.ctx.lineTo(u.bbox.left + u.bbox.width, y0);
            u.ctx.stroke();
            u.ctx.restore();
          },
        ],
      },
    },
    [[], []],
    residualEl,
  );

  return {
    draw(input) {
      last = input;
      const columns = Math.max(50, Math.round(main.bbox.width / (devicePixelRatio || 1)));
      frame = builder.build({ ...input, columns }, frame);
      // Say what time zero is: mixing when it was set, else just the first reading.
      main.axes[0]!.label = input.timeZero_s === null ? 't from the first reading / s (Mixed sets t = 0)' : 't after mixing / s';
      main.axes[1]!.label = input.view === 'absorbance' ? `A${input.wavelength_nm ? ` at ${input.wavelength_nm} nm` : ''}` : input.view === 'ln' ? 'ln(A − A∞)' : '1 / (A − A∞)';
      main.batch(() => {
        main.setData([frame.x, frame.inWindow, frame.outside] as uPlot.AlignedData, false);
        main.setScale('x', { min: frame.xMin, max: frame.xMax });
        main.setScale('y', { min: frame.yMin, max: frame.yMax });
      });
      const rm = frame.residualMax > 0 ? frame.residualMax * 1.25 : 0.01;
      residual.batch(() => {
        residual.setData([frame.x, frame.residual] as uPlot.AlignedData, false);
        residual.setScale('x', { min: frame.xMin, max: frame.xMax });
        residual.setScale('y', { min: -rm, max: rm });
      });
      return frame;
    },
    resize(width, mainHeight, residualHeight) {
      main.setSize({ width, height: mainHeight });
      residual.setSize({ width, height: residualHeight });
    },
    setTextScale(scale) {
      if (scale === textScale) return;
      textScale = scale;
      // uPlot keeps each font as [css text, device px, css px] and rebuilds the first two from the
      // third when the pixel ratio changes; the same event makes it re-measure with the new sizes.
      type Font = [string, number, number];
      for (const u of [main, residual]) {
        for (const a of u.axes as unknown as { font: Font; labelFont: Font; labelSize: number }[]) {
          a.font[2] = AXIS_PX * scale;
          a.labelFont[2] = AXIS_PX * scale;
          a.labelSize = Math.round(LABEL_SIZE * scale);
        }
      }
      window.dispatchEvent(new CustomEvent('dppxchange'));
    },
  };
}

const CURVE_STYLE: Record<CurveModel, { color: string; dash: number[] }> = {
  zero: { color: PALETTE.zero, dash: [10, 6] },
  first: { color: PALETTE.first, dash: [] },
  second: { color: PALETTE.second, dash: [3, 4] },
  nth: { color: PALETTE.nth, dash: [14, 4, 3, 4] },
};
export { CURVE_STYLE };

function drawCurves(u: uPlot, input: ChartInput, frame: ChartFrame, px: number): void {
  const a = input.analysis;
  if (!a) return;
  const chosen = a.drivingModel;
  const ctx = u.ctx;
  const x0 = Math.max(u.bbox.left, u.valToPos(frame.windowFrom, 'x', true));
  const x1 = Math.min(u.bbox.left + u.bbox.width, u.valToPos(frame.windowTo, 'x', true));
  for (const model of CURVE_MODELS) {
    const p = curveParameters(a, model, frame.firstInWindow_s);
    if (!p) continue;
    const style = CURVE_STYLE[model];
    ctx.strokeStyle = style.color;
    ctx.lineWidth = (model === chosen ? 3 : 1.5) * px;
    ctx.setLineDash(style.dash.map((d) => d * px));
    ctx.beginPath();
    let pen = false;
    // One evaluation every two device pixels: smooth at any zoom, a few hundred per curve.
    for (let x = x0; x <= x1 + 0.5; x += 2 * px) {
      const t = u.posToVal(Math.min(x, x1), 'x', true);
      const v = viewValue(input.view, curveAbsorbance(p, t), frame.baseline, a.direction === 'rising');
      if (v === null || !Number.isFinite(v)) { pen = false; continue; }
      const y = u.valToPos(v, 'y', true);
      if (pen) ctx.lineTo(x, y); else ctx.moveTo(x, y);
      pen = true;
    }
    ctx.stroke();
  }
  ctx.setLineDash([]);
}

function drawOutliers(u: uPlot, input: ChartInput, frame: ChartFrame, px: number): void {
  const a = input.analysis;
  if (!a || a.outliers.length === 0) return;
  const ctx = u.ctx;
  const zero = input.timeZero_s ?? 0;
  ctx.strokeStyle = PALETTE.outlier;
  ctx.lineWidth = 2 * px;
  for (const fed of a.outliers) {
    // The analyzer counts from the first reading at or after time zero.
    const i = fed + frame.firstFedIndex;
    if (i >= input.readings.count) continue;
    const v = viewValue(input.view, input.readings.absorbance[i]!, frame.baseline, input.analysis?.direction === 'rising');
    if (v === null) continue;
    const x = u.valToPos(input.readings.time_s[i]! - zero, 'x', true);
    const y = u.valToPos(v, 'y', true);
    ctx.beginPath();
    ctx.arc(x, y, 7 * px, 0, 2 * Math.PI);
    ctx.stroke();
  }
}

function drawMarks(u: uPlot, input: ChartInput, px: number): void {
  const ctx = u.ctx;
  ctx.font = `${Math.round(13 * textScale) * px}px system-ui, sans-serif`;
  // uPlot leaves the axis text settings on the context; the labels start at the line.
  ctx.textAlign = 'left';
  ctx.textBaseline = 'alphabetic';
  ctx.fillStyle = PALETTE.mark;
  ctx.strokeStyle = PALETTE.mark;
  ctx.lineWidth = 1.5 * px;
  const zero = input.timeZero_s ?? 0;
  input.marks.forEach((m, k) => {
    if (m.at_s === null) return;
    // Marks are stamped on the run clock; the chart's axis is time after mixing.
    const x = u.valToPos(m.at_s - zero, 'x', true);
    ctx.setLineDash([4 * px, 4 * px]);
    ctx.beginPath();
    ctx.moveTo(x, u.bbox.top);
    ctx.lineTo(x, u.bbox.top + u.bbox.height);
    ctx.stroke();
    ctx.setLineDash([]);
    ctx.fillText(`${k + 1}${m.note ? ' ' + m.note.slice(0, 24) : ''}`, x + 4 * px, u.bbox.top + (14 + 16 * (k % 3)) * px);
  });
}
