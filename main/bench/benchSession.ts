/**
 * What the parts of the bench service share: the state the screen is shown, the run
 * (readings, clock, live analysis), its record, the one source, the outbox that paces
 * what goes to the screen, and the queue in which requests (and stops the service
 * decides on itself) run one at a time, in order.
 */
import {
  CONTRACT_VERSION, type BenchState, type BridgeEvent, type RejectCounts,
} from '../bridge/contract';
import type { BenchDeps } from './benchDependencies';
import { Outbox } from './outbox';
import { SpectrumWaiters } from './peakOffer';
import { RecordWriter } from './recordWriter';
import { Refusal, oneLine } from './refusal';
import { RunData, analyzerOptions } from './runData';
import { sourceLabel } from './runNaming';
import { emptyRejectCounts } from '../../acquisition/sources/sourceStatus';
import { SourceSlot } from './sourceSlot';

export type Listener = (event: BridgeEvent) => void;

/** Why a run on the bench stops. */
export type BenchStopReason = 'user' | 'sourceEnded' | 'error';

const DEFAULT_ANALYSIS = { targetHalfLives: 3, precision: 0.05, weighted: true, robust: true };

export class BenchSession {
  readonly listeners = new Set<Listener>();
  readonly now_ms: () => number;
  readonly run: RunData;
  readonly record: RecordWriter;
  readonly outbox: Outbox;
  readonly source = new SourceSlot();
  readonly spectra = new SpectrumWaiters();
  readonly state: BenchState;
  /** A replayed record's time zero (device time), held until this run's clock has its origin. */
  pendingMixedDevice_s: number | null = null;
  replayPath: string | null = null;
  /** Blank lines the source's events put into the record (a counts device's reference). */
  blanksRecorded = 0;
  /** Whether this run's first reading was looked at for an instrument already part-way through its run. */
  lateStartChecked = true;
  lastRejected: { reason: keyof RejectCounts; line: string } | null = null;
  /** The request queue: each request, and each stop the service decides on, waits for the one before. */
  busy: Promise<unknown> = Promise.resolve();

  constructor(
    readonly deps: BenchDeps,
    private readonly stopRun: (reason: BenchStopReason, detail: string) => Promise<void>,
  ) {
    this.now_ms = deps.now_ms ?? (() => performance.now());
    this.run = new RunData(deps.createAnalyzer, this.now_ms);
    this.record = new RecordWriter((message, detail) => {
      this.warn(message);
      this.stopSoon('error', detail);
    });
    this.outbox = new Outbox({
      flushReadings: (from, to) => this.emit(this.run.batch(this.state.runId ?? '', from, to)),
      analyse: () => this.analyse(),
      flushOther: () => {
        if (this.lastRejected) this.emit({ type: 'rejected', counts: { ...this.state.rejected }, ...this.lastRejected });
      },
    }, this.now_ms);
    this.state = {
      contractVersion: CONTRACT_VERSION, host: deps.host, phase: 'idle',
      source: { kind: 'simulated', speed: deps.defaultSpeed },
      sourceLabel: sourceLabel({ kind: 'simulated', speed: deps.defaultSpeed }), demo: true,
      sourceStatus: null, wavelength_nm: null, blankTaken: false, runId: null, pointCount: 0, timeZero_s: null,
      sampleDetails: {}, fitWindow: { from_s: null, to_s: null }, analysisOptions: { ...DEFAULT_ANALYSIS },
      recordPath: null, dataDir: deps.dataDir, rejected: emptyRejectCounts(), readingRate_perSecond: null,
    };
  }

  /** Stops the run once the requests already queued are done (the source ended, the record failed). */
  stopSoon(reason: BenchStopReason, detail: string): void {
    this.busy = this.busy.then(() => this.stopRun(reason, detail)).then(() => this.changed(), () => undefined);
  }

  notWhileRunning(what: string): void {
    if (this.state.phase === 'running') throw new Refusal(`cannot ${what} during a run; stop the run first.`);
  }

  /** A new analyzer over every point kept since time zero: the fits follow a changed window at once, no data is deleted. */
  rebuildAnalyzer(): void {
    this.run.rebuild(analyzerOptions(this.state.analysisOptions, this.state.fitWindow));
    if (this.state.runId) this.outbox.requestAnalysis();
  }

  snapshot(): BenchState {
    return structuredClone({
      ...this.state, timeZero_s: this.state.runId ? this.run.timeZero_s : null,
      pointCount: this.run.count, readingRate_perSecond: this.run.rate(),
    });
  }

  /** Sends the screen the state as it is now, and returns it. */
  changed(): BenchState {
    const state = this.snapshot();
    this.emit({ type: 'state', state });
    return state;
  }

  warn(message: string): void {
    this.emit({ type: 'warning', message: message.slice(0, 1000), at: new Date().toISOString() });
  }

  emit(event: BridgeEvent): void {
    for (const l of this.listeners) {
      try { l(event); } catch { /* a broken listener must not stop the run */ }
    }
  }

  private analyse(): void {
    const runId = this.state.runId;
    if (!runId) return;
    try {
      const result = this.run.result();
      if (result) this.emit({ type: 'analysis', runId, atCount: this.run.count, result });
    } catch (err) {
      this.warn(`the analysis failed on this run (${oneLine(err)}); the readings are still recorded.`);
    }
  }
}
