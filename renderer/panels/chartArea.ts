/**
 * The chart column: the view switch (absorbance, ln, reciprocal), the live chart and
 * its residuals strip, a legend in words, and the fit window line with its reset.
 */
import type { BenchActions } from '../benchActions';
import type { ChartFrame } from '../chartData';
import { h, setText } from '../elements';
import { CURVE_MODELS } from '../fitCurves';
import type { ChartView, ScreenState, Store } from '../store';
import { PALETTE } from './palette';
import { createRunChart, CURVE_STYLE } from './runChart';

const VIEW_WORDS: Record<ChartView, string> = { absorbance: 'A against t', ln: 'ln(A − A∞) against t', reciprocal: '1/(A − A∞) against t' };
const VIEW_CAPTION: Record<ChartView, string> = {
  absorbance: 'Absorbance against time after mixing, with each order’s fitted curve.',
  ln: 'ln(A − A∞) against t: a straight line means first order (A∞ from the first-order fit).',
  reciprocal: '1/(A − A∞) against t: a straight line means second order (A∞ from the second-order fit).',
};
const MODEL_WORDS = { zero: 'zero order', first: 'first order', second: 'second order', nth: 'n-th order' } as const;

export interface ChartArea {
  element: HTMLElement;
  /** Draw a frame; returns what was drawn. */
  draw(state: ScreenState): ChartFrame;
  resize(): void;
  setTextScale(scale: number): void;
}

function legendSwatch(color: string, dash: number[]): HTMLElement {
  const s = h('span', { class: 'swatch' });
  s.style.borderTopColor = color;
  s.style.borderTopStyle = dash.length ? 'dashed' : 'solid';
  return s;
}

export function createChartArea(store: Store, actions: BenchActions, onResize: () => void): ChartArea {
  const tabs = h('div', { class: 'view-tabs', role: 'tablist', 'aria-label': 'Chart view' });
  const tabButtons = new Map<ChartView, HTMLButtonElement>();
  for (const v of ['absorbance', 'ln', 'reciprocal'] as ChartView[]) {
    const b = h('button', { type: 'button', role: 'tab', class: 'tab' }, VIEW_WORDS[v]);
    b.addEventListener('click', () => store.update((d) => { d.view = v; }));
    tabButtons.set(v, b);
    tabs.append(b);
  }
  const caption = h('p', { class: 'view-caption small', 'data-testid': 'view-caption' });
  const mainEl = h('div', { class: 'chart-main', 'data-testid': 'chart' });
  mainEl.style.overflow = 'hidden';
  const residualEl = h('div', { class: 'chart-residual' });
  const chart = createRunChart(mainEl, residualEl, (from_s, to_s) => {
    void actions.send({ type: 'setFitWindow', window: { from_s, to_s } });
  });
  const dot = h('span', { class: 'dot' }); dot.style.background = PALETTE.ink;
  const paleDot = h('span', { class: 'dot' }); paleDot.style.background = PALETTE.pale;
  const ring = h('span', { class: 'ring' }); ring.style.borderColor = PALETTE.outlier;
  const legend = h('div', { class: 'legend' },
    h('span', {}, dot, ' readings in the fit'), h('span', {}, paleDot, ' left out of the fit'), h('span', {}, ring, ' outlier'),
    ...CURVE_MODELS.map((m) => h('span', {}, legendSwatch(CURVE_STYLE[m].color, CURVE_STYLE[m].dash), ` ${MODEL_WORDS[m]}`)),
    h('span', { class: 'small' }, '(the thick curve is the order the results show)'));
  const windowText = h('span', { 'data-testid': 'fit-window' });
  const whole = h('button', { type: 'button', class: 'small-button' }, 'Fit all readings');
  whole.addEventListener('click', () => void actions.send({ type: 'setFitWindow', window: { from_s: null, to_s: null } }));
  const drawnText = h('span', { class: 'small', 'data-testid': 'drawn' });
  const hiddenText = h('span', { class: 'small' });
  const element = h('section', { class: 'panel chart-area', 'aria-label': 'Run chart' },
    h('div', { class: 'chart-head' }, tabs, drawnText),
    caption,
    mainEl,
    h('p', { class: 'residual-label small' }, 'Residuals (A − fit) of the order shown in the results, inside the fit window'),
    residualEl, legend,
    h('div', { class: 'window-line' }, windowText, ' ', whole, ' ', hiddenText,
      h('span', { class: 'small hint' }, 'Drag across the chart to choose the fit window. No reading is deleted.')));

  // The two charts share what the panel's other rows leave free, seven parts to three.
  let sized = '';
  const resize = () => {
    const w = Math.max(320, Math.floor(mainEl.clientWidth));
    let fixed = 0;
    for (const child of Array.from(element.children)) {
      if (child === mainEl || child === residualEl) continue;
      const cs = getComputedStyle(child);
      fixed += (child as HTMLElement).offsetHeight + parseFloat(cs.marginTop) + parseFloat(cs.marginBottom);
    }
    const pad = parseFloat(getComputedStyle(element).paddingTop) + parseFloat(getComputedStyle(element).paddingBottom);
    const free = Math.max(260, element.clientHeight - pad - fixed - 4);
    const key = `${w}x${free}`;
    if (key === sized) return; // a resize of our own making: nothing to do
    sized = key;
    chart.resize(w, Math.round(free * 0.7), Math.round(free * 0.3));
  };
  new ResizeObserver(() => { resize(); onResize(); }).observe(element);

  return {
    element,
    resize,
    setTextScale: (scale) => chart.setTextScale(scale),
    draw(state) {
      for (const [v, b] of tabButtons) b.setAttribute('aria-selected', String(v === state.view));
      setText(caption, VIEW_CAPTION[state.view]);
      const frame = chart.draw({
        readings: state.readings,
        timeZero_s: state.bench?.timeZero_s ?? null,
        analysis: state.analysis,
        fitWindow: state.bench?.fitWindow ?? { from_s: null, to_s: null },
        view: state.view,
        marks: state.marks,
        wavelength_nm: state.bench?.wavelength_nm ?? null,
      });
      const w = state.bench?.fitWindow;
      const inWin = state.analysis?.pointsInWindow;
      setText(windowText, `Fit window: ${w?.from_s != null ? `${w.from_s.toFixed(0)} s` : 'first reading'} to ${w?.to_s != null ? `${w.to_s.toFixed(0)} s` : 'the latest reading'}${inWin != null ? ` (${inWin} of ${state.analysis!.points} readings)` : ''}.`);
      setText(drawnText, `${state.pointCount} readings${frame.drawn < frame.represented ? `, drawn as ${frame.drawn} points (min and max per pixel column)` : ''}`);
      setText(hiddenText, frame.hidden ? `${frame.hidden} drawn points at or below A∞ cannot be shown in this view.` : '');
      return frame;
    },
  };
}
