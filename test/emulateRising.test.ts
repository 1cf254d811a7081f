/**
 * `rateline emulate` playing a rising run (an absorbing product forms, A∞ above A0) on a
 * real pty pair from socat, recorded by `rateline record` and analysed: the analyzer calls
 * it rising and first order and its k's interval covers the emulated k (demo data: k =
 * 3.5e-3 s⁻¹ as in DEMO.md, A0 0.10 rising to 0.80). The record is left in
 * test-artifacts/rising-record.jsonl.
 */
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { analysisReadings, readRunRecord } from '../acquisition/record/journalReader';
import { RunAnalyzer } from '../kinetics/runAnalyzer';
import { ChildGroup, exitOf, socatPair } from './childProcesses';

const root = join(import.meta.dirname, '..');
const bin = join(root, 'bin', 'rateline.js');
const artifacts = join(root, 'test-artifacts');
const recordPath = join(artifacts, 'rising-record.jsonl');
const dir = mkdtempSync(join(tmpdir(), 'rateline-emulate-rising-'));
const children = new ChildGroup(root);

afterAll(async () => {
  await children.stopAll();
  rmSync(dir, { recursive: true, force: true });
});

describe('rateline emulate, a rising run', () => {
  it('plays A0 0.10 → A∞ 0.80 on a serial line; the record rises and its first-order k covers the emulated one', async () => {
    mkdirSync(artifacts, { recursive: true });
    rmSync(recordPath, { force: true }); // this test owns the name
    const dev = join(dir, 'dev'), host = join(dir, 'host');
    await socatPair(children, dev, host);
    const emulator = children.launch(process.execPath, [bin, 'emulate', '--port', dev, '--a0', '0.10', '--a-inf', '0.80', '--speed', '100', '--seed', '3']);
    let emulatorErr = '';
    emulator.stderr!.on('data', (d: Buffer) => (emulatorErr += d.toString()));
    const recorder = children.launch(process.execPath, [bin, 'record', '--port', host, '--out', recordPath, '--max-seconds', '900', '--progress', 'json', '--progress-ms', '500']);
    let err = '';
    recorder.stderr!.on('data', (d: Buffer) => (err += d.toString()));
    const code = await exitOf(recorder);
    expect({ code, err, emulatorErr }).toMatchObject({ code: 0, err: '', emulatorErr: '' });
    const rec = readRunRecord(recordPath);
    const r = analysisReadings(rec);
    const count = r.time_s.length;
    expect(count).toBeGreaterThan(800);
    const a = new RunAnalyzer();
    for (let i = 0; i < count; i++) a.add(r.time_s[i]!, r.absorbance[i]!);
    const res = a.flush();
    // Rising: the last readings lie above the first ones by most of the emulated change.
    expect(r.absorbance[count - 1]! - r.absorbance[0]!).toBeGreaterThan(0.6);
    expect(res.verdict.order).toBe('first');
    const ci = res.models.first.kCI95!;
    expect(ci[0]).toBeLessThanOrEqual(3.5e-3);
    expect(ci[1]).toBeGreaterThanOrEqual(3.5e-3);
    expect(res.models.first.aInf!).toBeCloseTo(0.8, 2);
  });

  it('negative control: --a-inf equal to --a0 is refused in one sentence, exit 2', async () => {
    const c = children.launch(process.execPath, [bin, 'emulate', '--port', join(dir, 'none'), '--a0', '0.4', '--a-inf', '0.4']);
    let err = '';
    c.stderr!.on('data', (d: Buffer) => (err += d.toString()));
    expect(await exitOf(c)).toBe(2);
    expect(err.trim().split('\n')).toHaveLength(1);
    expect(err).toMatch(/--a-inf 0\.4 equals --a0, so nothing would change; /);
  });
});
