/**
 * A real serial line end to end: socat makes a pty pair, `rateline emulate` (a child
 * process) plays the instrument on one end, a SerialSource reads the other and feeds
 * the streaming analyzer. Then socat is killed and started again on the same link paths
 * mid-run: the source must report the loss, reconnect, mark the gap and go on. The
 * readings and events are left in test-artifacts/serial-loopback.jsonl.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { SerialSource } from '../acquisition/sources/serialSource';
import type { Reading, SourceEvent } from '../acquisition/sources/sourceTypes';
import { RunAnalyzer } from '../kinetics/runAnalyzer';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const artifacts = join(root, 'test-artifacts');
const K_TRUE = 0.02; // the emulator's rate constant (s⁻¹): the reference the analyzer's k is checked against
const SPEED = 50;

const wait = (ms: number) => new Promise((r) => setTimeout(r, ms));
async function until(cond: () => boolean, what: string, timeout_ms: number): Promise<void> {
  const t0 = Date.now();
  while (!cond()) {
    if (Date.now() - t0 > timeout_ms) throw new Error(`timed out after ${timeout_ms} ms waiting for ${what}`);
    await wait(10);
  }
}

/** Starts socat with fixed link names; resolves with the two /dev/pts paths it reports on stderr. */
function startSocat(devLink: string, hostLink: string): Promise<{ proc: ChildProcess; ptys: string[] }> {
  return new Promise((resolve, reject) => {
    const proc = spawn('socat', ['-d', '-d', `pty,raw,echo=0,link=${devLink}`, `pty,raw,echo=0,link=${hostLink}`], { stdio: ['ignore', 'ignore', 'pipe'] });
    const ptys: string[] = [];
    let err = '';
    const timer = setTimeout(() => reject(new Error(`socat did not report two ptys: ${err}`)), 5000);
    proc.stderr!.setEncoding('utf8');
    proc.stderr!.on('data', (chunk: string) => {
      err += chunk;
      for (const m of chunk.matchAll(/PTY is (\/dev\/pts\/\d+)/g)) ptys.push(m[1]!);
      if (ptys.length === 2 && /starting data transfer loop/.test(err)) {
        clearTimeout(timer);
        resolve({ proc, ptys });
      }
    });
    proc.on('error', (e) => { clearTimeout(timer); reject(e); });
  });
}

function stop(proc: ChildProcess | null, signal: NodeJS.Signals = 'SIGTERM'): Promise<number | null> {
  if (!proc || proc.exitCode !== null || proc.signalCode !== null) return Promise.resolve(proc?.exitCode ?? null);
  return new Promise((resolve) => {
    const t = setTimeout(() => proc.kill('SIGKILL'), 5000);
    proc.once('exit', (code) => { clearTimeout(t); resolve(code); });
    proc.kill(signal);
  });
}

describe('serial loopback through a real pty pair', () => {
  let dir = '';
  let socat: ChildProcess | null = null;
  let emulator: ChildProcess | null = null;
  let source: SerialSource | null = null;
  const events: SourceEvent[] = [];
  const readings: Reading[] = [];
  const analyzer = new RunAnalyzer();
  let emulatorOut = '';

  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'rateline-loop-'));
  });

  afterAll(async () => {
    await source?.close();
    await stop(emulator);
    await stop(socat);
    mkdirSync(artifacts, { recursive: true });
    writeFileSync(join(artifacts, 'serial-loopback.jsonl'), events.map((e) => JSON.stringify(e)).join('\n') + '\n');
    rmSync(dir, { recursive: true, force: true });
  });

  it('carries every reading in order, then rides out socat being killed and restarted', async () => {
    const devLink = join(dir, 'device');
    const hostLink = join(dir, 'host');
    const first = await startSocat(devLink, hostLink);
    socat = first.proc;
    expect(first.ptys).toHaveLength(2);
    await until(() => existsSync(devLink) && existsSync(hostLink), 'the link paths', 3000);

    // The host side opens first, so that it sees the emulator's first line.
    source = new SerialSource({
      path: hostLink, expectedInterval_s: 1 / SPEED, staleAfterIntervals: 250, // 5 s: a busy machine's pause is not a stale feed
      reconnect: { initialDelay_ms: 100, maxDelay_ms: 400 },
    });
    source.on((e) => {
      events.push(e);
      if (e.type === 'reading') { readings.push(e.reading); analyzer.add(e.reading.deviceTime_s, e.reading.absorbance); }
    });
    await source.open();
    emulator = spawn(process.execPath, [join(root, 'bin/rateline.js'), 'emulate', '--port', devLink, '--speed', String(SPEED), '--k', String(K_TRUE), '--seed', '11'], { cwd: root, stdio: ['ignore', 'pipe', 'pipe'] });
    emulator.stdout!.on('data', (d) => (emulatorOut += d));
    emulator.stderr!.on('data', (d) => (emulatorOut += d));

    await until(() => readings.length >= 150, '150 readings', 20_000);
    const before = readings.slice();
    // Every reading arrives, in order, with no gap in device time (one reading per device second).
    expect(before[0]!.deviceTime_s).toBe(1);
    for (let i = 1; i < before.length; i++) expect(before[i]!.deviceTime_s - before[i - 1]!.deviceTime_s).toBeCloseTo(1, 6);
    expect(events.some((e) => e.type === 'status' && e.status.kind === 'connected' && e.status.identity?.model === 'emulator')).toBe(true);
    expect(events.filter((e) => e.type === 'rejected')).toEqual([]);
    // The analyzer saw them all; its first-order k agrees with the emulator's true k within its 95% CI.
    const result = analyzer.flush();
    expect(result.points).toBe(analyzer.count);
    expect(analyzer.count).toBeGreaterThanOrEqual(150);
    const ci = result.models.first.kCI95;
    expect(ci).not.toBeNull();
    expect(ci![0]).toBeLessThan(K_TRUE);
    expect(ci![1]).toBeGreaterThan(K_TRUE);
    expect(ci![0]).toBeGreaterThan(0.0035 * 2); // negative control: the CI is tight enough to exclude the demo's k (0.0035 s⁻¹)

    // Pull the line: kill socat, wait, start it again on the same link paths.
    const countAtKill = readings.length;
    await stop(socat);
    await until(() => events.some((e) => e.type === 'status' && e.status.kind === 'disconnected'), "'disconnected'", 5000);
    await wait(600);
    const second = await startSocat(devLink, hostLink);
    socat = second.proc;
    await until(() => events.some((e) => e.type === 'gap'), 'the gap event', 15_000);
    await until(() => readings.length >= countAtKill + 100, '100 readings after the reconnection', 20_000);

    const kinds = events.flatMap((e) => (e.type === 'status' ? [e.status.kind] : []));
    const lost = kinds.indexOf('disconnected');
    expect(kinds.indexOf('reconnecting', lost)).toBeGreaterThan(lost);
    expect(kinds.indexOf('connected', lost)).toBeGreaterThan(lost);
    const gap = events.find((e) => e.type === 'gap');
    if (gap?.type !== 'gap') throw new Error('no gap event');
    const gapAt = readings.findIndex((r) => r.hostTime_ms === gap.to_ms);
    expect(gapAt).toBeGreaterThanOrEqual(countAtKill);
    expect(gap.from_ms).toBe(readings[gapAt - 1]!.hostTime_ms);
    // Device time jumps over the outage (the emulator kept measuring), then runs on second by second.
    expect(readings[gapAt]!.deviceTime_s - readings[gapAt - 1]!.deviceTime_s).toBeGreaterThan(5);
    for (let i = 1; i < readings.length; i++) expect(readings[i]!.deviceTime_s).toBeGreaterThan(readings[i - 1]!.deviceTime_s);
    const after = readings.slice(gapAt + 1);
    for (let i = 1; i < after.length; i++) expect(after[i]!.deviceTime_s - after[i - 1]!.deviceTime_s).toBeCloseTo(1, 6);
    expect(events.filter((e) => e.type === 'gap')).toHaveLength(1);

    // The emulator stops cleanly on SIGTERM.
    const code = await stop(emulator);
    emulator = null;
    expect(code).toBe(0);
    expect(emulatorOut).toMatch(/stopped \(SIGTERM\)/);
  }, 90_000);
});

describe('serial loopback: a counts instrument and the blank over the real line', () => {
  let dir = '';
  let socat: ChildProcess | null = null;
  let emulator: ChildProcess | null = null;
  let source: SerialSource | null = null;
  const events: SourceEvent[] = [];

  beforeAll(() => { dir = mkdtempSync(join(tmpdir(), 'rateline-loop-counts-')); });
  afterAll(async () => {
    await source?.close();
    await stop(emulator);
    await stop(socat);
    mkdirSync(artifacts, { recursive: true });
    writeFileSync(join(artifacts, 'serial-loopback-counts.jsonl'), events.map((e) => JSON.stringify(e)).join('\n') + '\n');
    rmSync(dir, { recursive: true, force: true });
  });

  it('takes the blank by command, then gives absorbance from counts that the analyzer fits', async () => {
    const devLink = join(dir, 'device');
    const hostLink = join(dir, 'host');
    socat = (await startSocat(devLink, hostLink)).proc;
    await until(() => existsSync(devLink) && existsSync(hostLink), 'the link paths', 3000);
    source = new SerialSource({ path: hostLink, expectedInterval_s: 1 / SPEED, staleAfterIntervals: 250, blankDuration_s: 5 });
    const readings: Reading[] = [];
    const analyzer = new RunAnalyzer();
    source.on((e) => {
      events.push(e);
      if (e.type === 'reading') { readings.push(e.reading); analyzer.add(e.reading.deviceTime_s, e.reading.absorbance); }
    });
    await source.open();
    emulator = spawn(process.execPath, [join(root, 'bin/rateline.js'), 'emulate', '--port', devLink, '--speed', String(SPEED), '--k', String(K_TRUE), '--counts', '--seed', '5'], { cwd: root, stdio: 'ignore' });
    await until(() => events.some((e) => e.type === 'status' && e.status.kind === 'connected' && e.status.identity?.sends === 'counts'), 'the identity', 15_000);
    expect(readings).toHaveLength(0); // no blank yet: counts cannot be absorbance
    expect(await source.command({ type: 'takeBlank' })).toEqual({ ok: true });
    await until(() => readings.length >= 120, '120 readings after the blank', 20_000);
    const blank = events.find((e) => e.type === 'blank');
    if (blank?.type !== 'blank') throw new Error('no blank event');
    expect(blank.blank.points).toBe(5);
    // The emulator's lamp gives 50000 net counts through the blank (σ_T 0.001 → about ±50 counts)
    expect(Math.abs(blank.blank.netBlank_counts - 50000)).toBeLessThan(200);
    for (const r of readings) {
      // common practice: A = −log10((I − I_dark)/(I_blank − I_dark))
      expect(r.absorbance).toBeCloseTo(-Math.log10((r.sampleCounts! - r.darkCounts!) / blank.blank.netBlank_counts), 12);
    }
    for (let i = 1; i < readings.length; i++) expect(readings[i]!.deviceTime_s - readings[i - 1]!.deviceTime_s).toBeCloseTo(1, 6);
    const ci = analyzer.flush().models.first.kCI95;
    expect(ci![0]).toBeLessThan(K_TRUE);
    expect(ci![1]).toBeGreaterThan(K_TRUE);
    expect(await source.command({ type: 'setWavelength', wavelength_nm: 50 })).toMatchObject({ ok: false, error: /wavelength out of range/ });
  }, 60_000);
});
