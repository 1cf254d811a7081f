/**
 * A study of runs on the screen: the runs ticked in the library combined, by concentration
 * of the excess reagent (the rate law) or by temperature (Arrhenius and Eyring), by the
 * bench service running `rateline combine` itself. Shown: each run's condition and k_obs,
 * the plot the result rests on (ln k_obs against ln[B], or ln k against 1/T, with the
 * fitted line), the command's report word for word, its notes, and saving as a study file.
 */
import type { RequestOf } from '../../main/bridge/contract';
import type { BenchActions } from '../benchActions';
import { h, setText } from '../elements';
import { formatPlusMinus } from '../numberFormat';

export interface StudyPanel {
  element: HTMLElement;
  /** The record names to combine (from the library's ticks). */
  setRuns(names: string[]): void;
}

interface RunRow { label: string; x: number; k_perSecond: number; kStdErr_perSecond: number | null }

const baseName = (p: string) => p.split(/[\\/]/).pop() ?? p;
const SVG = 'http://www.w3.org/2000/svg';
function svg<K extends keyof SVGElementTagNameMap>(tag: K, attrs: Record<string, string | number>, text?: string): SVGElementTagNameMap[K] {
  const el = document.createElementNS(SVG, tag);
  for (const [k, v] of Object.entries(attrs)) el.setAttribute(k, String(v));
  if (text !== undefined) el.textContent = text;
  return el;
}

/** Points and the fitted line in the plane the fit was made in; null when the result has no line. */
export function studyPlot(result: Record<string, unknown>): { xLabel: string; yLabel: string; points: [number, number][]; line: (x: number) => number } | null {
  const runs = (result.runs as RunRow[] | undefined) ?? [];
  if (result.by === 'concentration') {
    const law = result.rateLaw as { order: number; lnKFreeOrder: number } | undefined;
    if (!law) return null;
    return {
      xLabel: 'ln([B] / M)', yLabel: 'ln(k_obs / s⁻¹)',
      points: runs.map((r) => [Math.log(r.x), Math.log(r.k_perSecond)]),
      line: (x) => law.lnKFreeOrder + law.order * x,
    };
  }
  const a = result.arrhenius as { lnPreExponential: number; activationEnergy_kJPerMol: number; inverseTemperature_perK: number[]; lnK: number[] } | undefined;
  if (!a) return null;
  const R = 8.314462618e-3; // kJ mol⁻¹ K⁻¹ (CODATA 2018, exact)
  return {
    xLabel: '1/T / K⁻¹', yLabel: `ln(k / ${String(result.kUnit ?? 's^-1').replace('^-1', '⁻¹')})`,
    points: a.inverseTemperature_perK.map((x, i) => [x, a.lnK[i]!]),
    line: (x) => a.lnPreExponential - (a.activationEnergy_kJPerMol / R) * x,
  };
}

function drawPlot(host: HTMLElement, result: Record<string, unknown>): void {
  const p = studyPlot(result);
  host.replaceChildren();
  if (!p || p.points.length === 0) return;
  const W = 540, H = 300, L = 96, B = 48, T = 12, Rm = 16;
  const xs = p.points.map((q) => q[0]), ys = p.points.map((q) => q[1]);
  let x0 = Math.min(...xs), x1 = Math.max(...xs);
  const pad = (x1 - x0) * 0.12 || Math.abs(x0) * 0.05 || 1;
  x0 -= pad; x1 += pad;
  const yl = [...ys, p.line(x0), p.line(x1)];
  let y0 = Math.min(...yl), y1 = Math.max(...yl);
  const yp = (y1 - y0) * 0.1 || 0.5;
  y0 -= yp; y1 += yp;
  const X = (x: number) => L + ((x - x0) / (x1 - x0)) * (W - L - Rm);
  const Y = (y: number) => H - B - ((y - y0) / (y1 - y0)) * (H - B - T);
  const s = svg('svg', { viewBox: `0 0 ${W} ${H}`, class: 'study-plot', role: 'img', 'aria-label': `${p.yLabel} against ${p.xLabel}` });
  s.append(svg('rect', { x: L, y: T, width: W - L - Rm, height: H - B - T, fill: 'none', stroke: '#d9d3c5' }));
  // Tick labels with as many decimals as the step between ticks needs, so no two read alike.
  const places = (span: number) => Math.max(0, Math.min(8, Math.ceil(-Math.log10(span / 4)) + 1));
  const tick = (v: number, d: number) => v.toFixed(d).replace('-', '−');
  const dx = places(x1 - x0), dy = places(y1 - y0);
  for (let i = 0; i <= 4; i++) {
    const xv = x0 + ((x1 - x0) * i) / 4, yv = y0 + ((y1 - y0) * i) / 4;
    s.append(svg('text', { x: X(xv), y: H - B + 18, 'text-anchor': 'middle', 'font-size': 12 }, tick(xv, dx)));
    s.append(svg('text', { x: L - 6, y: Y(yv) + 4, 'text-anchor': 'end', 'font-size': 12 }, tick(yv, dy)));
  }
  s.append(svg('text', { x: (L + W - Rm) / 2, y: H - 8, 'text-anchor': 'middle', 'font-size': 13, 'font-weight': 'bold' }, p.xLabel));
  s.append(svg('text', { x: 14, y: (T + H - B) / 2, 'text-anchor': 'middle', 'font-size': 13, 'font-weight': 'bold', transform: `rotate(-90 14 ${(T + H - B) / 2})` }, p.yLabel));
  s.append(svg('line', { x1: X(x0), y1: Y(p.line(x0)), x2: X(x1), y2: Y(p.line(x1)), stroke: '#0b6e74', 'stroke-width': 2.5 }));
  for (const [x, y] of p.points) s.append(svg('circle', { cx: X(x), cy: Y(y), r: 5, fill: '#1c2530' }));
  host.append(s);
}

export function createStudyPanel(actions: BenchActions): StudyPanel {
  let names: string[] = [];
  const chosen = h('p', { class: 'small', role: 'status' });
  const by = h('select', { 'aria-label': 'Combine by' }, h('option', { value: 'concentration' }, 'concentration of the excess reagent (rate law)'), h('option', { value: 'temperature' }, 'temperature (Arrhenius, Eyring)'));
  const reagent = h('input', { type: 'text', value: 'hypochlorite', maxlength: 80, 'aria-label': 'Excess reagent' });
  const followed = h('input', { type: 'text', maxlength: 80, placeholder: 'e.g. dye', 'aria-label': 'Followed species' });
  const predict = h('input', { type: 'number', step: 0.1, min: -50, max: 200, 'aria-label': 'Predict k at °C' });
  const combine = h('button', { type: 'button', class: 'small-button primary' }, 'Combine');
  const saveName = h('input', { type: 'text', maxlength: 80, placeholder: 'bleach-series', 'aria-label': 'Study name' });
  const safety = h('textarea', { rows: 2, maxlength: 1000, 'aria-label': 'Safety note for the reagents' });
  const save = h('button', { type: 'button', class: 'small-button' }, 'Combine and save as a study');
  const problem = h('p', { class: 'study-problem', role: 'alert' });
  const table = h('table', { class: 'library-table study-runs', 'data-testid': 'study-runs' });
  const plot = h('div', { class: 'study-plot-host' });
  const report = h('pre', { class: 'study-report', 'data-testid': 'study-report' });
  const notes = h('ul', { class: 'warnings' });
  const element = h('section', { class: 'study', 'aria-label': 'Study of the ticked runs' },
    h('h2', {}, 'Study of the ticked runs'), chosen,
    h('div', { class: 'study-form' },
      h('label', { class: 'field' }, 'By ', by), h('label', { class: 'field' }, 'Excess reagent ', reagent),
      h('label', { class: 'field' }, 'Followed species ', followed), h('label', { class: 'field' }, 'Predict k at (°C) ', predict), combine),
    h('div', { class: 'study-form' }, h('label', { class: 'field' }, 'Study name ', saveName),
      h('label', { class: 'field stacked' }, h('span', {}, 'Safety note for these reagents (kept with the study)'), safety), save),
    problem, h('div', { class: 'study-result' }, h('div', {}, table, plot), report), notes);

  const run = async (saving: boolean) => {
    setText(problem, '');
    if (names.length < 2) { setText(problem, 'Tick two or more runs in the library first.'); return; }
    const req: RequestOf<'combineRuns'> = { type: 'combineRuns', files: names, by: by.value as 'concentration' | 'temperature' };
    if (reagent.value.trim()) req.reagent = reagent.value.trim();
    if (followed.value.trim()) req.followed = followed.value.trim();
    if (predict.value.trim() !== '' && by.value === 'temperature') req.predictAt_C = Number(predict.value);
    if (saving) {
      if (!saveName.value.trim() || !safety.value.trim() || !req.reagent || !req.followed) {
        setText(problem, 'To save the study, give its name, the excess reagent, the followed species and a safety note for the reagents.');
        return;
      }
      req.saveAs = { name: saveName.value.trim(), safetyNote: safety.value.trim() };
    }
    setText(report, 'Combining…');
    const r = await actions.ask(req);
    if (!r.ok) { setText(problem, r.error); setText(report, ''); return; }
    const v = r.value;
    setText(report, v.text);
    notes.replaceChildren(...v.notes.map((n) => h('li', {}, n)));
    const runs = (v.result.runs as RunRow[] | undefined) ?? [];
    const xHead = v.result.by === 'concentration' ? '[B] / M' : 'T / °C';
    table.replaceChildren(h('thead', {}, h('tr', {}, h('th', {}, 'Run'), h('th', {}, xHead), h('th', {}, 'k_obs / s⁻¹ (± SE)'))),
      h('tbody', {}, ...runs.map((x) => h('tr', {}, h('td', {}, baseName(x.label)), h('td', { class: 'num' }, String(x.x)),
        h('td', { class: 'num' }, formatPlusMinus(x.k_perSecond, x.kStdErr_perSecond))))));
    drawPlot(plot, v.result);
  };
  combine.addEventListener('click', () => void run(false));
  save.addEventListener('click', () => void run(true));
  return {
    element,
    setRuns(list) {
      names = list;
      setText(chosen, list.length ? `${list.length} run${list.length > 1 ? 's' : ''} ticked: ${list.join(', ')}` : 'Tick the runs of the study in the table above (two or more).');
    },
  };
}
