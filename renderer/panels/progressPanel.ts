/**
 * How far the run has gone toward its target (in half-lives), when it will get
 * there, and the stop advice, in words. The bar is a picture of the same number the
 * large numeral states; the advice headline is text, its colour only a second cue.
 */
import { adviceWords, finishWords } from '../adviceText';
import type { BenchActions } from '../benchActions';
import { h, setAttr, setHidden, setText } from '../elements';
import { formatPercent } from '../numberFormat';
import type { ScreenState } from '../store';

export interface ProgressPanel {
  element: HTMLElement;
  render(state: ScreenState): void;
}

export function createProgressPanel(actions: BenchActions): ProgressPanel {
  // The stopping rule is the user's to set: how far (half-lives) and how precise (k's 95 % CI).
  const goalInput = h('input', { type: 'number', min: 0.5, max: 10, step: 0.5, value: 3, 'aria-label': 'Target in half-lives' });
  const precisionInput = h('input', { type: 'number', min: 0.1, max: 50, step: 0.5, value: 5, 'aria-label': 'Precision of k in percent' });
  const apply = h('button', { type: 'button', class: 'small-button' }, 'Apply');
  apply.addEventListener('click', () => void actions.send({
    type: 'setAnalysisOptions',
    options: { targetHalfLives: Number(goalInput.value), precision: Number(precisionInput.value) / 100 },
  }));
  const rule = h('div', { class: 'stop-rule small' },
    h('label', {}, 'Stop at ', goalInput, ' half-lives'), h('label', {}, ' with k to ±', precisionInput, ' %'), ' ', apply);
  const numeral = h('span', { class: 'big-number', 'data-testid': 'half-lives' }, '—');
  const target = h('span', { class: 'big-unit' }, 'of 3 half-lives');
  const fill = h('div', { class: 'progress-fill' });
  const bar = h('div', { class: 'progress-bar', role: 'progressbar', 'aria-valuemin': 0, 'aria-label': 'Half-lives elapsed' }, fill);
  const converted = h('p', { class: 'small' });
  const finish = h('p', { class: 'finish' });
  const headline = h('p', { class: 'advice-headline', 'data-testid': 'advice' }, 'Not running');
  const detail = h('p', { class: 'advice-detail' });
  const early = h('p', { class: 'advice-early' });
  const advice = h('div', { class: 'advice', role: 'status', 'aria-live': 'polite' }, headline, detail, early);

  const element = h('section', { class: 'panel progress', 'aria-label': 'Progress and advice' },
    h('h2', {}, 'Progress'),
    h('p', { class: 'big' }, numeral, ' ', target),
    bar, converted, finish, advice, rule);
  let synced = false;

  return {
    element,
    render(state) {
      const o = state.bench?.analysisOptions;
      if (o && !synced) {
        synced = true;
        goalInput.value = String(o.targetHalfLives);
        precisionInput.value = String(+(o.precision * 100).toFixed(2));
      }
      const a = state.analysis;
      const running = state.bench?.phase === 'running';
      const goal = a?.targetHalfLives ?? state.bench?.analysisOptions.targetHalfLives ?? 3;
      const done = a?.halfLivesElapsed ?? null;
      setText(numeral, done === null ? '—' : done.toFixed(done < 10 ? 2 : 1));
      setText(target, `of ${goal} half-lives`);
      const f = done === null ? 0 : Math.max(0, Math.min(1, done / goal));
      const width = `${(f * 100).toFixed(1)}%`;
      if (fill.style.width !== width) fill.style.width = width;
      setAttr(bar, 'aria-valuemax', String(goal));
      setAttr(bar, 'aria-valuenow', done === null ? null : done.toFixed(2));
      setText(converted, a?.fractionConverted != null
        ? `${formatPercent(a.fractionConverted)} converted (${a.drivingModel} order), target ${formatPercent(1 - Math.pow(2, -goal), 1)}`
        : 'Fraction converted: not known yet.');
      const now = state.readings.lastTime_s();
      const zero = state.bench?.timeZero_s ?? 0;
      setText(finish, finishWords(a, now === null ? null : now - zero, state.readings.runSecondsPerWallSecond(), running));
      const w = adviceWords(a, running);
      setText(headline, w.headline);
      setText(detail, w.detail);
      setText(early, w.earlyStop ?? '');
      setHidden(early, !w.earlyStop);
      setAttr(advice, 'data-tone', w.tone);
    },
  };
}
