/**
 * The run screen's entry: connect the bridge (Electron's preload, or the web host's
 * socket), build the panels, feed the store from the service's events, and redraw
 * at most once per display frame.
 */
import './style.css';
import { socketBridge } from '../main/bridge/client';
import { SOCKET_PATH, TOKEN_PARAM, type RatelineBridge } from '../main/bridge/contract';
import { benchActions } from './benchActions';
import { h } from './elements';
import { frameScheduler } from './frameScheduler';
import { createChartArea } from './panels/chartArea';
import { createControlBar, SHORTCUTS } from './panels/controlBar';
import { createProgressPanel } from './panels/progressPanel';
import { createResultsPanel } from './panels/resultsPanel';
import { createSamplePanel } from './panels/samplePanel';
import { createDemoBanner, createMarksPanel, createMessages, createSafetyNote } from './panels/sidePanels';
import { createSourcePanel } from './panels/sourcePanel';
import { createLibraryPanel } from './panels/libraryPanel';
import { applyEvent, createStore, type ScreenState } from './store';

declare global {
  interface Window {
    rateline?: RatelineBridge;
  }
}

const store = createStore();

function openBridge(): RatelineBridge {
  if (window.rateline) {
    store.update((d) => { d.link = 'open'; });
    return window.rateline;
  }
  // The token stays with this page: out of the address bar (and history) at once, never in a cookie
  // (those go to every port on 127.0.0.1). The tab's session storage, which belongs to this origin
  // (port included) alone, keeps it for a reload.
  const address = new URL(location.href);
  const token = address.searchParams.get(TOKEN_PARAM) ?? sessionToken() ?? '';
  sessionToken(token);
  address.searchParams.delete(TOKEN_PARAM);
  history.replaceState(null, '', address.pathname + address.search + address.hash);
  const scheme = location.protocol === 'https:' ? 'wss:' : 'ws:';
  const bridge = socketBridge(`${scheme}//${location.host}${SOCKET_PATH}`, token, (u) => {
    const ws = new WebSocket(u);
    ws.addEventListener('close', () => store.update((d) => { d.link = 'lost'; }));
    return ws;
  });
  bridge.ready.then(
    () => store.update((d) => { d.link = 'open'; }),
    () => store.update((d) => { d.link = 'lost'; }),
  );
  return bridge;
}

/** The token kept for a reload of this tab: read it, or keep `value`. Storage may be refused; then a reload needs the address again. */
function sessionToken(value?: string): string | null {
  try {
    if (value === undefined) return sessionStorage.getItem('rateline-token');
    if (value !== '') sessionStorage.setItem('rateline-token', value);
  } catch {
    // No storage in this browser: nothing kept.
  }
  return null;
}

const bridge = openBridge();
const actions = benchActions(bridge, store);

const controls = createControlBar(store, actions, window);
const banner = createDemoBanner();
const messages = createMessages((id) => store.update((d) => { d.messages = d.messages.filter((m) => m.id !== id); }));
const source = createSourcePanel(store, actions);
const sample = createSamplePanel(store, actions);
const progress = createProgressPanel(actions);
const results = createResultsPanel();
const marks = createMarksPanel(store, actions);
const safety = createSafetyNote();
let redraw = (): void => {};
const chart = createChartArea(store, actions, () => redraw());

const linkText = h('span', { class: 'link', role: 'status' });
const library = createLibraryPanel(store, actions);
const libraryButton = h('button', { type: 'button', class: 'small-button text-size' }, 'Run library');
libraryButton.addEventListener('click', () => library.open());
// Large text for a projector or the back of the room: the page's rem sizes and the chart's
// axis text together, kept for this browser.
const largeText = h('button', { type: 'button', class: 'small-button text-size', 'aria-pressed': 'false' }, 'Large text');
function showLargeText(on: boolean): void {
  document.documentElement.classList.toggle('large-text', on);
  largeText.setAttribute('aria-pressed', String(on));
  chart.setTextScale(on ? 1.45 : 1);
  try { localStorage.setItem('rateline-large-text', on ? '1' : '0'); } catch { /* no storage: the choice lasts this page */ }
}
largeText.addEventListener('click', () => showLargeText(largeText.getAttribute('aria-pressed') !== 'true'));
const shortcutText = h('span', { class: 'shortcuts small' },
  `Keys: ${SHORTCUTS.start.toUpperCase()} start · ${SHORTCUTS.stop.toUpperCase()} stop · ${SHORTCUTS.mark.toUpperCase()} mark · ${SHORTCUTS.mixed.toUpperCase()} mixed (t = 0)`);
document.body.replaceChildren(
  h('header', { class: 'topbar' },
    h('div', { class: 'brand' }, h('span', { class: 'brand-name' }, 'Rateline'), h('span', { class: 'brand-sub' }, 'absorbance kinetics')),
    controls.element,
    h('div', { class: 'topbar-right' }, linkText, shortcutText, h('div', { class: 'button-row' }, libraryButton, largeText))),
  banner.element,
  messages.element,
  h('main', { class: 'layout' },
    h('aside', { class: 'column setup', 'aria-label': 'Set-up' }, source.element, safety.element, sample.element),
    h('div', { class: 'column centre' }, chart.element),
    h('aside', { class: 'column readout', 'aria-label': 'Readout' }, progress.element, results.element, marks.element)),
  library.element,
);

// The chart redraws only when something it shows has moved; the text panels check their own parts.
let drawn: { count: number; analysis: unknown; view: unknown; window: unknown; zero: unknown; marks: unknown; sized: number } | null = null;
let sizeVersion = 0;
function draw(): void {
  const s: ScreenState = store.get();
  performance.mark('rateline:frame-start');
  controls.render(s);
  banner.render(s);
  messages.render(s);
  source.render(s);
  sample.render(s);
  progress.render(s);
  results.render(s);
  marks.render(s);
  safety.render(s);
  const key = { count: s.pointCount, analysis: s.analysis, view: s.view, window: s.bench?.fitWindow, zero: s.bench?.timeZero_s, marks: s.marks, sized: sizeVersion };
  if (!drawn || Object.keys(key).some((k) => key[k as keyof typeof key] !== drawn![k as keyof typeof key])) {
    performance.mark('rateline:chart-start');
    chart.draw(s);
    performance.measure('rateline:chart', 'rateline:chart-start');
    drawn = key;
  }
  linkText.textContent = s.link === 'open' ? 'Service: connected' : s.link === 'lost' ? 'Service: LOST, reload the page' : 'Service: connecting…';
  performance.measure('rateline:frame', 'rateline:frame-start');
}

try { if (localStorage.getItem('rateline-large-text') === '1') showLargeText(true); } catch { /* no storage */ }

const scheduler = frameScheduler(draw, (cb) => requestAnimationFrame(cb));
redraw = () => { sizeVersion++; scheduler.request(); };
store.subscribe(() => scheduler.request());
bridge.onEvent((event) => applyEvent(store, event, performance.now()));
scheduler.request();
void actions.send({ type: 'getState' });
