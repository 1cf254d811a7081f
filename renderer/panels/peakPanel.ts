/**
 * Finding the measuring wavelength: one spectrum of the sample from the instrument,
 * drawn small with its absorbance maximum marked, and the maximum offered as the
 * wavelength to measure at. The search runs in the bench service; this only asks,
 * draws, and passes the answer on to the wavelength setting.
 */
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';
import type { PeakOffer } from '../../main/bridge/contract';
import type { BenchActions } from '../benchActions';
import { h, setHidden, setText } from '../elements';
import type { ScreenState, Store } from '../store';
import { PALETTE } from './palette';

export interface PeakPanel {
  element: HTMLElement;
  render(state: ScreenState): void;
}

const FONT = '12px system-ui, sans-serif';

export function createPeakPanel(store: Store, actions: BenchActions, onWavelength: (nm: number) => void): PeakPanel {
  const find = h('button', { type: 'button', class: 'small-button', 'data-testid': 'find-peak' }, 'Find the peak');
  const hint = h('span', { class: 'small' }, 'from one spectrum of the sample');
  const chartEl = h('div', { class: 'peak-chart', 'data-testid': 'peak-chart' });
  const sentence = h('p', { class: 'peak-sentence', 'data-testid': 'peak-sentence', role: 'status' });
  const caution = h('p', { class: 'advice-early', role: 'note' });
  const use = h('button', { type: 'button', class: 'small-button primary', 'data-testid': 'use-peak' }, 'Use it');
  const done = h('p', { class: 'small', 'data-testid': 'peak-done' });
  let plot: uPlot | null = null;
  let drawn: PeakOffer | null = null;

  find.addEventListener('click', async () => {
    store.update((d) => { d.peak = { offer: null, problem: null, waiting: true, accepted_nm: null }; });
    const r = await actions.ask({ type: 'findPeak' });
    store.update((d) => { d.peak = { offer: r.ok ? r.value : null, problem: r.ok ? null : r.error, waiting: false, accepted_nm: null }; });
  });
  use.addEventListener('click', async () => {
    const nm = store.get().peak.offer?.suggested_nm;
    if (nm == null) return;
    if (await actions.send({ type: 'setWavelength', wavelength_nm: nm })) {
      onWavelength(nm);
      store.update((d) => { d.peak.accepted_nm = nm; });
    }
  });

  const draw = (offer: PeakOffer): void => {
    const x = offer.wavelengths_nm;
    const y = offer.absorbance;
    const width = Math.max(200, Math.floor(chartEl.clientWidth || element.clientWidth - 16 || 240));
    const peak = offer.peak;
    const mark = (u: uPlot): void => {
      if (!peak) return;
      const px = devicePixelRatio || 1;
      const cx = u.valToPos(peak.wavelength_nm, 'x', true);
      const cy = u.valToPos(peak.absorbance, 'y', true);
      const { top, height } = u.bbox;
      u.ctx.save();
      u.ctx.strokeStyle = PALETTE.outlier;
      u.ctx.lineWidth = 1.5 * px;
      u.ctx.setLineDash([4 * px, 3 * px]);
      u.ctx.beginPath();
      u.ctx.moveTo(cx, top);
      u.ctx.lineTo(cx, top + height);
      u.ctx.stroke();
      u.ctx.setLineDash([]);
      u.ctx.beginPath();
      u.ctx.arc(cx, cy, 4 * px, 0, 2 * Math.PI);
      u.ctx.stroke();
      u.ctx.restore();
    };
    const axis = (label: string, size: number): uPlot.Axis => ({
      label, stroke: PALETTE.ink, font: FONT, labelFont: FONT, size, labelSize: 16,
      grid: { stroke: PALETTE.grid, width: 1 }, ticks: { stroke: PALETTE.grid, width: 1 },
      values: (_u, splits) => splits.map((v) => String(Number(v.toPrecision(6))).replace('-', '−')),
    });
    plot?.destroy();
    plot = new uPlot({
      width, height: 150, legend: { show: false }, cursor: { show: false },
      scales: { x: { time: false }, y: { range: (_u, lo, hi) => [Math.min(0, lo), hi > 0 ? hi * 1.08 : 1] } },
      axes: [axis('Wavelength / nm', 34), axis('A', 44)],
      series: [{}, { stroke: PALETTE.first, width: 1.5, points: { show: true, size: 3, fill: PALETTE.first, stroke: PALETTE.first } }],
      hooks: { draw: [mark] },
    }, [x, y], chartEl);
    drawn = offer;
  };

  const element = h('div', { class: 'peak-finder', 'aria-label': 'Find the absorbance maximum' },
    h('div', { class: 'button-row' }, find, hint), chartEl, sentence, caution, h('div', { class: 'button-row' }, use), done);

  return {
    element,
    render(state) {
      const p = state.peak;
      find.disabled = state.busy || state.bench?.phase === 'connecting';
      const offer = p.offer;
      if (offer && offer !== drawn) draw(offer);
      setHidden(chartEl, !offer);
      setText(sentence, p.waiting ? 'Taking a spectrum of the sample…' : p.problem ?? offer?.sentence ?? '');
      setHidden(sentence, !p.waiting && !p.problem && !offer);
      setText(caution, offer?.caution ?? '');
      setHidden(caution, !offer?.caution);
      const nm = offer?.suggested_nm ?? null;
      setText(use, nm === null ? 'Use it' : `Use ${nm.toFixed(1)} nm`);
      setHidden(use, nm === null || p.accepted_nm !== null);
      use.disabled = state.busy;
      const recorded = offer?.recorded ? ' The spectrum is in the run record.' : '';
      setText(done, p.accepted_nm !== null ? `Measuring wavelength set to ${p.accepted_nm.toFixed(1)} nm.${recorded}` : offer ? recorded.trim() : '');
      setHidden(done, !done.textContent);
    },
  };
}
