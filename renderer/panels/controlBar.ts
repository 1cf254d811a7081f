/**
 * The run controls along the top: start, stop, mark an event with a note, and
 * "mixed" (time zero is now). Each has a one-key shortcut printed on its button;
 * shortcuts are ignored while the cursor is in a text field, so typing a note
 * never stops a run.
 */
import type { BenchPhase } from '../../main/bridge/contract';
import type { BenchActions } from '../benchActions';
import { h, setText } from '../elements';
import type { ScreenState, Store } from '../store';

export const SHORTCUTS = Object.freeze({ start: 's', stop: 'x', mark: 'm', mixed: 'z' });

function button(label: string, key: string, cls: string): HTMLButtonElement {
  return h('button', { class: `control ${cls}`, type: 'button', 'aria-keyshortcuts': key.toUpperCase() },
    h('span', { class: 'control-label' }, label), h('kbd', {}, key.toUpperCase()));
}

export interface ControlBar {
  element: HTMLElement;
  render(state: ScreenState): void;
}

export function canStart(phase: BenchPhase | undefined): boolean {
  return phase === 'idle' || phase === 'connected' || phase === 'stopped';
}

export function createControlBar(store: Store, actions: BenchActions, target: EventTarget): ControlBar {
  const start = button('Start', SHORTCUTS.start, 'start');
  const stop = button('Stop', SHORTCUTS.stop, 'stop');
  const mark = button('Mark', SHORTCUTS.mark, 'mark');
  const mixed = button('Mixed: t = 0', SHORTCUTS.mixed, 'mixed');
  const note = h('input', { type: 'text', class: 'mark-note', placeholder: 'note for the next mark', maxlength: 200, 'aria-label': 'Note for the next mark' });
  const phaseText = h('span', { class: 'phase', role: 'status' });

  // On a screen not yet connected, Start would connect and record at once from whatever source
  // happens to be chosen: it asks first, naming the source.
  const confirmText = h('p', { class: 'confirm-text', id: 'start-confirm-text' });
  const confirmGo = h('button', { type: 'button', class: 'small-button primary' }, 'Connect and record');
  const confirmCancel = h('button', { type: 'button', class: 'small-button' }, 'Cancel');
  const confirmBox = h('div', { class: 'start-confirm', role: 'dialog', 'aria-modal': 'false', 'aria-labelledby': 'start-confirm-text', hidden: true },
    confirmText, h('div', { class: 'button-row' }, confirmGo, confirmCancel));
  const closeConfirm = () => { confirmBox.hidden = true; start.focus(); };
  confirmGo.addEventListener('click', () => { confirmBox.hidden = true; void actions.send({ type: 'start' }); });
  confirmCancel.addEventListener('click', closeConfirm);
  confirmBox.addEventListener('keydown', (e) => { if (e.key === 'Escape') { e.stopPropagation(); closeConfirm(); } });
  const doStart = () => {
    const b = store.get().bench;
    if (b && b.phase === 'idle') {
      confirmText.textContent = `Start a run from ${b.sourceLabel}? Rateline connects to it and starts recording at once.`;
      confirmBox.hidden = false;
      confirmGo.focus();
      return;
    }
    void actions.send({ type: 'start' });
  };
  const doStop = () => void actions.send({ type: 'stop' });
  const doMixed = () => void actions.send({ type: 'mixed' });
  const doMark = async () => {
    const text = note.value.trim();
    note.value = '';
    const r = await actions.send({ type: 'markEvent', note: text });
    if (r) store.update((d) => { d.marks.push({ at_s: r.at_s, note: text }); });
  };
  start.addEventListener('click', doStart);
  stop.addEventListener('click', doStop);
  mark.addEventListener('click', () => void doMark());
  mixed.addEventListener('click', doMixed);
  note.addEventListener('keydown', (e) => {
    if (e.key !== 'Enter') return;
    // The mark is made; the keys (S, X, M, Z) work again at once.
    note.blur();
    void doMark();
  });

  target.addEventListener('keydown', (ev) => {
    const e = ev as KeyboardEvent;
    if (e.ctrlKey || e.metaKey || e.altKey || e.repeat) return;
    const t = e.target as HTMLElement | null;
    if (t && (t.tagName === 'INPUT' || t.tagName === 'TEXTAREA' || t.tagName === 'SELECT' || t.isContentEditable)) return;
    const key = e.key.toLowerCase();
    const b = key === SHORTCUTS.start ? start : key === SHORTCUTS.stop ? stop : key === SHORTCUTS.mark ? mark : key === SHORTCUTS.mixed ? mixed : null;
    if (!b || b.disabled) return;
    e.preventDefault();
    b.click();
  });

  const element = h('div', { class: 'controls' }, start, stop, mixed, h('span', { class: 'mark-group' }, note, mark), phaseText, confirmBox);

  return {
    element,
    render(state) {
      const phase = state.bench?.phase;
      const running = phase === 'running';
      start.disabled = state.busy || !canStart(phase);
      stop.disabled = state.busy || !running;
      mark.disabled = !running;
      mixed.disabled = !running;
      setText(phaseText, phaseWords(state));
    },
  };
}

export function phaseWords(state: ScreenState): string {
  if (state.link === 'lost') return 'Bench service lost: reload the page';
  if (!state.bench) return 'Connecting to the bench service…';
  switch (state.bench.phase) {
    case 'idle': return 'Ready: not connected to an instrument';
    case 'connecting': return state.sourceStatus?.kind === 'error' ? 'Instrument not connected: see the source panel' : 'Connecting to the instrument…';
    case 'connected': return 'Instrument connected: ready to start';
    case 'running': return `Recording: ${state.pointCount} readings`;
    case 'stopped': return `Stopped: ${state.pointCount} readings recorded`;
    case 'error': return 'Instrument error: see the source panel';
  }
}
