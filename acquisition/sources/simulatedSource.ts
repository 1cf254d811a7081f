/**
 * The simulated instrument as an in-process source: the virtual instrument writes
 * protocol lines and they go through the same parser and assembler as a serial
 * instrument's, so a demo run exercises the real path. Its clock runs at a speed
 * factor (1× real time up to as fast as the machine goes). Readings are demo data.
 */
import type { ReadingSource, RejectCounts, SourceCommand, SourceEvent, SourceListener } from './sourceTypes';
import { LineParser } from '../protocol/lineProtocol';
import { ReadingAssembler, type AssemblerOptions } from '../protocol/readingAssembler';
import { CommandChannel, type CommandResult } from '../protocol/commandChannel';
import { SimulatedInstrument, type InstrumentSettings } from './simulatedInstrument';

export interface SimulatedSourceOptions {
  instrument: InstrumentSettings;
  /** Device seconds per host second; 'max' runs as fast as it can. Default 1. */
  speed?: number | 'max';
  /** How long the blank is read when a blank is taken (device seconds). Default 5. */
  blankDuration_s?: number;
  /** The run ends (status 'ended') at this device time; null runs until closed. */
  duration_s?: number | null;
  assembler?: AssemblerOptions;
  /** Host monotonic clock in ms. */
  now?: () => number;
}

/** Ticks run per event-loop turn at 'max' speed: large enough to be fast, small enough to let I/O through. */
const MAX_SPEED_BATCH = 500;

export class SimulatedSource implements ReadingSource {
  readonly kind = 'simulated' as const;
  readonly instrument: SimulatedInstrument;
  private readonly listeners = new Set<SourceListener>();
  private readonly parser = new LineParser();
  private readonly assembler: ReadingAssembler;
  private readonly channel = new CommandChannel(1000);
  private readonly now: () => number;
  private speed: number | 'max';
  private readonly blankDuration_s: number;
  private readonly duration_s: number | null;
  private deviceTime_s = 0;
  private timer: ReturnType<typeof setTimeout> | null = null;
  private state: 'idle' | 'running' | 'paused' | 'closed' = 'idle';
  /** Host time at which the next tick is due (ms). */
  private nextAt_ms = 0;

  constructor(options: SimulatedSourceOptions) {
    this.instrument = new SimulatedInstrument(options.instrument);
    this.speed = options.speed ?? 1;
    this.blankDuration_s = options.blankDuration_s ?? 5;
    this.duration_s = options.duration_s ?? null;
    this.now = options.now ?? (() => performance.now());
    this.assembler = new ReadingAssembler((e) => this.emit(e), (a) => this.channel.answer(a), options.assembler);
  }

  on(listener: SourceListener): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  rejectedCounts(): RejectCounts {
    return { ...this.parser.rejected };
  }

  async open(): Promise<void> {
    if (this.state !== 'idle') return;
    this.emit({ type: 'status', status: { kind: 'connecting', detail: 'simulated instrument (demo data)' } });
    this.deliver([this.instrument.identityLine()]);
    this.emit({ type: 'status', status: { kind: 'connected', detail: 'simulated instrument (demo data)', ...(this.assembler.identity ? { identity: this.assembler.identity } : {}) } });
    this.state = 'running';
    this.nextAt_ms = this.now();
    this.schedule();
  }

  async command(cmd: SourceCommand): Promise<CommandResult> {
    if (this.state === 'closed') return { ok: false, error: 'the simulated instrument is closed' };
    switch (cmd.type) {
      case 'setSpeed':
        if (cmd.speed !== 'max' && !(cmd.speed > 0 && Number.isFinite(cmd.speed))) return { ok: false, error: `speed ${cmd.speed} is not a positive number` };
        this.speed = cmd.speed;
        this.nextAt_ms = this.now();
        this.reschedule();
        return { ok: true };
      case 'pause':
        if (this.state === 'running') { this.state = 'paused'; this.clearTimer(); }
        return { ok: true };
      case 'resume':
        if (this.state === 'paused') { this.state = 'running'; this.nextAt_ms = this.now(); this.schedule(); }
        return { ok: true };
      default:
        return this.channel.send(cmd, (line) => this.deliver(this.instrument.handle(line)), this.blankDuration_s);
    }
  }

  async close(): Promise<void> {
    if (this.state === 'closed') return;
    this.state = 'closed';
    this.clearTimer();
    this.assembler.finishBlank();
    this.channel.failAll('the simulated instrument closed');
    this.emit({ type: 'status', status: { kind: 'ended', detail: 'simulated instrument closed' } });
  }

  private emit(e: SourceEvent): void {
    for (const l of this.listeners) l(e);
  }

  private deliver(lines: string[]): void {
    const host = this.now();
    for (const line of lines) this.assembler.accept(this.parser.parse(line), line, host, this.parser.rejected);
  }

  private tick(): void {
    this.deviceTime_s += this.instrument.interval_s;
    this.deliver(this.instrument.measure(this.deviceTime_s));
    if (this.duration_s !== null && this.deviceTime_s >= this.duration_s - 1e-9) {
      this.state = 'closed';
      this.clearTimer();
      this.assembler.finishBlank();
      this.emit({ type: 'status', status: { kind: 'ended', detail: `simulated run reached ${this.duration_s} s` } });
    }
  }

  private schedule(): void {
    if (this.state !== 'running') return;
    if (this.speed === 'max') {
      this.timer = setTimeout(() => {
        this.timer = null;
        for (let i = 0; i < MAX_SPEED_BATCH && this.state === 'running'; i++) this.tick();
        this.schedule();
      }, 0);
      return;
    }
    // Due times are counted from the schedule, not from when the timer fired, so the clock does not drift.
    this.nextAt_ms += (this.instrument.interval_s * 1000) / this.speed;
    this.timer = setTimeout(() => {
      this.timer = null;
      if (this.state !== 'running') return;
      this.tick();
      this.schedule();
    }, Math.max(0, this.nextAt_ms - this.now()));
  }

  private reschedule(): void {
    if (this.state !== 'running') return;
    this.clearTimer();
    this.schedule();
  }

  private clearTimer(): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = null;
  }
}
