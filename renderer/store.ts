/**
 * The screen's one store: every piece of state the run screen draws, changed only
 * through immer recipes so that each change makes a new state object and a panel
 * can tell by reference whether its part moved. The readings themselves live in a
 * ReceivedReadings held by the state (a class instance, which immer neither drafts nor
 * freezes) and the state's `pointCount` moves when it grows.
 */
import { produce, type Draft } from 'immer';
import type {
  AnalysisResultView, BenchState, PeakOffer, BridgeEvent, RejectReason, SourceStatus,
} from '../main/bridge/contract';
import { ReceivedReadings } from './receivedReadings';

export type ChartView = 'absorbance' | 'ln' | 'reciprocal';
export type LinkState = 'connecting' | 'open' | 'lost';

export interface ScreenMessage {
  id: number;
  level: 'info' | 'warning' | 'error';
  text: string;
}

export interface RunMark {
  at_s: number | null;
  note: string;
}

export interface ScreenState {
  link: LinkState;
  bench: BenchState | null;
  runId: string | null;
  readings: ReceivedReadings;
  /** Readings held for the current run (readings.count when last stored). */
  pointCount: number;
  analysis: AnalysisResultView | null;
  /** Readings the analysis had seen when it was made. */
  analysisAtCount: number;
  sourceStatus: SourceStatus | null;
  rejected: Partial<Record<RejectReason, number>>;
  lastRejected: { reason: RejectReason; line: string } | null;
  recordPath: string | null;
  recordOpen: boolean;
  view: ChartView;
  marks: RunMark[];
  messages: ScreenMessage[];
  /** A request is on its way (buttons wait for its answer). */
  busy: boolean;
  /** The last spectrum asked for and the wavelength it offers, or the sentence why there is none. */
  peak: { offer: PeakOffer | null; problem: string | null; waiting: boolean; accepted_nm: number | null };
}

export function initialState(): ScreenState {
  return {
    link: 'connecting',
    bench: null,
    runId: null,
    readings: new ReceivedReadings(),
    pointCount: 0,
    analysis: null,
    analysisAtCount: 0,
    sourceStatus: null,
    rejected: {},
    lastRejected: null,
    recordPath: null,
    recordOpen: false,
    view: 'absorbance',
    marks: [],
    messages: [],
    busy: false,
    peak: { offer: null, problem: null, waiting: false, accepted_nm: null },
  };
}

export type Listener = (state: ScreenState, previous: ScreenState) => void;

export interface Store {
  get(): ScreenState;
  update(recipe: (draft: Draft<ScreenState>) => void): void;
  subscribe(listener: Listener): () => void;
}

export function createStore(initial: ScreenState = initialState()): Store {
  let state = initial;
  const listeners = new Set<Listener>();
  return {
    get: () => state,
    update(recipe) {
      const previous = state;
      state = produce(state, recipe);
      if (state !== previous) for (const l of listeners) l(state, previous);
    },
    subscribe(listener) {
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
  };
}

let messageId = 0;
const MAX_MESSAGES = 6;

export function addMessage(draft: Draft<ScreenState>, level: ScreenMessage['level'], text: string): void {
  draft.messages.push({ id: ++messageId, level, text });
  if (draft.messages.length > MAX_MESSAGES) draft.messages.splice(0, draft.messages.length - MAX_MESSAGES);
}

/** A new run (or none): drop what the screen held of the last one. */
function startRun(draft: Draft<ScreenState>, runId: string | null): void {
  draft.runId = runId;
  (draft.readings as ReceivedReadings).clear();
  draft.pointCount = 0;
  draft.analysis = null;
  draft.analysisAtCount = 0;
  draft.marks = [];
}

/** Apply one event pushed by the bench service. `wall_ms` is the page's clock at arrival. */
export function applyEvent(store: Store, event: BridgeEvent, wall_ms: number): void {
  store.update((d) => {
    switch (event.type) {
      case 'state': {
        const s = event.state;
        const was = d.bench?.phase;
        // A new source connected: the last run's curve, k and advice leave the screen (on a replay
        // not yet started they would give the answer away), and so do the errors of earlier
        // connections. A connection that fails leaves the last run in view.
        const connectedAnew = was !== undefined && was !== s.phase && s.phase === 'connected' && was !== 'running';
        if (s.runId !== d.runId || connectedAnew) startRun(d, s.runId);
        if (connectedAnew) {
          d.messages = d.messages.filter((m) => m.level !== 'error');
          d.lastRejected = null;
          d.peak = { offer: null, problem: null, waiting: false, accepted_nm: d.peak.accepted_nm };
        }
        d.bench = s;
        d.sourceStatus = s.sourceStatus;
        d.rejected = s.rejected;
        if (s.recordPath) d.recordPath = s.recordPath;
        break;
      }
      case 'readings': {
        if (event.runId !== d.runId) startRun(d, event.runId);
        (d.readings as ReceivedReadings).append(event, wall_ms);
        d.pointCount = (d.readings as ReceivedReadings).count;
        break;
      }
      case 'analysis': {
        if (event.runId !== d.runId) break; // a late result of a run already left
        d.analysis = event.result;
        d.analysisAtCount = event.atCount;
        break;
      }
      case 'sourceStatus':
        d.sourceStatus = event.status;
        break;
      case 'rejected':
        d.rejected = event.counts;
        d.lastRejected = { reason: event.reason, line: event.line };
        break;
      case 'warning':
        addMessage(d, 'warning', event.message);
        break;
      case 'record':
        d.recordPath = event.path;
        d.recordOpen = event.status === 'open';
        break;
    }
  });
}
