/**
 * The fitted results: k and the half-life with their 95 % confidence intervals and
 * units, the order verdict with its evidence (the Akaike weights of the three
 * integer orders, as numbers and bars), the fitted order n, the outliers, warnings,
 * and the reminder that the interval covers measurement noise only.
 */
import type { AnalysisResultView } from '../../main/bridge/contract';
import { h, setHidden, setText } from '../elements';
import { ciHalfWidth, formatInterval, formatPlusMinus, prettyUnit, roundWithUncertainty, superscript } from '../numberFormat';
import type { ScreenState } from '../store';
import { CURVE_STYLE } from './runChart';

function verdictWords(v: AnalysisResultView['verdict']): string {
  if (v.order === 'undecided') return 'Order: undecided so far';
  if (v.order === 'noSimpleLaw') return 'Order: the readings do not follow a simple rate law';
  if (v.order === 'fractional') return `Order: about ${v.fractionalOrder === null ? '?' : v.fractionalOrder.toFixed(1)}, not an integer order`;
  return `Order: ${ORDER_WORDS[v.order]}`;
}

const ORDER_WORDS = { zero: 'zero order', first: 'first order', second: 'second order', nth: 'n-th order', undecided: 'undecided' } as const;

export interface ResultsPanel {
  element: HTMLElement;
  render(state: ScreenState): void;
}

function weightRow(name: 'zero' | 'first' | 'second') {
  const value = h('span', { class: 'weight-value' }, '—');
  const fill = h('span', { class: 'weight-fill' });
  fill.style.background = CURVE_STYLE[name].color;
  const row = h('div', { class: 'weight-row' }, h('span', { class: 'weight-name' }, ORDER_WORDS[name]), h('span', { class: 'weight-bar' }, fill), value);
  return { row, value, fill };
}

export function createResultsPanel(): ResultsPanel {
  const kValue = h('span', { class: 'big-number', 'data-testid': 'k' }, '—');
  const kUnit = h('span', { class: 'big-unit' });
  const kModel = h('p', { class: 'small' });
  const kCI = h('p', { class: 'small' });
  const halfLife = h('p', { class: 'result-line', 'data-testid': 'half-life' });
  const verdict = h('p', { class: 'verdict', 'data-testid': 'verdict' });
  const reason = h('p', { class: 'small' });
  const rows = { zero: weightRow('zero'), first: weightRow('first'), second: weightRow('second') };
  const nth = h('p', { class: 'result-line' });
  const outliers = h('p', { class: 'result-line' });
  const warnings = h('ul', { class: 'warnings' });
  const note = h('p', { class: 'note' });

  const element = h('section', { class: 'panel results', 'aria-label': 'Results' },
    h('h2', {}, 'Rate constant'),
    h('p', { class: 'big' }, kValue, ' ', kUnit), kModel, kCI, note, halfLife,
    h('h3', {}, 'Order'), verdict,
    h('div', { class: 'weights', 'aria-label': 'Akaike weights' }, h('p', { class: 'small' }, 'Evidence (Akaike weights, sum 1):'), rows.zero.row, rows.first.row, rows.second.row),
    reason, nth, outliers, warnings);

  let shown: AnalysisResultView | null | undefined;
  return {
    element,
    render(state) {
      const a = state.analysis;
      if (a === shown) return;
      shown = a;
      if (!a) {
        setText(kValue, '—'); setText(kUnit, ''); setText(kModel, 'No fit yet.'); setText(kCI, ''); setText(halfLife, '');
        setText(verdict, 'Order: not known yet'); setText(reason, ''); setText(nth, ''); setText(outliers, '');
        warnings.replaceChildren(); setText(note, '');
        for (const r of Object.values(rows)) { setText(r.value, '—'); r.fill.style.width = '0%'; }
        return;
      }
      const model = a.drivingModel;
      const decided = a.verdict.order === model || a.verdict.order === 'fractional';
      const m = a.models[model];
      // The mantissa large, the power of ten with the unit beneath: it reads across a room.
      const unc = ciHalfWidth(m.kCI95) ?? m.kStdErr;
      if (m.k === null) { setText(kValue, '—'); setText(kUnit, prettyUnit(a.units.k[model])); }
      else {
        const r = roundWithUncertainty(m.k, unc ?? NaN);
        setText(kValue, r.uncertainty ? `${r.value} ± ${r.uncertainty}` : r.value);
        setText(kUnit, `${r.exponent ? `× 10${superscript(r.exponent)} ` : ''}${prettyUnit(a.units.k[model])}`);
      }
      setText(kModel, !decided
        ? `${ORDER_WORDS[model]}, assumed while the order is undecided; ± is the 95 % CI half-width`
        : `${ORDER_WORDS[model]} fit; ± is the 95 % CI half-width`);
      setText(kCI, `95 % CI: ${formatInterval(m.kCI95)} ${prettyUnit(a.units.k[model])}`);
      setText(halfLife, m.halfLife_s !== null
        ? `Half-life: ${formatPlusMinus(m.halfLife_s, m.halfLifeStdErr_s !== null ? 1.96 * m.halfLifeStdErr_s : null)} s (95 %)${model === 'first' ? '' : ', at the starting signal'}`
        : 'Half-life: not available yet');
      setText(verdict, verdictWords(a.verdict));
      setText(reason, a.verdict.reason);
      for (const name of ['zero', 'first', 'second'] as const) {
        const w = a.verdict.weights[name];
        setText(rows[name].value, w === null ? '—' : w.toFixed(2));
        rows[name].fill.style.width = `${((w ?? 0) * 100).toFixed(1)}%`;
      }
      const n = a.models.nth;
      setText(nth, n.order !== null
        ? `Fitted order n = ${formatPlusMinus(n.order, n.orderStdErr !== null ? 1.96 * n.orderStdErr : null)} (95 %)`
        : 'Fitted order n: not available yet');
      setText(outliers, a.outliers.length
        ? `${a.outliers.length} reading${a.outliers.length > 1 ? 's' : ''} down-weighted as outlier${a.outliers.length > 1 ? 's' : ''} (ringed in red on the chart); none deleted.`
        : 'No outliers down-weighted.');
      const all = [...a.warnings, ...m.warnings];
      warnings.replaceChildren(...all.map((w) => h('li', {}, w)));
      setHidden(warnings, all.length === 0);
      setText(note, a.uncertaintyNote);
    },
  };
}
