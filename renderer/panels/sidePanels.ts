/**
 * The small panels: the demo label and the safety note for the demo chemistry,
 * the list of marks, and the messages line where refused requests and warnings
 * are said in one sentence each.
 */
import type { BenchActions } from '../benchActions';
import { h, setHidden, setText } from '../elements';
import { addMessage, type ScreenState, type Store } from '../store';

/**
 * The caution beside the run belongs to its chemistry. For the demo (brilliant blue FCF and
 * sodium hypochlorite) it is the usual practice for dilute bleach, from memory; for any
 * other run the screen has no note of its own to give and says where the cautions are.
 */
export function createSafetyNote(): Renderable {
  const demo = h('div', {},
    h('h2', {}, 'Safety: the demo chemistry'),
    h('p', {}, 'Sodium hypochlorite (bleach) irritates or burns skin and eyes: wear eye protection and gloves, and work with ventilation.'),
    h('p', {}, 'Household bleach is typically 3–8 % sodium hypochlorite (read the label; it weakens in storage); dilute it before use.'),
    h('p', {}, 'Never mix bleach with acids (chlorine gas) or with ammonia (chloramines); keep its waste out of acidic waste (a thiosulfate quench is common).'),
    h('p', {}, 'On skin, rinse with plenty of water; in the eyes, rinse for at least 15 minutes and get medical help. Food dyes stain.'),
    h('p', { class: 'small' }, 'Common practice; the safety data sheets and your lab’s own rules come first.'));
  const other = h('div', {},
    h('h2', {}, 'Safety'),
    h('p', {}, 'No safety note is given for this run’s reagents: read the safety data sheet of each reagent and follow your lab’s rules before you start.'));
  const element = h('section', { class: 'panel safety', 'aria-label': 'Safety', 'data-testid': 'safety' }, demo, other);
  return {
    element,
    render(state) {
      const isDemo = state.bench?.demo ?? true;
      setHidden(demo, !isDemo);
      setHidden(other, isDemo);
    },
  };
}

export interface Renderable {
  element: HTMLElement;
  render(state: ScreenState): void;
}

export function createDemoBanner(): Renderable {
  const element = h('div', { class: 'demo-banner', role: 'note', 'data-testid': 'demo-banner' },
    'DEMO DATA: the simulated instrument plays an invented run (brilliant blue FCF bleached by hypochlorite); no numbers here were measured.');
  return {
    element,
    render(state) { setHidden(element, !state.bench?.demo); },
  };
}

export function createMarksPanel(store: Store, actions: BenchActions): Renderable {
  const list = h('ol', { class: 'marks' });
  const record = h('p', { class: 'small mono', 'data-testid': 'record-path' });
  const exportCsv = h('button', { type: 'button', class: 'small-button' }, 'Export CSV');
  const openRecord = h('button', { type: 'button', class: 'small-button' }, 'Open a record…');
  exportCsv.addEventListener('click', async () => {
    const r = await actions.send({ type: 'saveExport', format: 'csv' });
    if (r?.path) store.update((d) => addMessage(d, 'info', `Exported the run as CSV to ${r.path}`));
  });
  openRecord.addEventListener('click', () => void actions.send({ type: 'openRecord' }));
  const element = h('section', { class: 'panel marks-panel', 'aria-label': 'Marks and record' },
    h('h2', {}, 'Marks and record'), list, record, h('div', { class: 'button-row' }, exportCsv, openRecord));
  let shown: ScreenState['marks'] | null = null;
  return {
    element,
    render(state) {
      if (state.marks !== shown) {
        shown = state.marks;
        const zero = state.bench?.timeZero_s ?? 0;
        list.replaceChildren(...(state.marks.length
          ? state.marks.map((m) => h('li', {}, `${m.at_s === null ? 'time not known' : `t = ${(m.at_s - zero).toFixed(1)} s`}${m.note ? `: ${m.note}` : ''}`))
          : [h('li', { class: 'small' }, 'No marks yet (M marks the moment, with the note typed beside the button).')]));
      }
      exportCsv.disabled = state.pointCount === 0 || state.busy;
      // A native open dialog exists only in the desktop app; the web host plays records from the runs folder.
      setHidden(openRecord, state.bench?.host !== 'electron');
      const path = state.recordPath ?? state.bench?.recordPath ?? null;
      setText(record, path ? `Record${state.recordOpen ? ' (being written)' : ''}: ${path}` : 'No run record yet.');
    },
  };
}

export function createMessages(dismiss: (id: number) => void): Renderable {
  const element = h('div', { class: 'messages', role: 'alert', 'aria-live': 'assertive' });
  let shown: ScreenState['messages'] | null = null;
  return {
    element,
    render(state) {
      if (state.messages === shown) return;
      shown = state.messages;
      element.replaceChildren(...state.messages.map((m) => {
        const close = h('button', { type: 'button', class: 'dismiss', 'aria-label': 'Dismiss' }, '×');
        close.addEventListener('click', () => dismiss(m.id));
        return h('p', { class: `message ${m.level}` }, h('strong', {}, m.level === 'error' ? 'Not done: ' : m.level === 'warning' ? 'Warning: ' : ''), m.text, ' ', close);
      }));
      setHidden(element, state.messages.length === 0);
    },
  };
}
