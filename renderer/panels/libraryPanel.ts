/**
 * The run library: every record in the runs folder in one table (date, sample, operator,
 * conditions, readings, k with its interval, the verdict), searchable, newest first. A
 * damaged record is a row with its reason, never a gap. A run is opened on the run
 * screen by playing it back (the recorded-run source).
 */
import type { LibraryEntryView } from '../../main/bridge/contract';
import type { BenchActions } from '../benchActions';
import { h, setText } from '../elements';
import { ciHalfWidth, formatPlusMinus, prettyUnit } from '../numberFormat';
import type { Store } from '../store';
import { createStudyPanel } from './studyPanel';

const VERDICT_WORDS: Record<string, string> = {
  zero: 'zero order', first: 'first order', second: 'second order', fractional: 'not an integer order',
  noSimpleLaw: 'no simple rate law', undecided: 'undecided',
};

export interface LibraryPanel {
  element: HTMLElement;
  open(): void;
}

/** One line of text a search is matched against. */
export function searchText(e: LibraryEntryView): string {
  return [e.name, e.started, e.sample, e.operator, e.conditions, e.temperature_C === null ? '' : `${e.temperature_C} °C`,
    e.verdict ? VERDICT_WORDS[e.verdict] ?? e.verdict : '', e.demo ? 'demo' : '', e.problem ?? ''].join(' ').toLowerCase();
}

export function matches(e: LibraryEntryView, query: string): boolean {
  const text = searchText(e);
  return query.toLowerCase().split(/\s+/).filter(Boolean).every((w) => text.includes(w));
}

function when(iso: string | null, fallback: string): string {
  if (!iso) return fallback.slice(0, 16).replace('T', ' ');
  // The record's own wall-clock start, as written (local time with its offset).
  return iso.slice(0, 16).replace('T', ' ');
}

export function kWords(e: LibraryEntryView): string {
  if (e.k === null) return '—';
  const unit = e.kUnit ? ` ${prettyUnit(e.kUnit)}` : '';
  return `${formatPlusMinus(e.k, ciHalfWidth(e.kCI95))}${unit}`;
}

export function createLibraryPanel(store: Store, actions: BenchActions): LibraryPanel {
  const search = h('input', { type: 'search', placeholder: 'sample, operator, reagent, date, order…', 'aria-label': 'Search the runs', class: 'library-search' });
  const count = h('span', { class: 'small', role: 'status' });
  const close = h('button', { type: 'button', class: 'small-button' }, 'Close');
  const refresh = h('button', { type: 'button', class: 'small-button' }, 'Refresh');
  const body = h('tbody');
  const study = createStudyPanel(actions);
  const table = h('table', { class: 'library-table', 'data-testid': 'library' },
    h('thead', {}, h('tr', {}, ...['', 'Started', 'Sample', 'Operator', 'Conditions', 'Readings', 'k (95 % CI)', 'Order', ''].map((c) => h('th', { scope: 'col' }, c)))),
    body);
  const element = h('section', { class: 'library-overlay', role: 'dialog', 'aria-modal': 'true', 'aria-label': 'Run library', hidden: true },
    h('div', { class: 'library-card panel' },
      h('div', { class: 'library-head' }, h('h2', {}, 'Run library'), search, count, refresh, close),
      h('p', { class: 'small' }, 'Every record in the runs folder; a record copied into the folder appears here. k and the order are the analysis of the whole record.'),
      h('div', { class: 'library-scroll' }, table, study.element)));
  let entries: LibraryEntryView[] = [];
  const ticked = new Set<string>();

  const show = () => {
    const q = search.value.trim();
    const shown = q ? entries.filter((e) => matches(e, q)) : entries;
    setText(count, `${shown.length} of ${entries.length} runs`);
    body.replaceChildren(...shown.map((e) => {
      if (e.problem) {
        return h('tr', { class: 'library-problem' },
          h('td', {}, ''), h('td', {}, when(e.started, e.modified)), h('td', { colspan: 6 }, `Cannot be listed: ${e.problem}`), h('td', {}, ''));
      }
      const play = h('button', { type: 'button', class: 'small-button' }, 'Play back');
      play.addEventListener('click', async () => {
        if (await actions.send({ type: 'chooseSource', source: { kind: 'replay', file: e.name, speed: 'max' } })) {
          await actions.send({ type: 'connect' });
          element.hidden = true;
        }
      });
      const sample = `${e.sample ?? '(no sample named)'}${e.demo ? ' · demo' : ''}${e.notice ? ' · recovered' : ''}`;
      const tick = h('input', { type: 'checkbox', 'aria-label': `In the study: ${e.name}` });
      tick.checked = ticked.has(e.name);
      tick.addEventListener('change', () => {
        if (tick.checked) ticked.add(e.name); else ticked.delete(e.name);
        study.setRuns([...ticked]);
      });
      return h('tr', { title: e.name },
        h('td', {}, tick), h('td', {}, when(e.started, e.modified)), h('td', {}, sample), h('td', {}, e.operator ?? ''),
        h('td', {}, [e.conditions, e.temperature_C === null ? '' : `${e.temperature_C} °C`].filter(Boolean).join(', ')),
        h('td', { class: 'num' }, String(e.readings)), h('td', { class: 'num' }, kWords(e)),
        h('td', {}, e.verdict ? VERDICT_WORDS[e.verdict] ?? e.verdict : '—'), h('td', {}, play));
    }));
  };
  const load = async () => {
    setText(count, 'Reading the runs folder…');
    const r = await actions.send({ type: 'listLibrary' });
    if (!r) return;
    entries = r.entries;
    for (const n of [...ticked]) if (!entries.some((e) => e.name === n && !e.problem)) ticked.delete(n);
    study.setRuns([...ticked]);
    show();
  };
  search.addEventListener('input', show);
  refresh.addEventListener('click', () => void load());
  const hide = () => { element.hidden = true; };
  close.addEventListener('click', hide);
  element.addEventListener('keydown', (e) => { if (e.key === 'Escape') { e.stopPropagation(); hide(); } });
  void store;
  return {
    element,
    open() {
      element.hidden = false;
      search.focus();
      void load();
    },
  };
}
