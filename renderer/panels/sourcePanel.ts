/**
 * Source and instrument: where the readings come from (the simulated instrument,
 * a serial port at a baud rate, or a recorded run played back), the wavelength,
 * the blank, and how the line is doing: connection status, reading rate and the
 * lines the parser turned away, counted by reason.
 */
import { BAUD_RATES, DEFAULT_BAUD, type RejectReason, type SourceChoice } from '../../main/bridge/contract';
import type { BenchActions } from '../benchActions';
import { h, setHidden, setText } from '../elements';
import { addMessage, type ScreenState, type Store } from '../store';
import { createPeakPanel } from './peakPanel';

const REJECT_WORDS: Record<RejectReason, string> = {
  checksum: 'bad checksum', malformed: 'malformed', overlong: 'too long', nonFinite: 'not a number',
  timeBackwards: 'time went backwards', unitChange: 'unit changed', binaryNoise: 'line noise', unknownType: 'unknown kind',
  timeJump: 'time leapt ahead', absorbanceRange: 'absorbance out of range',
};

export interface SourcePanel {
  element: HTMLElement;
  render(state: ScreenState): void;
}

function radio(name: string, value: string, label: string): { wrap: HTMLLabelElement; input: HTMLInputElement } {
  const input = h('input', { type: 'radio', name, value });
  return { wrap: h('label', { class: 'choice' }, input, ' ', label), input };
}

export function createSourcePanel(store: Store, actions: BenchActions): SourcePanel {
  const kinds = { simulated: radio('source', 'simulated', 'Simulated (demo)'), serial: radio('source', 'serial', 'Serial port'), replay: radio('source', 'replay', 'Recorded run') };
  const speed = h('input', { type: 'number', min: 0.1, max: 10000, step: 'any', value: 1, 'aria-label': 'Simulation speed' });
  const simRow = h('label', { class: 'field' }, 'Speed (× real time) ', speed);
  // A field with suggestions rather than a closed list: a pty pair or a port the system
  // does not enumerate can still be typed in.
  const portList = h('datalist', { id: 'rateline-ports' });
  const port = h('input', { type: 'text', list: 'rateline-ports', placeholder: '/dev/ttyUSB0', maxlength: 4096, 'aria-label': 'Serial port', class: 'port-input' });
  const portsFound = h('span', { class: 'small' });
  const baud = h('select', { 'aria-label': 'Baud rate' }, ...BAUD_RATES.map((b) => h('option', { value: b, selected: b === DEFAULT_BAUD }, String(b))));
  const refreshPorts = h('button', { type: 'button', class: 'small-button' }, 'Refresh');
  const serialRow = h('div', { class: 'field-group' },
    h('label', { class: 'field' }, 'Port ', port, portList, ' ', refreshPorts), portsFound, h('label', { class: 'field' }, 'Baud ', baud));
  const record = h('select', { 'aria-label': 'Recorded run' });
  const replaySpeed = h('select', { 'aria-label': 'Replay speed' },
    h('option', { value: '1' }, 'as recorded (1×)'), h('option', { value: '10' }, '10×'), h('option', { value: '100' }, '100×'), h('option', { value: 'max' }, 'as fast as possible'));
  const replayRow = h('div', { class: 'field-group' }, h('label', { class: 'field' }, 'Record ', record), h('label', { class: 'field' }, 'Speed ', replaySpeed));
  const use = h('button', { type: 'button', class: 'small-button primary', 'data-testid': 'use-source' }, 'Use and connect');
  const disconnect = h('button', { type: 'button', class: 'small-button' }, 'Disconnect');
  const sourceLabel = h('p', { class: 'small source-label' });
  const status = h('p', { class: 'status-line', 'data-testid': 'source-status', role: 'status' });
  const rate = h('p', { class: 'small' });
  const wavelength = h('input', { type: 'number', min: 190, max: 1100, step: 0.1, value: 630, 'aria-label': 'Wavelength in nm', 'data-testid': 'wavelength' });
  const setWl = h('button', { type: 'button', class: 'small-button' }, 'Set');
  const peak = createPeakPanel(store, actions, (nm) => { wavelength.value = String(nm); });
  const blank = h('button', { type: 'button', class: 'small-button' }, 'Take blank');
  const blankState = h('span', { class: 'small' });
  const blankHint = h('p', { class: 'advice-early', role: 'note' });
  const rejectList = h('ul', { class: 'rejects', 'data-testid': 'rejects' });
  const lastReject = h('p', { class: 'small mono' });

  const chosenKind = (): SourceChoice['kind'] => (kinds.serial.input.checked ? 'serial' : kinds.replay.input.checked ? 'replay' : 'simulated');
  const showRows = () => {
    const k = chosenKind();
    setHidden(simRow, k !== 'simulated');
    setHidden(serialRow, k !== 'serial');
    setHidden(replayRow, k !== 'replay');
  };
  const loadPorts = async () => {
    const r = await actions.send({ type: 'listPorts' });
    if (!r) return;
    portList.replaceChildren(...r.ports.map((p) => h('option', { value: p.path }, p.manufacturer ? `${p.path} (${p.manufacturer})` : p.path)));
    setText(portsFound, r.ports.length ? `${r.ports.length} port${r.ports.length > 1 ? 's' : ''} found; pick one or type a path.` : 'No ports found; type the path of the port.');
    if (!port.value && r.ports[0]) port.value = r.ports[0].path;
  };
  const loadRecords = async () => {
    const r = await actions.send({ type: 'listRecords' });
    if (!r) return;
    record.replaceChildren(...(r.records.length ? r.records.map((x) => h('option', { value: x.name }, x.name)) : [h('option', { value: '' }, 'no recorded runs yet')]));
  };
  for (const k of Object.values(kinds)) k.input.addEventListener('change', () => {
    showRows();
    if (chosenKind() === 'serial') void loadPorts();
    if (chosenKind() === 'replay') void loadRecords();
  });
  refreshPorts.addEventListener('click', () => void loadPorts());
  use.addEventListener('click', async () => {
    const k = chosenKind();
    let source: SourceChoice;
    if (k === 'serial') {
      if (!port.value.trim()) { store.update((d) => { addMessage(d, 'error', 'Serial port: type or pick the port first (Refresh lists the ones found).'); }); return; }
      source = { kind: 'serial', path: port.value.trim(), baud: Number(baud.value) };
    } else if (k === 'replay') {
      if (!record.value) { store.update((d) => { addMessage(d, 'error', 'Recorded run: there is no record to play yet; record a run first.'); }); return; }
      source = { kind: 'replay', file: record.value, speed: replaySpeed.value === 'max' ? 'max' : Number(replaySpeed.value) };
    } else {
      const s = Number(speed.value);
      source = { kind: 'simulated', speed: Number.isFinite(s) && s >= 0.1 ? Math.min(s, 10000) : 1 };
    }
    if (await actions.send({ type: 'chooseSource', source })) await actions.send({ type: 'connect' });
  });
  disconnect.addEventListener('click', () => void actions.send({ type: 'disconnect' }));
  setWl.addEventListener('click', () => void actions.send({ type: 'setWavelength', wavelength_nm: Number(wavelength.value) }));
  blank.addEventListener('click', () => void actions.send({ type: 'takeBlank' }));

  const element = h('section', { class: 'panel source', 'aria-label': 'Source and instrument' },
    h('h2', {}, 'Source and instrument'),
    h('div', { class: 'choices' }, kinds.simulated.wrap, kinds.serial.wrap, kinds.replay.wrap),
    simRow, serialRow, replayRow,
    h('div', { class: 'button-row' }, use, disconnect),
    sourceLabel, status, rate,
    h('div', { class: 'field-group' }, h('label', { class: 'field' }, 'Wavelength / nm ', wavelength, ' ', setWl)),
    peak.element,
    h('div', { class: 'button-row' }, blank, blankState), blankHint,
    h('h3', {}, 'Lines turned away'), rejectList, lastReject);

  let synced = false;
  return {
    element,
    render(state) {
      peak.render(state);
      const b = state.bench;
      if (b && !synced) {
        // Show the service's current choice once; after that the fields are the user's.
        synced = true;
        kinds[b.source.kind].input.checked = true;
        if (b.source.kind === 'simulated' && b.source.speed) speed.value = String(b.source.speed);
        if (b.source.kind === 'serial') { port.value = b.source.path; baud.value = String(b.source.baud); }
        if (b.wavelength_nm !== null) wavelength.value = String(b.wavelength_nm);
        showRows();
      }
      setText(sourceLabel, b ? `Now: ${b.sourceLabel}${b.demo && !/demo/i.test(b.sourceLabel) ? ' (demo data)' : ''}` : '');
      setText(status, statusWords(state));
      // Counted on the screen from the batches as they arrive, so it is live; the service's
      // figure rides on its state messages, which come only when something changes.
      const r = b?.phase === 'running' ? state.readings.readingsPerWallSecond() ?? b.readingRate_perSecond : null;
      setText(rate, `Reading rate: ${r == null ? '—' : `${r.toFixed(r < 10 ? 2 : 0)} per second`}`);
      const counts = state.sourceStatus?.kind === 'connected' && state.sourceStatus.identity?.sends === 'counts';
      setText(blankHint, counts && !b?.blankTaken ? 'This instrument sends raw detector counts: fill the cuvette with the solvent and take a blank before starting.' : '');
      setHidden(blankHint, !(counts && !b?.blankTaken));
      setText(blankState, b?.blankTaken ? 'Blank taken' : 'No blank taken yet');
      const running = b?.phase === 'running';
      use.disabled = running || state.busy;
      disconnect.disabled = running || !b || b.phase === 'idle';
      const entries = Object.entries(state.rejected).filter(([, n]) => (n ?? 0) > 0) as [RejectReason, number][];
      const text = entries.map(([k, n]) => `${REJECT_WORDS[k]}: ${n}`).join('|');
      if (rejectList.dataset.text !== text) {
        rejectList.dataset.text = text;
        rejectList.replaceChildren(...(entries.length ? entries.map(([k, n]) => h('li', {}, `${REJECT_WORDS[k]}: ${n}`)) : [h('li', {}, 'none')]));
      }
      setText(lastReject, state.lastRejected ? `last: ${REJECT_WORDS[state.lastRejected.reason]}: “${state.lastRejected.line}”` : '');
    },
  };
}

export function statusWords(state: ScreenState): string {
  const s = state.sourceStatus;
  if (!s) return 'Connection: none yet';
  // The source's last word is history once the service has let it go.
  if (state.bench?.phase === 'idle' && s.kind !== 'error') return 'Not connected';
  switch (s.kind) {
    case 'connecting': return `Connecting: ${s.detail}`;
    case 'connected': return `Connected: ${s.identity ? `${s.identity.maker} ${s.identity.model} (${s.identity.serial})` : s.detail}`;
    case 'disconnected': return `Disconnected: ${s.detail}`;
    case 'reconnecting': return `Reconnecting (attempt ${s.attempt}, in ${Math.round(s.delay_ms / 1000)} s): ${s.detail}`;
    case 'stale': return `No readings for ${Math.round(s.sinceLastReading_ms / 1000)} s: ${s.detail}`;
    case 'ended': return `Ended: ${s.detail}`;
    case 'error': return `Error: ${s.message}`;
  }
}
