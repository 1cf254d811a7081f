import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { SerialPortMock } from 'serialport';

// @serialport/binding-mock, reached through serialport's re-export: the mock package's own
// type declarations are not reachable under this project's module resolution (Bundler).
const MockBinding = SerialPortMock.binding;
type MockPortBinding = Awaited<ReturnType<typeof MockBinding.open>>;
import { SerialSource, type PortBinding } from './serialSource';
import { openFailureMessage, classifyOpenError } from './portErrors';
import { SimulatedInstrument, defaultInstrumentSettings } from './simulatedInstrument';
import fc from 'fast-check';
import { formatAbsorbance } from '../protocol/lineFormat';
import type { Reading, SourceEvent } from './sourceTypes';

const reaction = { order: 'first' as const, k: 0.004, a0: 0.65, aInf: 0.005 };
const wait = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function until(cond: () => boolean, what: string, timeout_ms = 3000): Promise<void> {
  const t0 = Date.now();
  while (!cond()) {
    if (Date.now() - t0 > timeout_ms) throw new Error(`timed out waiting for ${what}`);
    await wait(5);
  }
}

/**
 * A bench of mock ports: ports can be plugged and pulled, each carries a USB serial
 * number, and behind each open port a simulated instrument answers the host's commands.
 */
class MockBench {
  private readonly present = new Map<string, string>(); // path → serial number
  readonly opened: { path: string; port: MockPortBinding }[] = [];
  denied = new Set<string>();
  instrument = new SimulatedInstrument(defaultInstrumentSettings(reaction));
  readonly binding: PortBinding = {
    list: async () => [...this.present].map(([path, serialNumber]) => ({ path, manufacturer: 'Mock', serialNumber })),
    open: async (opts: { path: string }) => {
      if (this.denied.has(opts.path)) throw new Error(`Error: Permission denied, cannot open ${opts.path}`);
      if (!this.present.has(opts.path)) throw new Error(`Error: No such file or directory, cannot open ${opts.path}`);
      const port = await MockBinding.open(opts as Parameters<typeof MockBinding.open>[0]);
      const write = port.write.bind(port);
      port.write = async (buf: Buffer) => {
        await write(buf);
        const replies = buf.toString('latin1').split('\n').filter(Boolean).flatMap((l) => this.instrument.handle(l + '\n'));
        setTimeout(() => { for (const r of replies) if (port.isOpen) port.emitData(r); }, 1);
      };
      this.opened.push({ path: opts.path, port });
      return port;
    },
  };
  plug(path: string, serial: string): void {
    MockBinding.createPort(path);
    this.present.set(path, serial);
  }
  /** The cable comes out: the port vanishes and its pending read fails as a real one does (EIO). */
  pull(path: string): void {
    this.present.delete(path);
    const open = this.current(path);
    const pending = (open as unknown as { pendingRead: ((e: Error) => void) | null }).pendingRead;
    if (pending) pending(Object.assign(new Error('EIO: input/output error, read'), { code: 'EIO' }));
  }
  current(path: string): MockPortBinding {
    const o = [...this.opened].reverse().find((x) => x.path === path && x.port.isOpen);
    if (!o) throw new Error(`no open port at ${path}`);
    return o.port;
  }
  send(path: string, lines: string[]): void {
    const p = this.current(path);
    for (const l of lines) p.emitData(l);
  }
}

function record(source: SerialSource) {
  const events: SourceEvent[] = [];
  const readings: Reading[] = [];
  source.on((e) => { events.push(e); if (e.type === 'reading') readings.push(e.reading); });
  const statuses = () => events.flatMap((e) => (e.type === 'status' ? [e.status.kind] : []));
  return { events, readings, statuses };
}

let bench: MockBench;
let sources: SerialSource[] = [];
beforeEach(() => { MockBinding.reset(); bench = new MockBench(); sources = []; });
afterEach(async () => { for (const s of sources) await s.close(); });
const make = (path: string, more: Partial<ConstructorParameters<typeof SerialSource>[0]> = {}) => {
  const s = new SerialSource({ path, binding: bench.binding, expectedInterval_s: 0.05, reconnect: { initialDelay_ms: 20, maxDelay_ms: 80 }, ...more });
  sources.push(s);
  return s;
};

describe('serial source: opening', () => {
  it('says the port is missing and lists the ports that exist', async () => {
    bench.plug('/dev/ttyUSB1', 'A1B2');
    bench.plug('/dev/ttyACM0', 'C3');
    const s = make('/dev/ttyUSB0');
    const { events } = record(s);
    await expect(s.open()).rejects.toThrow(/serial port \/dev\/ttyUSB0 not found \(ports present: \/dev\/ttyUSB1 \(Mock, serial A1B2\), \/dev\/ttyACM0 \(Mock, serial C3\)\)/);
    expect(events.at(-1)).toMatchObject({ type: 'status', status: { kind: 'error' } });
  });

  it('says a busy port is held by another program', async () => {
    bench.plug('/dev/ttyUSB0', 'A1');
    await MockBinding.open({ path: '/dev/ttyUSB0', baudRate: 115200 }); // another program has it
    await expect(make('/dev/ttyUSB0').open()).rejects.toThrow(/busy: another program has it open/);
  });

  it('names the group that grants access when permission is denied', async () => {
    bench.plug('/dev/ttyUSB0', 'A1');
    bench.denied.add('/dev/ttyUSB0');
    await expect(make('/dev/ttyUSB0').open()).rejects.toThrow(/no permission .*usually dialout.*usermod -aG dialout/);
    const e = openFailureMessage('/dev/ttyS0', Object.assign(new Error('x'), { code: 'EACCES' }), [], 'linux', 'uucp');
    expect(e.message).toMatch(/owns it \(uucp\): sudo usermod -aG uucp/);
    expect(classifyOpenError(new Error('Error Resource temporarily unavailable Cannot lock port'))).toBe('busy');
  });
});

describe('serial source: running', () => {
  it('passes readings on in order and learns the identity', async () => {
    bench.plug('/dev/ttyUSB0', 'A1');
    const s = make('/dev/ttyUSB0');
    const { readings, events } = record(s);
    await s.open();
    await until(() => events.some((e) => e.type === 'status' && e.status.kind === 'connected' && e.status.identity !== undefined), 'identity');
    for (let t = 1; t <= 20; t++) bench.send('/dev/ttyUSB0', bench.instrument.measure(t));
    bench.send('/dev/ttyUSB0', ['garbage\n', 'a 21.000 630.0 0.5 - - ^0000\n']);
    await until(() => readings.length === 20 && s.rejectedCounts().checksum === 1, 'readings');
    expect(readings.map((r) => r.deviceTime_s)).toEqual(Array.from({ length: 20 }, (_, i) => i + 1));
    expect(s.rejectedCounts()).toMatchObject({ malformed: 1, checksum: 1 });
    expect(await s.command({ type: 'setWavelength', wavelength_nm: 9999 })).toMatchObject({ ok: false, error: /wavelength out of range/ });
    expect(await s.command({ type: 'setInterval', interval_s: 0.05 })).toEqual({ ok: true });
  });

  it('after a pulled cable: disconnected, reconnects with back-off, a gap, and the run goes on', async () => {
    bench.plug('/dev/ttyUSB0', 'A1');
    const s = make('/dev/ttyUSB0', { staleAfterIntervals: 1000 });
    const { readings, events, statuses } = record(s);
    await s.open();
    for (let t = 1; t <= 5; t++) bench.send('/dev/ttyUSB0', bench.instrument.measure(t));
    await until(() => readings.length === 5, 'first readings');
    await wait(10);
    bench.pull('/dev/ttyUSB0');
    await until(() => statuses().filter((k) => k === 'reconnecting').length >= 3, 'several attempts');
    expect(statuses()).toContain('disconnected');
    const delays = events.flatMap((e) => (e.type === 'status' && e.status.kind === 'reconnecting' ? [e.status.delay_ms] : []));
    expect(delays.slice(0, 3)).toEqual([20, 40, 80]); // back-off doubles up to its ceiling
    bench.plug('/dev/ttyUSB0', 'A1');
    await until(() => statuses().at(-1) === 'connected' || statuses().includes('connected') && bench.opened.length === 2, 'reconnected');
    await until(() => bench.opened.length === 2, 'second open');
    await wait(10);
    for (let t = 9; t <= 12; t++) bench.send('/dev/ttyUSB0', bench.instrument.measure(t));
    await until(() => readings.length === 9, 'readings after the reconnection');
    const gap = events.find((e) => e.type === 'gap');
    expect(gap).toBeDefined();
    if (gap?.type === 'gap') {
      expect(gap.from_ms).toBe(readings[4]!.hostTime_ms);
      expect(gap.to_ms).toBe(readings[5]!.hostTime_ms);
    }
    expect(events.findIndex((e) => e.type === 'gap')).toBeLessThan(events.findIndex((e) => e.type === 'reading' && e.reading.deviceTime_s === 9));
  });

  it('follows the same serial number when the device comes back on another path', async () => {
    bench.plug('/dev/ttyUSB0', 'FT1234');
    const s = make('/dev/ttyUSB0', { staleAfterIntervals: 1000 });
    const { readings, events } = record(s);
    await s.open();
    await wait(10);
    bench.pull('/dev/ttyUSB0');
    await wait(30);
    bench.plug('/dev/ttyUSB1', 'FT1234');
    await until(() => bench.opened.some((o) => o.path === '/dev/ttyUSB1'), 'reopened on the new path');
    await wait(10);
    bench.send('/dev/ttyUSB1', bench.instrument.measure(3));
    await until(() => readings.length === 1, 'reading on the new path');
    expect(events.some((e) => e.type === 'warning' && /serial number FT1234 came back on \/dev\/ttyUSB1/.test(e.message))).toBe(true);
  });

  it('marks a silent feed stale after several intervals and reopens the port', async () => {
    bench.plug('/dev/ttyUSB0', 'A1');
    const s = make('/dev/ttyUSB0', { staleAfterIntervals: 4 }); // 4 × 50 ms
    const { readings, events, statuses } = record(s);
    await s.open();
    // Two readings 50 ms apart show the pace; then the device falls silent.
    bench.send('/dev/ttyUSB0', bench.instrument.measure(1));
    await wait(50);
    bench.send('/dev/ttyUSB0', bench.instrument.measure(2));
    await until(() => readings.length === 2, 'two readings');
    await until(() => statuses().includes('stale'), 'stale', 2000);
    const stale = events.find((e) => e.type === 'status' && e.status.kind === 'stale');
    if (stale?.type === 'status' && stale.status.kind === 'stale') expect(stale.status.sinceLastReading_ms).toBeGreaterThan(200);
    await until(() => bench.opened.length >= 2, 'reopened');
    await wait(10);
    bench.send('/dev/ttyUSB0', bench.instrument.measure(3));
    await until(() => readings.length === 3, 'reading after reopen');
    expect(events.some((e) => e.type === 'gap' && e.reason === 'feed went stale')).toBe(true);
  });

  it('learns a slow instrument\'s pace: readings every 3 intervals are not stale, silence after them is', async () => {
    bench.plug('/dev/ttyUSB0', 'A1');
    // Configured: 50 ms readings, stale after 2 of them (100 ms). The device reads every 150 ms,
    // so the configured rule alone (the negative control) would call every gap stale.
    const s = make('/dev/ttyUSB0', { staleAfterIntervals: 2 });
    const { readings, statuses } = record(s);
    await s.open();
    for (let i = 1; i <= 8; i++) { if (i > 1) await wait(150); bench.send('/dev/ttyUSB0', bench.instrument.measure(i)); }
    await until(() => readings.length === 8, 'the slow readings');
    expect(statuses()).not.toContain('stale');
    await until(() => statuses().includes('stale'), 'stale once the readings stop', 3000);
  });

  it('does not call a stopped device stale', async () => {
    bench.plug('/dev/ttyUSB0', 'A1');
    const s = make('/dev/ttyUSB0', { staleAfterIntervals: 2 });
    const { statuses } = record(s);
    await s.open();
    expect(await s.command({ type: 'stop' })).toEqual({ ok: true });
    await wait(300);
    expect(statuses()).not.toContain('stale');
  });

  it('warns once when the cell temperature drifts more than 0.5 K', async () => {
    bench.plug('/dev/ttyUSB0', 'A1');
    const s = make('/dev/ttyUSB0');
    const { events, readings } = record(s);
    await s.open();
    // common practice: hold a kinetics cell within about ±0.5 K
    const temps = [25.0, 25.1, 25.3, 25.45, 25.62, 25.7, 25.8];
    bench.send('/dev/ttyUSB0', temps.map((c, i) => formatAbsorbance(i + 1, 630, 0.5, c)));
    await until(() => readings.length === temps.length, 'readings');
    const warnings = events.filter((e) => e.type === 'warning' && /cell temperature 25.62 °C has moved \+0.62 K/.test(e.message));
    expect(warnings.length).toBe(1);
    expect(events.filter((e) => e.type === 'warning').length).toBe(1);
  });

  it('takes a blank on a counts device and turns counts into absorbance', async () => {
    bench.instrument = new SimulatedInstrument(defaultInstrumentSettings(reaction, { sends: 'counts' }));
    bench.plug('/dev/ttyUSB0', 'A1');
    const s = make('/dev/ttyUSB0', { blankDuration_s: 3 });
    const { events, readings } = record(s);
    await s.open();
    expect(await s.command({ type: 'takeBlank' })).toEqual({ ok: true });
    for (let t = 1; t <= 8; t++) bench.send('/dev/ttyUSB0', bench.instrument.measure(t));
    await until(() => readings.length === 5, 'readings after the blank');
    const blank = events.find((e) => e.type === 'blank');
    expect(blank?.type === 'blank' && blank.blank.points).toBe(3);
    for (const r of readings) {
      if (blank?.type !== 'blank') break;
      // common practice: A = −log10((I − I_dark)/(I_blank − I_dark))
      expect(r.absorbance).toBeCloseTo(-Math.log10((r.sampleCounts! - r.darkCounts!) / blank.blank.netBlank_counts), 12);
    }
  });
});

describe('serial source: other line formats and unplug detection', () => {
  it('reads an instrument that prints plain delimited lines (%T) and refuses commands to it', async () => {
    bench.plug('/dev/ttyUSB0', 'A1');
    const s = make('/dev/ttyUSB0', { delimited: { delimiter: ',', columns: { time: 0, value: 1 }, timeUnit: 's', valueUnit: 'percentT', wavelength_nm: 630 } });
    const { readings } = record(s);
    await s.open();
    bench.send('/dev/ttyUSB0', ['time,%T\n', '1,50\n', '2,10\n', '3,oops\n']);
    await until(() => readings.length === 2 && s.rejectedCounts().malformed === 1, 'readings');
    // common practice: A = 2 − log10(%T)
    expect(readings[0]!.absorbance).toBeCloseTo(0.30103, 5);
    expect(readings[1]!.absorbance).toBeCloseTo(1, 12);
    expect(await s.command({ type: 'start' })).toMatchObject({ ok: false, error: /takes no commands/ });
  });

  it('counts a runaway line without end once as overlong and reads on', async () => {
    bench.plug('/dev/ttyUSB0', 'A1');
    const s = make('/dev/ttyUSB0');
    const { readings } = record(s);
    await s.open();
    for (let i = 0; i < 20; i++) bench.send('/dev/ttyUSB0', ['9'.repeat(10_000)]);
    bench.send('/dev/ttyUSB0', ['\n', formatAbsorbance(1, 630, 0.5, null)]);
    await until(() => readings.length === 1, 'the reading after the runaway line');
    expect(s.rejectedCounts().overlong).toBe(1);
  });

  it("calls it 'disconnected' when the device node vanishes though the port said nothing", async () => {
    bench.plug('/dev/ttyUSB0', 'A1');
    let there = true;
    const s = make('/dev/ttyUSB0', { present: () => there, staleAfterIntervals: 1000 });
    const { statuses } = record(s);
    await s.open();
    there = false;
    await until(() => statuses().includes('disconnected'), 'disconnected');
    expect(statuses()).toContain('reconnecting');
  });
});

describe('serial source: noisy bytes through the whole read path (fuzz)', () => {
  it('never passes on a non-finite or out-of-order reading, whatever the bytes and their chunking', async () => {
    await fc.assert(fc.asyncProperty(
      fc.array(fc.oneof(
        fc.nat(100).map((i) => formatAbsorbance(i, 630, 0.5, 25)),
        fc.uint8Array({ maxLength: 80 }).map((b) => Buffer.from(b).toString('latin1')),
        fc.constantFrom('a 1.000 630.0 NaN - - ^0000\n', '\n\n', '\r\n', 'a 9'.padEnd(5000, '9')),
      ), { maxLength: 25 }),
      async (chunks) => {
        MockBinding.reset();
        bench = new MockBench();
        bench.plug('/dev/ttyUSB0', 'A1');
        const s = new SerialSource({ path: '/dev/ttyUSB0', binding: bench.binding, expectedInterval_s: 10 });
        const readings: Reading[] = [];
        s.on((e) => { if (e.type === 'reading') readings.push(e.reading); });
        await s.open();
        for (const c of chunks) bench.send('/dev/ttyUSB0', [c]);
        await wait(5);
        await s.close();
        for (let i = 0; i < readings.length; i++) {
          const r = readings[i]!;
          if (!Number.isFinite(r.absorbance) || !Number.isFinite(r.deviceTime_s)) return false;
          if (i > 0 && r.deviceTime_s < readings[i - 1]!.deviceTime_s) return false;
        }
        return true;
      }), { numRuns: 60 });
  });
});
