/**
 * `rateline record --port` over a real serial line: socat makes a pty pair, `rateline
 * emulate --counts` plays a counts-sending instrument on one end, and `rateline record`
 * records from the other, taking the blank first, until its time limit. The record is
 * left in test-artifacts/serial-record.jsonl.
 */
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { analysisReadings, readRunRecord } from '../acquisition/record/journalReader';
import { ReadingFlag } from '../acquisition/sources/sourceTypes';
import { RunAnalyzer } from '../kinetics/runAnalyzer';
import { ChildGroup, exitOf, socatPair } from './childProcesses';

const root = join(import.meta.dirname, '..');
const bin = join(root, 'bin', 'rateline.js');
const artifacts = join(root, 'test-artifacts');
const recordPath = join(artifacts, 'serial-record.jsonl');
const dir = mkdtempSync(join(tmpdir(), 'rateline-record-serial-'));
const devLink = join(dir, 'dev');
const hostLink = join(dir, 'host');
const children = new ChildGroup(root);
const launch = (cmd: string, args: string[]) => children.launch(cmd, args);

afterAll(async () => {
  await children.stopAll();
  rmSync(dir, { recursive: true, force: true });
});

describe('rateline record from a serial instrument', () => {
  it('takes the blank first from a counts device, then records and analyses until the limit', async () => {
    mkdirSync(artifacts, { recursive: true });
    rmSync(recordPath, { force: true }); // this test owns the name; a record itself is never overwritten
    await socatPair(children, devLink, hostLink);
    const emulator = launch(process.execPath, [bin, 'emulate', '--port', devLink, '--counts', '--speed', '100', '--seed', '5']);
    let emulatorErr = '';
    emulator.stderr!.on('data', (d: Buffer) => (emulatorErr += d.toString()));
    const recorder = launch(process.execPath, [bin, 'record', '--port', hostLink, '--out', recordPath, '--max-seconds', '300', '--progress', 'json', '--progress-ms', '200', '--sample', 'demo dye, serial line', '--operator', 'demo', '--wavelength-nm', '630', '--path-cm', '1.00', '--conc', 'hypochlorite=0.010 M']);
    let out = '';
    let err = '';
    recorder.stdout!.on('data', (d: Buffer) => (out += d.toString()));
    recorder.stderr!.on('data', (d: Buffer) => (err += d.toString()));
    const code = await exitOf(recorder);
    expect({ code, err, emulatorErr }).toMatchObject({ code: 0, err: '' });

    const summary = JSON.parse(out.trimEnd().split('\n').at(-1)!) as { stopped: string; readings: number };
    expect(summary.stopped).toBe('limit');
    const rec = readRunRecord(recordPath);
    expect(rec.recovery.clean).toBe(true);
    expect(rec.header.run).toMatchObject({ sample: 'demo dye, serial line', operator: 'demo', wavelength_nm: 630, path_cm: 1, concentrations: [{ name: 'hypochlorite', value: 0.01, unit: 'M' }] });
    expect(rec.header.instrument).toMatchObject({ source: 'serial', port: hostLink, baud: 115200 });
    const kinds = rec.events.map((e) => e.event.ev);
    // The blank comes before time zero, and the identity (a counts device) before the blank.
    expect(kinds.indexOf('meta')).toBeLessThan(kinds.indexOf('blank'));
    expect(kinds.indexOf('blank')).toBeLessThan(kinds.indexOf('mixed'));
    expect(rec.events.find((e) => e.event.ev === 'meta')!.event).toMatchObject({ instrument: { identity: { sends: 'counts' } } });
    // Readings computed from counts carry their raw intensities and the flag that says so.
    const mixed = rec.events.find((e) => e.event.ev === 'mixed')!;
    expect(rec.readings.count - mixed.index).toBe(301);
    for (let i = mixed.index; i < rec.readings.count; i++) {
      expect(rec.readings.flags[i]! & ReadingFlag.fromIntensity).toBe(ReadingFlag.fromIntensity);
      expect(Number.isFinite(rec.readings.sampleCounts[i])).toBe(true);
      expect(Number.isFinite(rec.readings.darkCounts[i])).toBe(true);
    }
    // Beer–Lambert by the definition: A = −log10((I − I_dark)/(I_blank − I_dark)), with the blank's net counts.
    const blank = rec.events.find((e) => e.event.ev === 'blank')!.event as { reference?: { net_counts: number; points: number } };
    const netBlank = blank.reference!.net_counts;
    expect(blank.reference!.points).toBeGreaterThan(0);
    // The check, over every reading of the run: the record's A against A computed from its own counts by `fromCounts`.
    const agrees = (fromCounts: (sample: number, dark: number) => number): boolean => {
      for (let i = mixed.index; i < rec.readings.count; i++) {
        if (Math.abs(rec.readings.absorbance[i]! - fromCounts(rec.readings.sampleCounts[i]!, rec.readings.darkCounts[i]!)) > 5e-7) return false;
      }
      return true;
    };
    expect(agrees((s, d) => -Math.log10((s - d) / netBlank))).toBe(true);
    // Negative control: the same check fails on the classic slips, the natural logarithm and the dark left on the sample.
    expect(agrees((s, d) => -Math.log((s - d) / netBlank))).toBe(false);
    expect(agrees((s) => -Math.log10(s / netBlank))).toBe(false);
    // First order is memoryless, so k does not depend on when the device's clock started:
    // the demo k_obs = 3.5 × 10⁻³ s⁻¹ (DEMO.md) must lie inside the record's 95% CI.
    const a = new RunAnalyzer();
    const s = analysisReadings(rec);
    for (let i = 0; i < s.time_s.length; i++) a.add(s.time_s[i]!, s.absorbance[i]!);
    const ci = a.flush().models.first.kCI95!;
    expect(ci[0]).toBeLessThan(3.5e-3);
    expect(ci[1]).toBeGreaterThan(3.5e-3);
  }, 90_000);
});
