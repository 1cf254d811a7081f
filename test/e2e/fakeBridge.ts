/**
 * A stand-in for the bench service inside the page, for the redraw benchmark only:
 * it answers every request with a running state and lets the benchmark push events
 * straight into the screen (no socket, no JSON), so what is timed is the screen's
 * own work. The end-to-end tests use the real `rateline serve`, never this.
 */
import type { AnalysisResultView, BenchState, BridgeEvent } from '../../main/bridge/contract';
import { emptyRejectCounts } from '../../acquisition/sources/sourceStatus';

export interface FakeHandle {
  emit(event: BridgeEvent): void;
  state: BenchState;
}

declare global {
  interface Window {
    __ratelineFake?: FakeHandle;
  }
}

export function benchState(pointCount: number): BenchState {
  return {
    contractVersion: 1, host: 'web', phase: 'running', source: { kind: 'simulated', speed: 1000 },
    sourceLabel: 'simulated instrument (demo data)', demo: true,
    sourceStatus: { kind: 'connected', detail: 'simulated instrument' },
    wavelength_nm: 630, blankTaken: true, runId: 'bench-run', pointCount, timeZero_s: null,
    sampleDetails: { sample: 'brilliant blue FCF (demo)', operator: 'bench', temperature_C: 25 },
    fitWindow: { from_s: null, to_s: null },
    analysisOptions: { targetHalfLives: 3, precision: 0.05, weighted: true, robust: true },
    recordPath: null, dataDir: '/tmp', readingRate_perSecond: 1,
    rejected: emptyRejectCounts(),
  };
}

/** Installed with addInitScript before the page's own scripts: window.rateline is the fake. */
export function installFakeBridge(state: BenchState): void {
  const listeners = new Set<(e: BridgeEvent) => void>();
  const handle = {
    state,
    emit(event: BridgeEvent) { for (const l of listeners) l(event); },
  };
  window.__ratelineFake = handle;
  window.rateline = {
    async request(req: { type: string }) {
      if (req.type === 'markEvent') return { ok: true, value: { at_s: 0 } };
      if (req.type === 'listPorts') return { ok: true, value: { ports: [] } };
      if (req.type === 'listRecords') return { ok: true, value: { records: [] } };
      return { ok: true, value: handle.state };
    },
    onEvent(l: (e: BridgeEvent) => void) { listeners.add(l); return () => listeners.delete(l); },
  } as never;
}

/** A result of the shape the analyzer sends, for a first-order decay (demo numbers, DEMO.md). */
export function demoAnalysis(points: number, duration_s: number): AnalysisResultView {
  const model = (k: number | null, a0: number, aInf: number | null) => ({
    k, kStdErr: k === null ? null : k * 0.01, kCI95: k === null ? null : ([k * 0.98, k * 1.02] as [number, number]),
    a0, a0StdErr: 0.001, aInf, aInfStdErr: 0.0005, aInfFixed: false, aInfAtBound: null, halfLife_s: k ? Math.LN2 / k : null, halfLifeStdErr_s: 2,
    aicc: -1000, rss: 0.001, chiSquare: points, dof: points - 3, runsTestP: 0.5, converged: true, warnings: [] as string[],
  });
  return {
    points, duration_s, pointsInWindow: points, window: { from_s: null, to_s: null },
    verdict: { order: 'first', weights: { zero: 0, first: 0.97, second: 0.03 }, reason: 'first order is clearly the best of the three', fractionalOrder: null, likelyCauses: [], effectOnK: null },
    models: {
      zero: model(4e-4, 0.6, null), first: model(3.5e-3, 0.65, 0.005), second: model(1.2e-2, 0.66, 0.0),
      nth: { ...model(3.6e-3, 0.65, 0.005), order: 1.01, orderStdErr: 0.02 },
    },
    drivingModel: 'first', direction: 'falling', halfLivesElapsed: 2.4, fractionConverted: 0.81, targetHalfLives: 3,
    stop: {
      state: 'settled', suggested: false, atTime_s: null, predictedAt_s: 600, predictedAtStdErr_s: 10,
      earlyStopPossible: true, kRelCI95Now: 0.02, kRelCI95AtTarget: 0.015, plausibleModels: ['first'], reason: 'k has settled within ±5 %',
    },
    outliers: [], leftOut: { backwards: 0, nonFinite: 0, saturated: 0, outOfRange: 0 }, initialRate: null,
    rateConvention: 'rate = −d[A]/dt = k[A]^n', units: { time: 's', signal: 'A', k: { zero: 'AU s^-1', first: 's^-1', second: 'AU^-1 s^-1', nth: 'AU^(1-n) s^-1' } },
    warnings: [], uncertaintyNote: 'The CI covers measurement noise only.',
  };
}
