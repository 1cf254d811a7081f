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
import type { Reading, ReadingSource, SourceEvent } from '../acquisition/sourceTypes';
import type { AnalyzerOptions, RunAnalyzerLike } from '../kinetics/analysisTypes';
import {
  CONTRACT_VERSION, LIMITS, parseRequest,
  type AnyReply, type BenchState, type BridgeEvent, type BridgeRequest, type RejectCounts, type SampleDetails, type SourceChoice,
} from './bridge/contract';
import type { BenchDeps, RecordEvent, RecordSink } from './bench/benchPorts';
import { Outbox } from './bench/outbox';
import { Refusal } from './bench/refusal';
import { RunSeries } from './bench/runSeries';
import { emptyRejectCounts, newRunId, recordFileName, sourceLabel } from './bench/runNaming';
import { exportCsv } from './bench/runExport';
import { listRecordFiles, resolveRecordName } from './bench/runsFolder';

type Listener = (event: BridgeEvent) => void;


const DEFAULT_ANALYSIS = { targetHalfLives: 3, precision: 0.05, weighted: true, robust: true };

export class BenchService {
  private readonly listeners = new Set<Listener>();
  private readonly now_ms: () => number;
  private readonly series = new RunSeries();
  private readonly outbox: Outbox;
  private source: ReadingSource | null = null;
  private unsubscribe: (() => void) | null = null;
  private analyzer: RunAnalyzerLike | null = null;
  private record: RecordSink | null = null;
  private recordFailed = false;
  private pendingMixedDevice_s: number | null = null;
  private replayPath: string | null = null;
  private firstDeviceTime_s: number | null = null;
  private lastHost_ms: number[] = [];
  private lastRejected: { reason: keyof RejectCounts; line: string } | null = null;
  private busy: Promise<unknown> = Promise.resolve();
  private readonly state: BenchState;

  constructor(private readonly deps: BenchDeps) {
    this.now_ms = deps.now_ms ?? (() => performance.now());
    this.outbox = new Outbox({
      flushReadings: (from, to) => this.emit(this.readingsEvent(from, to)),
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
    for (let from = 0; from < this.series.length; from += LIMITS.maxBatchPoints) {
      const to = Math.min(this.series.length, from + LIMITS.maxBatchPoints);
      listener(this.readingsEvent(from, to));
    }
    if (this.analyzer) {
      try {
        listener({ type: 'analysis', runId, atCount: this.series.length, result: this.analyzer.result() });
      } catch {
        // the next throttled result will carry it
      }
    }
  }

  snapshot(): BenchState {
    return structuredClone({ ...this.state, pointCount: this.series.length, readingRate_perSecond: this.readingRate() });
  }

  /** One request from the screen, untrusted. Requests run one at a time, in order. */
  handle(input: unknown): Promise<AnyReply> {
    const parsed = parseRequest(input);
    if (!parsed.ok) return Promise.resolve({ ok: false, error: parsed.error });
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
      case 'takeBlank': {
        await this.command({ type: 'takeBlank' }, 'take the blank');
        this.state.blankTaken = true;
        this.writeEvent({ ev: 'blank', t: this.deviceTime(), detail: 'blank taken' });
        return this.changed();
      }
      case 'setWavelength':
        if (this.source) await this.command({ type: 'setWavelength', wavelength_nm: req.wavelength_nm }, 'set the wavelength');
        this.state.wavelength_nm = req.wavelength_nm;
        this.writeEvent({ ev: 'meta', t: this.deviceTime(), details: this.state.sampleDetails, wavelength_nm: req.wavelength_nm });
        return this.changed();
      case 'start': await this.startRun(); return this.changed();
      case 'stop':
        if (this.state.phase !== 'running') throw new Refusal('stop: no run is going; press start first.');
        await this.stopRun('user', 'stopped by the user');
        return this.changed();
      case 'markEvent': {
        if (this.state.phase !== 'running') throw new Refusal('mark: events are marked during a run; start one first.');
        const at_s = this.runTime();
        this.writeEvent({ ev: 'mark', t: this.deviceTime(), note: req.note });
        return { at_s };
      }
      case 'mixed': {
        if (this.state.phase !== 'running') throw new Refusal('mixed: time zero is set during a run; start one first.');
        this.state.timeZero_s = this.runTime() ?? 0;
        this.writeEvent({ ev: 'mixed', t: this.deviceTime() });
        this.rebuildAnalyzer();
        return this.changed();
      }
      case 'setSampleDetails':
        this.state.sampleDetails = { ...this.state.sampleDetails, ...req.details };
        this.writeEvent({ ev: 'meta', t: this.deviceTime(), details: this.state.sampleDetails, wavelength_nm: this.state.wavelength_nm });
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
        if (this.series.length === 0) throw new Refusal('export: there is no run to export yet; record or replay one first.');
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
    if (this.source) return;
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

  /** Creates and opens the chosen source; on failure nothing is left open. */
  private async openSource(): Promise<void> {
    try {
      const source = await this.deps.createSource(this.state.source, this.replayPath);
      const offs = [source.on((e) => this.onSourceEvent(e))];
      // A replayed record's own events: its time zero and its marks carry over into the new record.
      const replay = source as ReadingSource & { onRecorded?: (l: (e: RunEvent) => void) => () => void };
      if (typeof replay.onRecorded === 'function') offs.push(replay.onRecorded((e) => this.onRecordedEvent(e)));
      this.unsubscribe = () => { for (const off of offs) off(); };
      this.source = source;
      await source.open();
    } catch (err) {
      await this.closeSource();
      this.state.sourceStatus = { kind: 'error', message: oneLine(err) };
      throw err;
    }
  }

  private async closeSource(): Promise<void> {
    const source = this.source;
    this.source = null;
    this.unsubscribe?.();
    this.unsubscribe = null;
    if (source) await source.close().catch(() => undefined);
    if (this.state.phase !== 'running') this.state.phase = 'idle';
  }

  private async command(cmd: Parameters<ReadingSource['command']>[0], what: string): Promise<void> {
    if (!this.source) throw new Refusal(`${what}: no instrument is connected; press connect first.`);
    const r = await this.source.command(cmd);
    if (!r.ok) throw new Refusal(`${what}: ${r.error}`);
  }

  private onSourceEvent(e: SourceEvent): void {
    switch (e.type) {
      case 'reading': this.onReading(e.reading); break;
      case 'status':
        this.state.sourceStatus = e.status;
        this.emit({ type: 'sourceStatus', status: e.status });
        this.writeEvent({ ev: 'status', t: this.deviceTime(), status: e.status });
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
        this.writeEvent({ ev: 'gap', t: this.deviceTime(), from_ms: e.from_ms, to_ms: e.to_ms, reason: e.reason });
        this.warn(`no readings for ${((e.to_ms - e.from_ms) / 1000).toFixed(1)} s (${e.reason}); the run goes on.`);
        break;
      case 'warning':
        this.writeEvent({ ev: 'warning', t: this.deviceTime(), message: e.message });
        this.warn(e.message);
        break;
      case 'blank': {
        const b = e.blank;
        this.state.blankTaken = true;
        const noise = b.noise_AU === null ? '' : `, noise ${b.noise_AU.toExponential(1)} AU`;
        this.writeEvent({ ev: 'blank', t: b.deviceTime_s, detail: `blank of ${b.points} readings at ${b.wavelength_nm} nm${noise}`, noise_AU: b.noise_AU, drift_AUperMin: b.drift_AUperMin });
        for (const w of b.warnings) this.warn(w);
        this.changed();
        break;
      }
      case 'spectrum': break; // wavelength choice from a spectrum is the screen's later work
    }
  }

  private onRecordedEvent(e: RunEvent): void {
    if (this.state.phase !== 'running') return;
    if (e.ev === 'mixed' && e.t !== null) {
      this.pendingMixedDevice_s = e.t;
      if (this.firstDeviceTime_s !== null) this.applyRecordedMixed();
    } else if (e.ev === 'mark') {
      this.writeEvent({ ev: 'mark', t: e.t, note: e.note });
    }
  }

  /** Time zero from a replayed record, on this run's clock, once the clock's origin is known. */
  private applyRecordedMixed(): void {
    if (this.pendingMixedDevice_s === null || this.firstDeviceTime_s === null) return;
    // May be negative: the record's mixing came before its first reading.
    this.state.timeZero_s = this.pendingMixedDevice_s - this.firstDeviceTime_s;
    this.pendingMixedDevice_s = null;
    this.writeEvent({ ev: 'mixed', t: this.state.timeZero_s + this.firstDeviceTime_s });
    this.rebuildAnalyzer();
    this.changed();
  }

  private onReading(r: Reading): void {
    if (this.state.phase !== 'running' || !Number.isFinite(r.absorbance) || !Number.isFinite(r.deviceTime_s)) return;
    if (this.firstDeviceTime_s === null) {
      this.firstDeviceTime_s = r.deviceTime_s;
      this.applyRecordedMixed();
    }
    const t = r.deviceTime_s - this.firstDeviceTime_s;
    this.series.push(t, r.absorbance, r.flags);
    this.write((rec) => rec.reading(r));
    this.lastHost_ms.push(this.now_ms());
    if (this.lastHost_ms.length > 64) this.lastHost_ms.splice(0, 32);
    // The reading reaches the operating system before the analysis step that may hold the thread.
    this.write((rec) => rec.release());
    this.feed(t, r.absorbance);
    this.outbox.readingsAvailable(this.series.length);
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
    this.series.clear();
    this.outbox.reset();
    // The simulated instrument's clock starts at mixing; other sources' run clock starts at their first reading.
    const simulated = this.state.source.kind === 'simulated';
    this.firstDeviceTime_s = simulated ? 0 : null;
    this.lastHost_ms = [];
    this.state.runId = runId;
    this.state.timeZero_s = simulated ? 0 : null;
    this.state.fitWindow = { from_s: null, to_s: null };
    const path = join(this.deps.dataDir, recordFileName(runId));
    try {
      this.record = await this.deps.openRecord({
        path, started, details: this.state.sampleDetails, wavelength_nm: this.state.wavelength_nm,
        source: this.state.source, demo: this.state.demo,
      });
    } catch (err) {
      this.state.runId = null;
      throw new Refusal(`start: the run record could not be created (${oneLine(err)}); check the runs folder ${this.deps.dataDir}.`);
    }
    this.state.recordPath = path;
    this.recordFailed = false;
    this.pendingMixedDevice_s = null;
    if (simulated) this.writeEvent({ ev: 'mixed', t: 0 });
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
    const r = await this.source!.command({ type: 'start' });
    if (!r.ok) {
      await this.stopRun('error', r.error);
      throw new Refusal(`start: ${r.error}`);
    }
  }

  private async stopRun(reason: 'user' | 'sourceEnded' | 'error', detail: string): Promise<void> {
    if (this.state.phase !== 'running') return;
    this.state.phase = 'stopped';
    if (reason !== 'sourceEnded') await this.source?.command({ type: 'stop' }).catch(() => undefined);
    this.outbox.drain();
    const record = this.record;
    this.record = null;
    if (record) {
      try {
        await record.close({ reason, detail, rejected: { ...this.state.rejected } });
      } catch (err) {
        this.warn(`the record ${record.path} could not be closed cleanly (${oneLine(err)}); it will be recovered when opened.`);
      }
      this.emit({ type: 'record', path: record.path, status: 'closed' });
    }
  }

  private notWhileRunning(what: string): void {
    if (this.state.phase === 'running') throw new Refusal(`cannot ${what} during a run; stop the run first.`);
  }

  /** Run-clock time now: the last reading's time plus the host time since it arrived. */
  private runTime(): number | null {
    const n = this.series.length;
    if (n === 0) return this.state.phase === 'running' ? 0 : null;
    const lastHost = this.lastHost_ms[this.lastHost_ms.length - 1] ?? this.now_ms();
    return this.series.time_s[n - 1]! + (this.now_ms() - lastHost) / 1000;
  }

  /**
   * Every write to the record goes through here: a write that fails (disk full, folder
   * gone) stops the run at once with a one-line message; what was written stays on disk.
   */
  private write(fn: (record: RecordSink) => void): void {
    const record = this.record;
    if (!record) return;
    try {
      fn(record);
    } catch (err) {
      if (this.recordFailed) return;
      this.recordFailed = true;
      this.warn(`the record ${record.path} could not be written (${oneLine(err)}); the run was stopped, and every reading written before is kept.`);
      this.busy = this.busy.then(() => this.stopRun('error', oneLine(err))).then(() => this.changed(), () => undefined);
    }
  }

  private writeEvent(event: RecordEvent): void {
    this.write((rec) => rec.event(event));
  }

  /** Device time now, for the record's events (null before the first reading). */
  private deviceTime(): number | null {
    const t = this.runTime();
    return t === null || this.firstDeviceTime_s === null ? null : t + this.firstDeviceTime_s;
  }

  // ------------------------------------------------------------ analysis

  private analyzerOptions(): AnalyzerOptions {
    const o = this.state.analysisOptions;
    const w = this.state.fitWindow;
    return {
      targetHalfLives: o.targetHalfLives, precision: o.precision, weighted: o.weighted, robust: o.robust,
      ...(w.from_s !== null ? { from_s: w.from_s } : {}), ...(w.to_s !== null ? { to_s: w.to_s } : {}),
    };
  }

  /** A new analyzer over every point kept since time zero: the fits follow a changed window at once, no data is deleted. */
  private rebuildAnalyzer(): void {
    this.analyzer = this.deps.createAnalyzer(this.analyzerOptions());
    for (let i = 0; i < this.series.length; i++) this.feed(this.series.time_s[i]!, this.series.absorbance[i]!);
    if (this.state.runId) this.outbox.requestAnalysis();
  }

  private feed(runTime_s: number, absorbance: number): void {
    const t0 = this.state.timeZero_s ?? 0;
    if (this.analyzer && runTime_s >= t0) this.analyzer.add(runTime_s - t0, absorbance);
  }

  private analyse(): void {
    if (!this.analyzer || !this.state.runId) return;
    try {
      this.emit({ type: 'analysis', runId: this.state.runId, atCount: this.series.length, result: this.analyzer.result() });
    } catch (err) {
      this.warn(`the analysis failed on this run (${oneLine(err)}); the readings are still recorded.`);
    }
  }

  // ------------------------------------------------------------ events

  private exportInput(): Parameters<typeof exportCsv>[1] {
    let result = null;
    try { result = this.analyzer?.result() ?? null; } catch { result = null; }
    return {
      runId: this.state.runId ?? 'run', demo: this.state.demo, sourceLabel: this.state.sourceLabel,
      details: this.state.sampleDetails, wavelength_nm: this.state.wavelength_nm, timeZero_s: this.state.timeZero_s ?? 0,
      series: this.series, result,
    };
  }

  private readingsEvent(from: number, to: number): BridgeEvent {
    return {
      type: 'readings', runId: this.state.runId ?? '', fromIndex: from,
      time_s: Array.from(this.series.time_s.subarray(from, to)),
      absorbance: Array.from(this.series.absorbance.subarray(from, to)),
      flags: Array.from(this.series.flags.subarray(from, to)),
    };
  }

  private readingRate(): number | null {
    const h = this.lastHost_ms;
    if (h.length < 2) return null;
    const span_ms = h[h.length - 1]! - h[0]!;
    return span_ms > 0 ? ((h.length - 1) * 1000) / span_ms : null;
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

function oneLine(err: unknown): string {
  const s = err instanceof Error ? err.message : String(err);
  return s.split('\n')[0]!.slice(0, 300);
}

function printable(line: string): string {
  return line.replace(/[^\x20-\x7e]/g, '?').slice(0, 120);
}

export type { SampleDetails };
