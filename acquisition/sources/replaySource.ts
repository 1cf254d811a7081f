/**
 * A recorded run played back as a source: the same readings, in the same order, with
 * the record's events in their places, at 1× to 100× the recorded pace or as fast as
 * the consumer can take them. Re-analysing a run, training a new person and testing the
 * pipeline all go through here, so the replayed feed must look like a live one.
 *
 * Pacing follows the data clock: a reading at device time t is due when
 *   host time − anchor_host = (t − anchor_t) / speed,
 * re-anchored at every speed change and every resume, so changing speed never jumps.
 */
import { performance } from 'node:perf_hooks';
import type { PlacedEvent, RunRecord } from '../record/journalReader';
import type { RecordHeader, RunEvent } from '../record/runRecordFormat';
import { recordFitSettings, recordTimeZero, type RecordedFitSettings } from '../record/recordTimeZero';
import type { Reading, ReadingSource, RejectCounts, SourceCommand, SourceEvent, SourceListener } from './sourceTypes';
import { emptyRejectCounts } from './sourceStatus';

export type ReplaySpeed = number | 'max';

/**
 * Listens to any source, and to a replay's own recorded events (time zero, marks) as well
 * when the source is a replay; returns the one function that detaches both.
 */
export function listenToSource(
  source: ReadingSource,
  onEvent: SourceListener,
  onRecorded: (event: RunEvent) => void,
): () => void {
  const replay = source as ReadingSource & { onRecorded?: (l: (e: RunEvent) => void) => () => void };
  const offs = [source.on(onEvent)];
  if (typeof replay.onRecorded === 'function') offs.push(replay.onRecorded(onRecorded));
  return () => { for (const off of offs) off(); };
}

export const MIN_REPLAY_SPEED = 1;
export const MAX_REPLAY_SPEED = 100;

export interface ReplayOptions {
  speed?: ReplaySpeed;
  /** Host monotonic clock, ms. */
  now_ms?: () => number;
  /** Readings handed out per turn of the event loop at 'max' speed (keeps commands responsive). */
  batch?: number;
  /** Label for status messages (the file name). */
  label?: string;
}

/** What a replay plays: columns of readings and events placed among them. */
export interface ReplayTimeline {
  t_s: Float64Array;
  absorbance: Float64Array;
  flags?: Uint32Array;
  cellT_C?: Float64Array;
  sampleCounts?: Float64Array;
  darkCounts?: Float64Array;
  wavelength_nm: number | null;
  events: PlacedEvent[];
  /** The record's version and reaction start, for its time-zero rule (absent for plain readings). */
  header?: Pick<RecordHeader, 'version' | 'reactionStart_s'>;
}

export function timelineFromRecord(record: RunRecord): ReplayTimeline {
  const r = record.readings;
  return {
    t_s: r.t_s,
    absorbance: r.absorbance,
    flags: r.flags,
    cellT_C: r.cellT_C,
    sampleCounts: r.sampleCounts,
    darkCounts: r.darkCounts,
    wavelength_nm: record.header.run.wavelength_nm,
    events: record.events,
    header: { version: record.header.version, reactionStart_s: record.header.reactionStart_s ?? null },
  };
}

/** Plain readings (a CSV run): readings only, time as given. */
export function timelineFromReadings(time_s: Float64Array, absorbance: Float64Array, wavelength_nm: number | null = null): ReplayTimeline {
  return { t_s: time_s, absorbance, wavelength_nm, events: [] };
}

export function checkReplaySpeed(speed: unknown): { ok: true; speed: ReplaySpeed } | { ok: false; error: string } {
  if (speed === 'max') return { ok: true, speed };
  if (typeof speed === 'number' && Number.isFinite(speed) && speed >= MIN_REPLAY_SPEED && speed <= MAX_REPLAY_SPEED) return { ok: true, speed };
  return { ok: false, error: `replay speed ${String(speed)} is not allowed; give a factor from ${MIN_REPLAY_SPEED} to ${MAX_REPLAY_SPEED}, or max.` };
}


export class ReplaySource implements ReadingSource {
  readonly kind = 'replay' as const;
  private readonly listeners = new Set<SourceListener>();
  private readonly recordedListeners = new Set<(event: RunEvent) => void>();
  private readonly now: () => number;
  private readonly batch: number;
  private readonly label: string;
  private speed: ReplaySpeed;
  /** Next reading to hand out, and next event. */
  private next = 0;
  private nextEvent = 0;
  private state: 'idle' | 'playing' | 'paused' | 'ended' | 'closed' = 'idle';
  private anchorHost_ms = 0;
  private anchorData_s = 0;
  private wavelength_nm: number | null;
  private timer: ReturnType<typeof setTimeout> | ReturnType<typeof setImmediate> | null = null;
  private timerKind: 'timeout' | 'immediate' | null = null;

  constructor(
    private readonly timeline: ReplayTimeline,
    options: ReplayOptions = {},
  ) {
    const checked = checkReplaySpeed(options.speed ?? 1);
    if (!checked.ok) throw new RangeError(checked.error);
    this.speed = checked.speed;
    this.now = options.now_ms ?? (() => performance.now());
    this.batch = options.batch ?? 4096;
    this.label = options.label ?? 'recorded run';
    this.wavelength_nm = timeline.wavelength_nm;
  }

  on(listener: SourceListener): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  /**
   * The record's own events (blank, mixed, mark, meta, status, stop, ...) as they come up.
   * Gaps and warnings also arrive through `on` as the source events they were.
   */
  onRecorded(listener: (event: RunEvent) => void): () => void {
    this.recordedListeners.add(listener);
    return () => this.recordedListeners.delete(listener);
  }

  async open(): Promise<void> {
    if (this.state !== 'idle') return;
    this.emit({ type: 'status', status: { kind: 'connecting', detail: `opening ${this.label}` } });
    this.emit({ type: 'status', status: { kind: 'connected', detail: `replaying ${this.label} (${this.timeline.t_s.length} readings)` } });
    this.state = 'playing';
    this.anchor(this.dataTimeOfNext());
    this.schedule(0);
  }

  async command(cmd: SourceCommand): Promise<{ ok: true } | { ok: false; error: string }> {
    switch (cmd.type) {
      case 'setSpeed': {
        const checked = checkReplaySpeed(cmd.speed);
        if (!checked.ok) return checked;
        const position = this.dataTimeNow();
        this.speed = checked.speed;
        this.anchor(position);
        if (this.state === 'playing') this.schedule(0);
        return { ok: true };
      }
      case 'pause':
        if (this.state !== 'playing') return { ok: false, error: `cannot pause: the replay is ${this.state}.` };
        this.anchorData_s = this.dataTimeNow();
        this.state = 'paused';
        this.cancel();
        return { ok: true };
      case 'resume':
        if (this.state !== 'paused') return { ok: false, error: `cannot resume: the replay is ${this.state}, not paused.` };
        this.state = 'playing';
        this.anchor(this.anchorData_s);
        this.schedule(0);
        return { ok: true };
      case 'stop':
        this.finish('stopped');
        return { ok: true };
      case 'start':
        return this.state === 'idle' ? (await this.open(), { ok: true }) : { ok: true };
      default:
        return { ok: false, error: `a recorded run cannot ${describeCommand(cmd)}; that needs a live instrument.` };
    }
  }

  async close(): Promise<void> {
    this.cancel();
    if (this.state !== 'closed' && this.state !== 'ended') {
      this.emit({ type: 'status', status: { kind: 'ended', detail: `replay of ${this.label} closed` } });
    }
    this.state = 'closed';
  }

  rejectedCounts(): RejectCounts {
    return emptyRejectCounts();
  }

  /** Device time of the record's time zero (recordTimeZero.ts), or null when it has none (a CSV run). */
  get recordedTimeZero_s(): number | null {
    if (!this.timeline.header) return null;
    const zero = recordTimeZero(this.timeline.header, this.timeline.events);
    if (zero.from === 'firstReading') return this.timeline.t_s.length > 0 ? this.timeline.t_s[0]! : null;
    return zero.deviceTime_s;
  }

  /** The fit settings the record's run stopped with, or null (an older record, a CSV run). */
  get recordedFitSettings(): RecordedFitSettings | null {
    return recordFitSettings(this.timeline.events);
  }

  /** Readings handed out so far. */
  get position(): number {
    return this.next;
  }

  get currentSpeed(): ReplaySpeed {
    return this.speed;
  }

  get isPaused(): boolean {
    return this.state === 'paused';
  }

  /** Where the replay's data clock stands now, in device seconds. */
  dataTimeNow(): number {
    if (this.state !== 'playing' || this.speed === 'max') return this.state === 'paused' ? this.anchorData_s : this.dataTimeOfNext();
    return this.anchorData_s + ((this.now() - this.anchorHost_ms) / 1000) * this.speed;
  }

  private anchor(data_s: number): void {
    this.anchorHost_ms = this.now();
    this.anchorData_s = data_s;
  }

  private dataTimeOfNext(): number {
    const t = this.timeline.t_s;
    if (this.next < t.length) return t[this.next]!;
    return t.length > 0 ? t[t.length - 1]! : 0;
  }

  private play(): void {
    this.timer = null;
    this.timerKind = null;
    if (this.state !== 'playing') return;
    const t = this.timeline.t_s;
    const n = t.length;
    if (this.speed === 'max') {
      const stop = Math.min(n, this.next + this.batch);
      while (this.next < stop && this.state === 'playing') this.emitNext();
    } else {
      const dataNow = this.dataTimeNow();
      // Hand out everything now due; a bounded batch keeps one late turn from flooding the consumer.
      let budget = this.batch;
      while (this.next < n && t[this.next]! <= dataNow && budget-- > 0 && this.state === 'playing') this.emitNext();
    }
    if (this.state !== 'playing') return;
    if (this.next >= n) {
      this.emitEventsUpTo(Number.MAX_SAFE_INTEGER);
      this.finish('the recorded run is over');
      return;
    }
    if (this.speed === 'max') {
      this.schedule(0);
    } else {
      const wait_ms = ((t[this.next]! - this.dataTimeNow()) / this.speed) * 1000;
      // Short waits are capped so that a long pause in the data still lets speed changes act promptly.
      this.schedule(Math.min(Math.max(wait_ms, 0), 250));
    }
  }

  private emitNext(): void {
    const i = this.next;
    this.emitEventsUpTo(i);
    if (this.state !== 'playing') return;
    const tl = this.timeline;
    const temp = tl.cellT_C?.[i];
    const sample = tl.sampleCounts?.[i];
    const dark = tl.darkCounts?.[i];
    const reading: Reading = {
      deviceTime_s: tl.t_s[i]!,
      hostTime_ms: this.now(),
      absorbance: tl.absorbance[i]!,
      wavelength_nm: this.wavelength_nm,
      cellTemperature_C: temp !== undefined && !Number.isNaN(temp) ? temp : null,
      flags: tl.flags?.[i] ?? 0,
    };
    if (sample !== undefined && !Number.isNaN(sample)) reading.sampleCounts = sample;
    if (dark !== undefined && !Number.isNaN(dark)) reading.darkCounts = dark;
    this.next++;
    this.emit({ type: 'reading', reading });
  }

  /** Events placed before reading `index` (recorded before it) are played before it. */
  private emitEventsUpTo(index: number): void {
    const events = this.timeline.events;
    while (this.nextEvent < events.length && events[this.nextEvent]!.index <= index) {
      const placed = events[this.nextEvent++]!;
      const e = placed.event;
      if (e.ev === 'meta' && e.run?.wavelength_nm !== undefined) this.wavelength_nm = e.run.wavelength_nm;
      for (const l of this.recordedListeners) l(e);
      if (e.ev === 'gap') this.emit({ type: 'gap', from_ms: e.from_h, to_ms: e.to_h, reason: e.reason });
      else if (e.ev === 'warning') this.emit({ type: 'warning', message: e.message });
    }
  }

  private finish(detail: string): void {
    if (this.state === 'ended' || this.state === 'closed') return;
    this.cancel();
    this.state = 'ended';
    this.emit({ type: 'status', status: { kind: 'ended', detail: `${detail} (${this.next} readings played)` } });
  }

  private schedule(delay_ms: number): void {
    this.cancel();
    if (delay_ms <= 0) {
      this.timer = setImmediate(() => this.play());
      this.timerKind = 'immediate';
    } else {
      this.timer = setTimeout(() => this.play(), delay_ms);
      this.timerKind = 'timeout';
    }
  }

  private cancel(): void {
    if (this.timer === null) return;
    if (this.timerKind === 'immediate') clearImmediate(this.timer as ReturnType<typeof setImmediate>);
    else clearTimeout(this.timer as ReturnType<typeof setTimeout>);
    this.timer = null;
    this.timerKind = null;
  }

  private emit(event: SourceEvent): void {
    for (const l of this.listeners) l(event);
  }
}

function describeCommand(cmd: SourceCommand): string {
  switch (cmd.type) {
    case 'setWavelength': return 'change the wavelength';
    case 'takeBlank': return 'take a blank';
    case 'setInterval': return 'change the reading interval';
    case 'scan': return 'take a spectrum';
    default: return cmd.type;
  }
}
