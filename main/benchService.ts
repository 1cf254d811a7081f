/**
 * The bench service: owns the source, the analyzer and the run record, and speaks the
 * bridge contract. Host-agnostic: the Electron shell and the loopback web host both
 * only pass requests in and events out. Every request is parsed here (zod) before it
 * acts; a failure is a one-line value, never a throw across the bridge.
 *
 * Analysis runs here, in the main process, never on the screen's thread: the screen is
 * sent readings in batches and results at most 20 times a second.
 */
import { join } from 'node:path';
import type { RunEvent } from '../acquisition/runRecordFormat';
import type { Reading, SourceEvent, SpectrumFrame } from '../acquisition/sourceTypes';
import {
  CONTRACT_VERSION, LIMITS, parseRequest,
  type AnyReply, type BenchState, type BridgeEvent, type BridgeRequest, type RejectCounts, type SampleDetails, type SourceChoice,
} from './bridge/contract';
import type { BenchDeps } from './bench/benchPorts';
import { Outbox } from './bench/outbox';
import { RecordWriter } from './bench/recordWriter';
import { Refusal, oneLine } from './bench/refusal';
import { RunData, analyzerOptions } from './bench/runData';
import { SourceSlot } from './bench/sourceSlot';
import { emptyRejectCounts, newRunId, recordFileName, sourceLabel } from './bench/runNaming';
import { exportCsv } from './bench/runExport';
import { listRecordFiles, resolveRecordName } from './bench/runsFolder';
import { SpectrumWaiters, peakOffer } from './bench/peakOffer';
import { bandMaximum } from '../acquisition/wavelengthChoice';

type Listener = (event: BridgeEvent) => void;

const DEFAULT_ANALYSIS = { targetHalfLives: 3, precision: 0.05, weighted: true, robust: true };

export class BenchService {
  private readonly listeners = new Set<Listener>();
  private readonly now_ms: () => number;
  private readonly run: RunData;
  private readonly record: RecordWriter;
  private readonly outbox: Outbox;
  private readonly source = new SourceSlot();
  private pendingMixedDevice_s: number | null = null;
  private replayPath: string | null = null;
  private lastRejected: { reason: keyof RejectCounts; line: string } | null = null;
  private busy: Promise<unknown> = Promise.resolve();
  private readonly spectra = new SpectrumWaiters();
  private readonly state: BenchState;

  constructor(private readonly deps: BenchDeps) {
    this.now_ms = deps.now_ms ?? (() => performance.now());
    this.run = new RunData(deps.createAnalyzer, this.now_ms);
    this.record = new RecordWriter((message, detail) => {
      this.warn(message);
      this.busy = this.busy.then(() => this.stopRun('error', detail)).then(() => this.changed(), () => undefined);
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

  /** Subscribe to events for the screen; returns the unsubscribe function. */
  subscribe(listener: Listener): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  /**
   * Bring a newly attached screen up to date (a page loaded or reloaded mid-run): the
   * state, every reading of the current run in batches, and the latest result.
   */
  catchUp(listener: Listener): void {
    listener({ type: 'state', state: this.snapshot() });
    const runId = this.state.runId;
    if (!runId) return;
    const n = this.run.count;
    for (let from = 0; from < n; from += LIMITS.maxBatchPoints) listener(this.run.batch(runId, from, Math.min(n, from + LIMITS.maxBatchPoints)));
    if (this.run.analysing) {
      try {
        const result = this.run.result();
        if (result) listener({ type: 'analysis', runId, atCount: n, result });
      } catch {
        // the next throttled result will carry it
      }
    }
  }

  snapshot(): BenchState {
    return structuredClone({
      ...this.state, timeZero_s: this.state.runId ? this.run.timeZero_s : null,
      pointCount: this.run.count, readingRate_perSecond: this.run.rate(),
    });
  }

  /** One request from the screen, untrusted. Requests run one at a time, in order. */
  handle(input: unknown): Promise<AnyReply> {
    const parsed = parseRequest(input);
    if (!parsed.ok) return Promise.resolve({ ok: false, error: parsed.error });
    const fail = (err: unknown): AnyReply => ({ ok: false, error: err instanceof Refusal ? err.message : `${parsed.request.type} failed: ${oneLine(err)}` });
    if (parsed.request.type === 'findPeak') {
      // Only the scan command waits its turn; the wait for the frame does not hold up the
      // requests behind it (a stop pressed meanwhile goes through).
      const asked = this.busy.then(() => this.askForSpectrum());
      this.busy = asked.catch(() => undefined);
      return asked.then((w) => w.frame).then((f): AnyReply => ({ ok: true, value: peakOffer(f.frame, f.recorded) }), fail);
    }
    const run = this.busy.then(() => this.dispatch(parsed.request)).then(
      (value): AnyReply => ({ ok: true, value }),
      (err: unknown): AnyReply => ({ ok: false, error: err instanceof Refusal ? err.message : `${parsed.request.type} failed: ${oneLine(err)}` }),
    );
    this.busy = run;
    return run;
  }

  /** Close the run and the source (host shutting down). */
  async dispose(): Promise<void> {
    await this.busy;
    if (this.state.phase === 'running') await this.stopRun('user', 'the program was closed');
    await this.closeSource();
    this.outbox.cancel();
  }

  /** Sends the scan command; resolves to the frame to come (wrapped, so the wait stays outside the request queue). */
  private async askForSpectrum(): Promise<{ frame: Promise<{ frame: SpectrumFrame; recorded: boolean }> }> {
    if (this.state.source.kind === 'replay') throw new Refusal('find the peak: a recorded run cannot take a spectrum; that needs a live instrument.');
    const wait = this.spectra.expect(this.deps.spectrumTimeout_ms ?? 10_000);
    try {
      await this.source.command({ type: 'scan' }, 'find the peak');
    } catch (err) {
      wait.cancel();
      throw err;
    }
    return { frame: wait.frame };
  }

  private async dispatch(req: BridgeRequest): Promise<unknown> {
    switch (req.type) {
      case 'getState': return this.snapshot();
      case 'listPorts': return { ports: await this.deps.listPorts() };
      case 'listRecords': return { records: await listRecordFiles(this.deps.dataDir) };
      case 'chooseSource':
        this.notWhileRunning('choose another source');
        await this.closeSource();
        if (req.source.kind === 'replay') this.replayPath = await resolveRecordName(this.deps.dataDir, req.source.file);
        this.setSource(req.source);
        return this.changed();
      case 'connect': await this.connect(); return this.changed();
      case 'disconnect':
        this.notWhileRunning('disconnect');
        await this.closeSource();
        return this.changed();
      case 'findPeak': throw new Error('findPeak is answered outside the request queue');
      case 'takeBlank': {
        await this.source.command({ type: 'takeBlank' }, 'take the blank');
        this.state.blankTaken = true;
        this.record.event({ ev: 'blank', t: this.run.deviceTimeNow(), detail: 'blank taken' });
        return this.changed();
      }
      case 'setWavelength':
        if (this.source.isOpen) await this.source.command({ type: 'setWavelength', wavelength_nm: req.wavelength_nm }, 'set the wavelength');
        this.state.wavelength_nm = req.wavelength_nm;
        this.record.event({ ev: 'meta', t: this.run.deviceTimeNow(), details: this.state.sampleDetails, wavelength_nm: req.wavelength_nm });
        return this.changed();
      case 'start': await this.startRun(); return this.changed();
      case 'stop':
        if (this.state.phase !== 'running') throw new Refusal('stop: no run is going; press start first.');
        await this.stopRun('user', 'stopped by the user');
        return this.changed();
      case 'markEvent': {
        if (this.state.phase !== 'running') throw new Refusal('mark: events are marked during a run; start one first.');
        this.record.event({ ev: 'mark', t: this.run.deviceTimeNow(), note: req.note });
        return { at_s: this.run.runTimeNow() };
      }
      case 'mixed': {
        if (this.state.phase !== 'running') throw new Refusal('mixed: time zero is set during a run; start one first.');
        this.run.timeZero_s = this.run.runTimeNow();
        this.record.event({ ev: 'mixed', t: this.run.deviceTimeNow() });
        this.rebuildAnalyzer();
        return this.changed();
      }
      case 'setSampleDetails':
        this.state.sampleDetails = { ...this.state.sampleDetails, ...req.details };
        this.record.event({ ev: 'meta', t: this.run.deviceTimeNow(), details: this.state.sampleDetails, wavelength_nm: this.state.wavelength_nm });
        return this.changed();
      case 'setFitWindow':
        this.state.fitWindow = { ...req.window };
        this.rebuildAnalyzer();
        return this.changed();
      case 'setAnalysisOptions':
        this.state.analysisOptions = { ...this.state.analysisOptions, ...req.options };
        this.rebuildAnalyzer();
        return this.changed();
      case 'openRecord': {
        if (!this.deps.dialogs) throw new Refusal('open: in the browser, choose a record from the runs folder list instead.');
        this.notWhileRunning('open a record');
        const path = await this.deps.dialogs.chooseRecordToOpen();
        if (path) {
          await this.closeSource();
          this.replayPath = path;
          this.setSource({ kind: 'replay', file: path.split(/[/\\]/).pop() ?? 'record', speed: 'max' });
        }
        return { path, state: this.changed() };
      }
      case 'saveExport': {
        if (this.run.count === 0) throw new Refusal('export: there is no run to export yet; record or replay one first.');
        const name = `${this.state.runId ?? 'run'}.csv`;
        const path = this.deps.dialogs
          ? await this.deps.dialogs.chooseExportPath(name)
          : join(this.deps.dataDir, 'exports', name);
        if (path) await exportCsv(path, this.exportInput());
        return { path };
      }
    }
  }

  // ------------------------------------------------------------ source

  private setSource(choice: SourceChoice): void {
    if (choice.kind !== 'replay') this.replayPath = null;
    this.state.source = choice.kind === 'simulated' && choice.speed === undefined ? { ...choice, speed: this.deps.defaultSpeed } : choice;
    this.state.sourceLabel = sourceLabel(this.state.source);
    this.state.demo = choice.kind === 'simulated';
    this.state.phase = 'idle';
    this.state.blankTaken = false;
  }

  private async connect(): Promise<void> {
    if (this.source.isOpen) return;
    this.state.phase = 'connecting';
    this.changed();
    try {
      await this.openSource();
      this.state.phase = 'connected';
    } catch (err) {
      this.state.phase = 'error';
      throw new Refusal(`connect: ${oneLine(err)}`);
    }
  }

  /** Opens the chosen source; on failure nothing is left open and the status says why. */
  private async openSource(): Promise<void> {
    try {
      await this.source.open(
        () => this.deps.createSource(this.state.source, this.replayPath),
        (e) => this.onSourceEvent(e),
        // A replayed record's own events: its time zero and its marks carry over into the new record.
        (e) => this.onRecordedEvent(e),
      );
    } catch (err) {
      if (this.state.phase !== 'running') this.state.phase = 'idle';
      this.state.sourceStatus = { kind: 'error', message: oneLine(err) };
      throw err;
    }
  }

  private async closeSource(): Promise<void> {
    this.spectra.failAll('find the peak: the instrument was closed before it sent its spectrum; connect and try again.');
    await this.source.close();
    if (this.state.phase !== 'running') this.state.phase = 'idle';
  }

  private onSourceEvent(e: SourceEvent): void {
    switch (e.type) {
      case 'reading': this.onReading(e.reading); break;
      case 'status':
        this.state.sourceStatus = e.status;
        this.emit({ type: 'sourceStatus', status: e.status });
        this.record.event({ ev: 'status', t: this.run.deviceTimeNow(), status: e.status });
        if (e.status.kind === 'ended' && this.state.phase === 'running') {
          const detail = e.status.detail;
          this.busy = this.busy.then(() => this.stopRun('sourceEnded', detail)).then(() => this.changed(), () => undefined);
        }
        break;
      case 'rejected':
        this.state.rejected = { ...emptyRejectCounts(), ...e.counts };
        this.lastRejected = { reason: e.reason, line: printable(e.line) };
        this.outbox.otherChanged();
        break;
      case 'gap':
        this.record.event({ ev: 'gap', t: this.run.deviceTimeNow(), from_ms: e.from_ms, to_ms: e.to_ms, reason: e.reason });
        this.warn(`no readings for ${((e.to_ms - e.from_ms) / 1000).toFixed(1)} s (${e.reason}); the run goes on.`);
        break;
      case 'warning':
        this.record.event({ ev: 'warning', t: this.run.deviceTimeNow(), message: e.message });
        this.warn(e.message);
        break;
      case 'blank': {
        const b = e.blank;
        this.state.blankTaken = true;
        const noise = b.noise_AU === null ? '' : `, noise ${b.noise_AU.toExponential(1)} AU`;
        this.record.event({ ev: 'blank', t: b.deviceTime_s, detail: `blank of ${b.points} readings at ${b.wavelength_nm} nm${noise}`, noise_AU: b.noise_AU, drift_AUperMin: b.drift_AUperMin });
        for (const w of b.warnings) this.warn(w);
        this.changed();
        break;
      }
      case 'spectrum': {
        const recorded = this.state.phase === 'running';
        if (recorded) {
          const f = e.frame;
          const found = f.kind === 'absorbance' ? bandMaximum(f.wavelengths_nm, f.values) : null;
          this.record.event({ ev: 'spectrum', t: f.deviceTime_s, frame: f, peak_nm: found?.ok && !found.atEdge ? found.wavelength_nm : null });
        }
        this.spectra.arrived(e.frame, recorded);
        break;
      }
    }
  }

  private onRecordedEvent(e: RunEvent): void {
    if (this.state.phase !== 'running') return;
    if (e.ev === 'mixed' && e.t !== null) {
      this.pendingMixedDevice_s = e.t;
      this.applyRecordedMixed();
    } else if (e.ev === 'mark') {
      this.record.event({ ev: 'mark', t: e.t, note: e.note });
    }
  }

  /** Time zero from a replayed record, on this run's clock, once the clock's origin is known. */
  private applyRecordedMixed(): void {
    const origin = this.run.origin_s;
    if (this.pendingMixedDevice_s === null || origin === null) return;
    // May be negative: the record's mixing came before its first reading.
    this.run.timeZero_s = this.pendingMixedDevice_s - origin;
    this.record.event({ ev: 'mixed', t: this.pendingMixedDevice_s });
    this.pendingMixedDevice_s = null;
    this.rebuildAnalyzer();
    this.changed();
  }

  private onReading(r: Reading): void {
    if (this.state.phase !== 'running' || !Number.isFinite(r.absorbance) || !Number.isFinite(r.deviceTime_s)) return;
    const first = this.run.origin_s === null;
    const t = this.run.place(r.deviceTime_s, r.absorbance, r.flags);
    if (first) this.applyRecordedMixed();
    this.record.write((rec) => rec.reading(r));
    // The reading reaches the operating system before the analysis step that may hold the thread.
    this.record.write((rec) => rec.release());
    this.run.feed(t, r.absorbance);
    this.outbox.readingsAvailable(this.run.count);
  }

  // ------------------------------------------------------------ run

  private async startRun(): Promise<void> {
    if (this.state.phase === 'running') throw new Refusal('start: a run is already going; stop it first.');
    // The simulated instrument and a replay start afresh for every run: the simulated
    // reaction begins at the instrument's time zero, and a record plays from its start.
    const fresh = this.state.source.kind !== 'serial';
    if (fresh) await this.closeSource();
    else await this.connect();
    const started = new Date();
    const runId = newRunId(started);
    this.outbox.reset();
    // The simulated instrument's clock starts at mixing; other sources' run clock starts at their first reading.
    const simulated = this.state.source.kind === 'simulated';
    this.run.reset(simulated ? 0 : null, simulated ? 0 : null);
    this.state.runId = runId;
    this.state.fitWindow = { from_s: null, to_s: null };
    const path = join(this.deps.dataDir, recordFileName(runId));
    try {
      this.record.open(await this.deps.openRecord({
        path, started, details: this.state.sampleDetails, wavelength_nm: this.state.wavelength_nm,
        source: this.state.source, demo: this.state.demo,
      }));
    } catch (err) {
      this.state.runId = null;
      throw new Refusal(`start: the run record could not be created (${oneLine(err)}); check the runs folder ${this.deps.dataDir}.`);
    }
    this.state.recordPath = path;
    this.pendingMixedDevice_s = null;
    if (simulated) this.record.event({ ev: 'mixed', t: 0 });
    this.rebuildAnalyzer();
    this.state.phase = 'running';
    this.emit({ type: 'record', path, status: 'open' });
    // A fresh source opens only now, with the record ready, so its first reading is kept.
    if (fresh) {
      try {
        await this.openSource();
      } catch (err) {
        await this.stopRun('error', oneLine(err));
        throw new Refusal(`start: ${oneLine(err)}`);
      }
    }
    try {
      await this.source.command({ type: 'start' }, 'start');
    } catch (err) {
      await this.stopRun('error', oneLine(err));
      throw err;
    }
  }

  private async stopRun(reason: 'user' | 'sourceEnded' | 'error', detail: string): Promise<void> {
    if (this.state.phase !== 'running') return;
    this.state.phase = 'stopped';
    if (reason !== 'sourceEnded') await this.source.commandQuietly({ type: 'stop' });
    this.outbox.drain();
    const path = await this.record.close({ reason, detail, rejected: { ...this.state.rejected } }, (m) => this.warn(m));
    if (path) this.emit({ type: 'record', path, status: 'closed' });
    // The simulated instrument and a replay are made afresh for each run: nothing to keep open.
    if (this.state.source.kind !== 'serial') {
      await this.closeSource();
      this.state.phase = 'stopped';
    }
  }

  private notWhileRunning(what: string): void {
    if (this.state.phase === 'running') throw new Refusal(`cannot ${what} during a run; stop the run first.`);
  }

  // ------------------------------------------------------------ analysis

  /** A new analyzer over every point kept since time zero: the fits follow a changed window at once, no data is deleted. */
  private rebuildAnalyzer(): void {
    this.run.rebuild(analyzerOptions(this.state.analysisOptions, this.state.fitWindow));
    if (this.state.runId) this.outbox.requestAnalysis();
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

  // ------------------------------------------------------------ events

  private exportInput(): Parameters<typeof exportCsv>[1] {
    let result = null;
    try { result = this.run.result(); } catch { result = null; }
    return {
      runId: this.state.runId ?? 'run', demo: this.state.demo, sourceLabel: this.state.sourceLabel,
      details: this.state.sampleDetails, wavelength_nm: this.state.wavelength_nm, timeZero_s: this.run.timeZero_s ?? 0,
      series: this.run.series, result,
    };
  }

  private warn(message: string): void {
    this.emit({ type: 'warning', message: message.slice(0, 1000), at: new Date().toISOString() });
  }

  private changed(): BenchState {
    const state = this.snapshot();
    this.emit({ type: 'state', state });
    return state;
  }

  private emit(event: BridgeEvent): void {
    for (const l of this.listeners) {
      try { l(event); } catch { /* a broken listener must not stop the run */ }
    }
  }
}

function printable(line: string): string {
  return line.replace(/[^\x20-\x7e]/g, '?').slice(0, 120);
}

export type { SampleDetails };
