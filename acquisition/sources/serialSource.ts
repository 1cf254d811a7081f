/**
 * A spectrometer on a serial line, speaking the Rateline protocol (acquisition/protocol/PROTOCOL.md).
 * It keeps the run going through the faults a bench sees: a pulled cable (status
 * 'disconnected', reopen with back-off to the same path or to the same device serial
 * number, a 'gap' event), a feed that goes quiet without the system noticing (a
 * watchdog marks it 'stale' and reopens the port), and noisy lines (refused and counted).
 * The port binding is injectable so that tests run on @serialport/binding-mock.
 */
import { existsSync } from 'node:fs';
import { SerialPort } from 'serialport';
import { ReadlineParser } from '@serialport/parser-readline';
import type { ReadingSource, RejectCounts, SourceCommand, SourceEvent, SourceListener, SourceStatus } from './sourceTypes';
import { LineParser, MAX_LINE_CHARS, type DeviceLine } from '../protocol/lineProtocol';
import { DelimitedReader, type DelimitedConfig } from '../plain/delimitedReader';
import { LineCap } from '../protocol/lineCap';
import { ReadingAssembler, type AssemblerOptions } from '../protocol/readingAssembler';
import { CommandChannel, type CommandResult } from '../protocol/commandChannel';
import { openFailureMessage, owningGroup, type PortListing } from './portErrors';

/** Before the pace is known (fewer than two readings), silence is stale only after this long. */
export const FIRST_PACE_ALLOWANCE_MS = 60_000;

export interface SerialSourceOptions {
  path: string;
  baudRate?: number;
  /** The port binding; the platform's native one by default. */
  binding?: PortBinding;
  /** USB serial number of the adapter: after an unplug the device may come back on another path. */
  serialNumber?: string | null;
  /** Expected time between readings (s), for the watchdog. Updated by setInterval commands. */
  expectedInterval_s?: number;
  /** Stale after this many expected intervals without a reading. Default 5. */
  staleAfterIntervals?: number;
  reconnect?: { initialDelay_ms?: number; maxDelay_ms?: number; factor?: number };
  blankDuration_s?: number;
  commandTimeout_ms?: number;
  assembler?: AssemblerOptions;
  now?: () => number;
  /**
   * Whether the port's device node is still there. An unplugged USB adapter's node vanishes
   * (and socat removes its pty links) without the open port reporting anything. Default: the
   * file system for absolute paths with the native binding; always true with an injected binding.
   */
  present?: (path: string) => boolean;
  /** The instrument prints plain delimited lines instead of the protocol: how to read them. It then takes no commands. */
  delimited?: DelimitedConfig;
}

interface LineReader {
  parse(raw: string, hostTime_ms?: number): DeviceLine;
  readonly rejected: RejectCounts;
}

type Port = SerialPort;

/**
 * What the source needs of a serialport binding (the native one, or @serialport/binding-mock
 * in tests): list the ports, open one. Written out here because the binding package's
 * type declarations are not reachable under this project's module resolution.
 */
export interface PortBinding {
  list(): Promise<PortListing[]>;
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- each binding has its own open options
  open(options: any): Promise<unknown>;
}

export class SerialSource implements ReadingSource {
  readonly kind = 'serial' as const;
  private readonly listeners = new Set<SourceListener>();
  private readonly parser: LineReader;
  private readonly plainLines: boolean;
  private readonly assembler: ReadingAssembler;
  private readonly channel: CommandChannel;
  private readonly binding: PortBinding;
  private readonly now: () => number;
  private readonly baudRate: number;
  private serialNumber: string | null;
  private expectedInterval_s: number;
  private readonly staleAfter: number;
  private readonly backoff: { initialDelay_ms: number; maxDelay_ms: number; factor: number };
  private readonly blankDuration_s: number;
  private port: Port | null = null;
  private path: string;
  private closing = false;
  private reconnecting = false;
  private expecting = true;
  private lastReading_ms: number | null = null;
  /** Recent spacings between readings (host ms), for the watchdog's sense of the pace. */
  private readonly spacings_ms: number[] = [];
  private lastActivity_ms = 0;
  /** The watchdog arms once the device has sent a good line: before that, silence is a slow start, not a stale feed. */
  private heardFromDevice = false;
  private pendingGap: { from_ms: number; reason: string } | null = null;
  private watchdog: ReturnType<typeof setInterval> | null = null;
  private wake: (() => void) | null = null;
  private readonly present: (path: string) => boolean;

  constructor(options: SerialSourceOptions) {
    this.path = options.path;
    this.plainLines = options.delimited !== undefined;
    this.parser = options.delimited ? new DelimitedReader(options.delimited) : new LineParser();
    this.baudRate = options.baudRate ?? 115200;
    this.binding = options.binding ?? SerialPort.binding;
    this.serialNumber = options.serialNumber ?? null;
    this.expectedInterval_s = options.expectedInterval_s ?? 1;
    this.staleAfter = options.staleAfterIntervals ?? 5;
    this.backoff = { initialDelay_ms: 250, maxDelay_ms: 5000, factor: 2, ...options.reconnect };
    this.blankDuration_s = options.blankDuration_s ?? 5;
    this.channel = new CommandChannel(options.commandTimeout_ms ?? 2000);
    this.now = options.now ?? (() => performance.now());
    this.present = options.present ?? (options.binding ? () => true : (p) => !p.startsWith('/') || existsSync(p));
    this.assembler = new ReadingAssembler((e) => this.fromAssembler(e), (a) => this.channel.answer(a), options.assembler);
  }

  on(listener: SourceListener): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  rejectedCounts(): RejectCounts {
    return { ...this.parser.rejected };
  }

  /** Opens the port; rejects with a SourceOpenError whose message lists the ports that exist. */
  async open(): Promise<void> {
    if (this.port || this.reconnecting) return; // already open (or on its way back)
    this.closing = false;
    this.status({ kind: 'connecting', detail: `opening ${this.path} at ${this.baudRate} baud` });
    try {
      await this.attach(this.path);
    } catch (err) {
      const ports = await this.listPorts();
      const e = openFailureMessage(this.path, err, ports, process.platform, owningGroup(this.path));
      this.status({ kind: 'error', message: e.message });
      throw e;
    }
    if (this.serialNumber === null) {
      const info = (await this.listPorts()).find((p) => p.path === this.path);
      if (info?.serialNumber) this.serialNumber = info.serialNumber;
    }
    this.watchdog = setInterval(() => this.checkStale(), Math.max(100, Math.min(1000, this.expectedInterval_s * 500)));
  }

  async command(cmd: SourceCommand): Promise<CommandResult> {
    const port = this.port;
    if (cmd.type === 'setSpeed' || cmd.type === 'pause' || cmd.type === 'resume') return { ok: false, error: `a serial instrument runs in real time: "${cmd.type}" is for replayed runs` };
    if (this.plainLines) return { ok: false, error: 'this instrument prints plain delimited lines and takes no commands; use its own controls' };
    if (!port || !port.isOpen) return { ok: false, error: `not connected to ${this.path}; wait for the reconnection` };
    const r = await this.channel.send(cmd, (line) => { port.write(line, 'latin1'); }, this.blankDuration_s);
    if (r.ok) {
      if (cmd.type === 'stop') this.expecting = false;
      if (cmd.type === 'start') { this.expecting = true; this.lastActivity_ms = this.now(); }
      if (cmd.type === 'setInterval') this.expectedInterval_s = cmd.interval_s;
      if (cmd.type === 'takeBlank') this.lastActivity_ms = this.now();
    }
    return r;
  }

  async close(): Promise<void> {
    if (this.closing) return;
    this.closing = true;
    if (this.watchdog) clearInterval(this.watchdog);
    this.watchdog = null;
    this.wake?.();
    this.channel.failAll('the port was closed');
    this.assembler.finishBlank();
    const port = this.port;
    this.port = null;
    if (port?.isOpen) await new Promise<void>((resolve) => port.close(() => resolve()));
    this.status({ kind: 'ended', detail: `closed ${this.path}` });
  }

  private emit(e: SourceEvent): void {
    for (const l of this.listeners) l(e);
  }

  private status(status: SourceStatus): void {
    this.emit({ type: 'status', status });
  }

  /** Events from the assembler; a reading after an interruption is preceded by its gap. */
  private fromAssembler(e: SourceEvent): void {
    if (e.type === 'reading') {
      if (this.pendingGap) {
        this.emit({ type: 'gap', from_ms: this.pendingGap.from_ms, to_ms: e.reading.hostTime_ms, reason: this.pendingGap.reason });
        this.pendingGap = null;
      }
      if (this.lastReading_ms !== null) this.noteSpacing(e.reading.hostTime_ms - this.lastReading_ms);
      this.lastReading_ms = e.reading.hostTime_ms;
    }
    this.emit(e);
  }

  /**
   * The watchdog learns the instrument's own pace: the median of the last few spacings
   * between readings (host time). An instrument that reads every 10 s is then not called
   * stale after 5 s; the configured interval stays the floor, so a burst of lines cannot
   * make the watchdog jumpy.
   */
  private noteSpacing(spacing_ms: number): void {
    if (!(spacing_ms > 0)) return;
    this.spacings_ms.push(spacing_ms);
    if (this.spacings_ms.length > 9) this.spacings_ms.shift();
  }

  /**
   * How long a silence makes the feed stale. Until two readings have shown the pace, a
   * minute at least (FIRST_PACE_ALLOWANCE_MS): a slow instrument's first gap is not a fault.
   */
  private staleThreshold_ms(): number {
    const configured = this.expectedInterval_s * 1000;
    if (this.spacings_ms.length === 0) return Math.max(this.staleAfter * configured, FIRST_PACE_ALLOWANCE_MS);
    const sorted = [...this.spacings_ms].sort((a, b) => a - b);
    return this.staleAfter * Math.max(configured, sorted[Math.floor(sorted.length / 2)]!);
  }

  private async listPorts(): Promise<PortListing[]> {
    try {
      return (await this.binding.list()).map((p) => ({ path: p.path, manufacturer: p.manufacturer, serialNumber: p.serialNumber }));
    } catch {
      return [];
    }
  }

  private openPort(path: string): Promise<Port> {
    // The binding goes in through the options (serialport spreads them over its default).
    const options = { path, baudRate: this.baudRate, autoOpen: false, binding: this.binding };
    const port = new SerialPort(options);
    return new Promise((resolve, reject) => port.open((err) => (err ? reject(err) : resolve(port))));
  }

  private async attach(path: string): Promise<void> {
    const port = await this.openPort(path);
    if (this.closing) { port.close(); return; }
    this.port = port;
    this.path = path;
    this.lastActivity_ms = this.now();
    // latin1 maps every byte to one character, so binary noise reaches the parser as such and is counted.
    // The cap bounds what the readline parser buffers when a device sends bytes without a line end.
    const lines = port.pipe(new LineCap(MAX_LINE_CHARS + 2)).pipe(new ReadlineParser({ delimiter: '\n', encoding: 'latin1' }));
    lines.on('data', (line: string) => this.onLine(line));
    port.on('error', () => undefined); // a failed write or read surfaces as 'close' with a disconnect error
    port.on('close', (err?: Error | null) => this.onClose(port, err ?? null));
    this.status({ kind: 'connected', detail: `${path} at ${this.baudRate} baud` });
    // Ask the device who it is: its identity says whether it sends absorbance or counts.
    if (!this.plainLines) void this.channel.send({ type: 'who' }, (l) => { port.write(l, 'latin1'); });
  }

  private onLine(raw: string): void {
    const host = this.now();
    // The host time lets the reader refuse a device time that leaps far ahead of it (deviceTimeLine.ts).
    const parsed = this.parser.parse(raw, host);
    if (parsed.kind !== 'rejected' && parsed.kind !== 'empty') { this.lastActivity_ms = host; this.heardFromDevice = true; }
    const hadIdentity = this.assembler.identity;
    this.assembler.accept(parsed, raw, host, this.parser.rejected);
    if (parsed.kind === 'identity' && hadIdentity?.serial !== parsed.identity.serial) {
      this.status({ kind: 'connected', detail: `${this.path} at ${this.baudRate} baud`, identity: parsed.identity });
    }
  }

  private onClose(port: Port, err: Error | null): void {
    if (port !== this.port) return;
    this.port = null;
    if (this.closing) return;
    this.interrupted(err ? `disconnected: ${err.message}` : 'the port closed');
  }

  private interrupted(reason: string): void {
    this.status({ kind: 'disconnected', detail: `${this.path}: ${reason}` });
    this.channel.failAll(`the port ${this.path} went away`);
    this.assembler.finishBlank();
    if (!this.pendingGap) this.pendingGap = { from_ms: this.lastReading_ms ?? this.now(), reason };
    void this.reconnectLoop();
  }

  private checkStale(): void {
    const port = this.port;
    if (this.closing || this.reconnecting || !port) return;
    if (!this.present(this.path)) {
      // The device node is gone: the cable is out, whether or not the port noticed.
      this.port = null;
      port.close(() => undefined);
      this.interrupted('the device node vanished (cable pulled?)');
      return;
    }
    if (!this.expecting || !this.heardFromDevice) return;
    const since = this.now() - Math.max(this.lastActivity_ms, this.lastReading_ms ?? 0);
    if (since <= this.staleThreshold_ms()) return;
    this.status({ kind: 'stale', sinceLastReading_ms: since, detail: `no reading from ${this.path} for ${(since / 1000).toFixed(1)} s; reopening the port` });
    if (!this.pendingGap) this.pendingGap = { from_ms: this.lastReading_ms ?? this.now(), reason: 'feed went stale' };
    this.port = null; // onClose ignores this port from now on
    port.close(() => undefined);
    this.channel.failAll(`the feed from ${this.path} went stale`);
    void this.reconnectLoop();
  }

  /** The path to try: the same one, or where the same serial number now appears. */
  private async resolvePath(): Promise<string> {
    const ports = await this.listPorts();
    if (ports.some((p) => p.path === this.path)) return this.path;
    if (this.serialNumber) {
      const moved = ports.find((p) => p.serialNumber === this.serialNumber);
      if (moved) {
        this.emit({ type: 'warning', message: `the device with serial number ${this.serialNumber} came back on ${moved.path} (was ${this.path})` });
        return moved.path;
      }
    }
    return this.path;
  }

  private async reconnectLoop(): Promise<void> {
    if (this.reconnecting) return;
    this.reconnecting = true;
    let delay = this.backoff.initialDelay_ms;
    try {
      for (let attempt = 1; !this.closing; attempt++) {
        this.status({ kind: 'reconnecting', attempt, delay_ms: delay, detail: `reopening ${this.path} in ${(delay / 1000).toFixed(2)} s` });
        await new Promise<void>((resolve) => {
          const t = setTimeout(resolve, delay);
          this.wake = () => { clearTimeout(t); resolve(); };
        });
        this.wake = null;
        if (this.closing) return;
        try {
          await this.attach(await this.resolvePath());
          return;
        } catch {
          delay = Math.min(this.backoff.maxDelay_ms, delay * this.backoff.factor);
        }
      }
    } finally {
      this.reconnecting = false;
    }
  }
}
