/**
 * Crash recovery, end to end: `rateline record` runs as a child process, is killed with
 * SIGKILL in the middle of a run (no handler, no chance to close anything), and the
 * record it leaves must open, recover, and hold every reading the child had handed to
 * the journal at least one second before the kill. The record is left in test-artifacts/.
 */
import { spawn } from 'node:child_process';
import { mkdirSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { describe, expect, it } from 'vitest';
import { readRunRecord } from '../acquisition/record/journalReader';
import { SimulatedSource } from '../acquisition/sources/simulatedSource';
import { defaultInstrumentSettings } from '../acquisition/sources/simulatedInstrument';
import { DEMO_RUN } from '../kinetics/reactionModel';
import type { Reading } from '../acquisition/sources/sourceTypes';

const root = join(import.meta.dirname, '..');
const artifacts = join(root, 'test-artifacts');
const recordPath = join(artifacts, 'crash-recovery.jsonl');

interface Seen {
  at_ms: number;
  journalled: number;
  deviceTime_s: number | null;
}

/** The same simulated instrument, run in-process: the readings the child must have recorded. */
async function expectedReadings(count: number): Promise<Reading[]> {
  const source = new SimulatedSource({ instrument: defaultInstrumentSettings(DEMO_RUN, { seed: 7 }), speed: 'max' });
  const out: Reading[] = [];
  await new Promise<void>((resolve) => {
    source.on((e) => {
      if (e.type !== 'reading' || out.length >= count) return;
      out.push(e.reading);
      if (out.length === count) resolve();
    });
    void source.open();
  });
  await source.close();
  return out;
}

describe('crash recovery', () => {
  it('recovers every reading handed to the journal up to a second before a SIGKILL', async () => {
    mkdirSync(artifacts, { recursive: true });
    rmSync(recordPath, { force: true }); // this test owns the name; the record itself is never overwritten
    const child = spawn(
      process.execPath,
      [join(root, 'bin', 'rateline.js'), 'record', '--simulate', '--seed', '7', '--speed', '200', '--out', recordPath, '--progress', 'json', '--progress-ms', '100'],
      { cwd: root, stdio: ['ignore', 'pipe', 'pipe'] },
    );
    const seen: Seen[] = [];
    let stderr = '';
    let buffered = '';
    child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
    const exited = new Promise<NodeJS.Signals | number | null>((resolve) => child.on('exit', (code, signal) => resolve(signal ?? code)));
    let firstAt: number | null = null;
    const recordedLongEnough = new Promise<void>((resolve, reject) => {
      child.stdout.on('data', (d: Buffer) => {
        buffered += d.toString();
        let nl: number;
        while ((nl = buffered.indexOf('\n')) >= 0) {
          const line = buffered.slice(0, nl);
          buffered = buffered.slice(nl + 1);
          const p = JSON.parse(line) as { journalled: number; deviceTime_s: number | null };
          const now = performance.now();
          if (p.journalled > 0) firstAt ??= now;
          seen.push({ at_ms: now, journalled: p.journalled, deviceTime_s: p.deviceTime_s });
          // A few seconds of recording at 200× (about 200 readings a second), and at least
          // 50 readings reported a full second ago, however slowly a loaded machine runs.
          const dueNow = seen.filter((s) => s.at_ms <= now - 1000).at(-1);
          if (firstAt !== null && now - firstAt > 3000 && (dueNow?.journalled ?? 0) > 50) resolve();
        }
      });
      void exited.then(() => reject(new Error(`rateline record exited early: ${stderr}`)));
    });
    await recordedLongEnough;
    const kill_ms = performance.now();
    child.kill('SIGKILL');
    expect(await exited).toBe('SIGKILL');

    // The last progress line that arrived a full second before the kill: what must be on disk.
    const due = seen.filter((s) => s.at_ms <= kill_ms - 1000).at(-1);
    if (!due) throw new Error(`no progress line came a second before the kill (${seen.length} lines in all)`);
    expect(due.journalled).toBeGreaterThan(50);

    const rec = readRunRecord(recordPath);
    expect(rec.end).toBeNull();
    expect(rec.recovery.clean).toBe(false);
    expect(rec.recovery.message).toContain('no end line');
    expect(rec.readings.count).toBeGreaterThanOrEqual(due.journalled);
    expect(rec.readings.t_s[due.journalled - 1]).toBe(due.deviceTime_s);
    // Nothing lost in between: the simulated instrument reads once a device second from t = 1 s.
    for (let i = 0; i < rec.readings.count; i++) expect(rec.readings.t_s[i]).toBe(i + 1);
    // And the values are the instrument's own: an in-process run of the same seed gives the same readings.
    const expected = await expectedReadings(rec.readings.count);
    for (let i = 0; i < rec.readings.count; i++) expect(rec.readings.absorbance[i]).toBe(expected[i]!.absorbance);
    const last = seen.at(-1)!;
    console.info(`crash test: ${due.journalled} readings due (1 s before the kill), ${last.journalled} last reported, ${rec.readings.count} recovered`);
    // The simulated instrument starts the reaction itself at its t = 0: the header says so,
    // and nobody pressed Mixed, so no mixed line (record version 2).
    expect(rec.header.reactionStart_s).toBe(0);
    const kinds = rec.events.map((e) => e.event.ev);
    expect(kinds).not.toContain('mixed');
    expect(kinds).not.toContain('stop');
  }, 60_000);

  it('closes the record cleanly on SIGTERM: stop and end lines, nothing dropped', async () => {
    mkdirSync(artifacts, { recursive: true });
    const path = join(artifacts, 'sigterm-stop.jsonl');
    rmSync(path, { force: true });
    const child = spawn(
      process.execPath,
      [join(root, 'bin', 'rateline.js'), 'record', '--simulate', '--speed', '100', '--out', path, '--progress', 'json', '--progress-ms', '100'],
      { cwd: root, stdio: ['ignore', 'pipe', 'pipe'] },
    );
    let out = '';
    const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
    await new Promise<void>((resolve) => {
      child.stdout.on('data', (d: Buffer) => {
        out += d.toString();
        const last = out.trimEnd().split('\n').at(-1)!;
        if ((JSON.parse(last) as { journalled: number }).journalled >= 50) resolve();
      });
    });
    child.kill('SIGTERM');
    expect(await exited).toBe(0);
    const lines = out.trimEnd().split('\n').map((l) => JSON.parse(l) as Record<string, unknown>);
    const summary = lines.at(-1)!;
    expect(summary).toMatchObject({ stopped: 'signal', detail: 'SIGTERM', record: path });
    const rec = readRunRecord(path);
    expect(rec.recovery.clean).toBe(true);
    expect(rec.end!.readings).toBe(rec.readings.count);
    expect(rec.readings.count).toBe(summary.readings);
    expect(rec.events.at(-1)!.event).toMatchObject({ ev: 'stop', reason: 'signal', detail: 'SIGTERM' });
  }, 60_000);
});
