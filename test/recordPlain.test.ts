/**
 * `rateline record --plain` over a real serial line: socat makes a pty pair, `rateline
 * emulate --plain` prints plain tab-delimited lines (time, %T, cell temperature, after a
 * one-line banner) on one end and keeps a copy of what it sent, and `rateline record`
 * reads the other end with the same spec until its time limit. Every line sent within the
 * run must be in the record, as absorbance.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readRunRecord } from '../acquisition/record/journalReader';
import { DelimitedReader } from '../acquisition/plain/delimitedReader';
import { parsePlainSpec, specOfIdentity } from '../acquisition/plain/plainSpec';
import { ChildGroup, exitOf, printed, socatPair } from './childProcesses';

const root = join(import.meta.dirname, '..');
const bin = join(root, 'bin', 'rateline.js');
const dir = mkdtempSync(join(tmpdir(), 'rateline-record-plain-'));
const devLink = join(dir, 'dev');
const hostLink = join(dir, 'host');
const recordPath = join(dir, 'plain.jsonl');
const sentPath = join(dir, 'sent.txt');
const SPEC = 'time=1,time-unit=s,signal=2,signal-unit=%T,temperature=3,delimiter=tab,skip=1';
const MAX_SECONDS = 60;
const children = new ChildGroup(root);
/** `rateline ARGS`, or another program with `cmd`. */
const launch = (args: string[], cmd = process.execPath) => children.launch(cmd, cmd === process.execPath ? [bin, ...args] : args);

afterAll(async () => {
  await children.stopAll();
  rmSync(dir, { recursive: true, force: true });
});

describe('rateline record from an instrument printing plain delimited lines', () => {
  it('records every line sent within the run, %T turned into absorbance, and says in the header how it read them', async () => {
    await socatPair(children, devLink, hostLink);
    // The recorder opens its end first, so that nothing the instrument prints (the banner included) is missed.
    const recorder = launch(['record', '--port', hostLink, '--plain', SPEC, '--out', recordPath, '--max-seconds', String(MAX_SECONDS),
      '--progress', 'json', '--progress-ms', '100', '--wavelength-nm', '630', '--sample', 'demo dye, plain lines']);
    let out = '';
    let err = '';
    recorder.stdout!.on('data', (d: Buffer) => (out += d.toString()));
    recorder.stderr!.on('data', (d: Buffer) => (err += d.toString()));
    await printed(recorder.stdout!, /"phase":"recording"/, 'the recorder opening the port');
    const emulator = launch(['emulate', '--port', devLink, '--plain', SPEC, '--speed', '40', '--seed', '11', '--duration', '3600', '--sent-log', sentPath]);
    let emulatorErr = '';
    emulator.stderr!.on('data', (d: Buffer) => (emulatorErr += d.toString()));
    const code = await exitOf(recorder);
    // The instrument goes on past the run's end (the lines after it must not be in the
    // record): stop it only once it has sent one, however slowly the machine runs.
    const linesSent = (): number => (existsSync(sentPath) ? readFileSync(sentPath, 'latin1').split('\r\n').length - 1 : 0);
    for (let waited_ms = 0; linesSent() <= MAX_SECONDS + 2 && waited_ms < 10_000; waited_ms += 20) await new Promise((r) => setTimeout(r, 20));
    emulator.kill('SIGTERM');
    expect(await exitOf(emulator)).toBe(0);
    expect({ code, err, emulatorErr }).toEqual({ code: 0, err: '', emulatorErr: '' });
    expect(JSON.parse(out.trimEnd().split('\n').at(-1)!)).toMatchObject({ stopped: 'limit' });

    // What the instrument sent: CRLF lines, a banner line, then time, %T, temperature.
    const sent = readFileSync(sentPath, 'latin1').split('\r\n');
    expect(sent.at(-1)).toBe('');
    sent.pop();
    expect(sent[0]).toBe('630\t1');
    const data = sent.slice(1).map((l) => l.split('\t').map(Number) as [number, number, number]);
    expect(data.length).toBeGreaterThan(MAX_SECONDS + 1);
    const t0 = data[0]![0];
    const inRun = data.filter(([t]) => t - t0 <= MAX_SECONDS + 1e-9);
    expect(inRun.length).toBe(MAX_SECONDS + 1); // one line a second, time zero included

    const rec = readRunRecord(recordPath);
    expect(rec.recovery.clean).toBe(true);
    expect(rec.readings.count).toBe(inRun.length);
    expect(Object.values(rec.end!.rejected).reduce((a, b) => a + b, 0)).toBe(0); // the banner was skipped, not refused
    for (let i = 0; i < inRun.length; i++) {
      const [t, , temp] = inRun[i]!;
      expect(rec.readings.t_s[i]).toBe(t);
      expect(rec.readings.cellT_C[i]).toBe(temp);
    }
    // common practice: A = −log10(T), T = %T / 100; the check over every line sent, by `fromPercentT`
    const agrees = (fromPercentT: (pct: number) => number): boolean =>
      inRun.every(([, pct], i) => Math.abs(rec.readings.absorbance[i]! - fromPercentT(pct)) < 5e-13);
    expect(agrees((pct) => -Math.log10(pct / 100))).toBe(true);
    // The demo dye starts near 0.65 AU, so the lines carry real %T values (about 22 %T), not absorbances.
    expect(inRun[0]![1]).toBeGreaterThan(15);
    expect(inRun[0]![1]).toBeLessThan(30);
    // Negative control: the same check fails on the classic slips, the natural logarithm and %T taken for T.
    expect(agrees((pct) => -Math.log(pct / 100))).toBe(false);
    expect(agrees((pct) => -Math.log10(pct))).toBe(false);
    // Negative control for skip=1: read without it, the banner "630	1" is taken for a reading at
    // t = 630 s, and every real line after it goes back in time and is refused.
    const noSkip = new DelimitedReader({ ...parsePlainSpec(SPEC).config, skipLines: 0 });
    const first = noSkip.parse(sent[0]!);
    expect(first).toMatchObject({ kind: 'absorbance', deviceTime_s: 630 });
    expect(noSkip.parse(sent[1]!)).toMatchObject({ kind: 'rejected', reason: 'timeBackwards' });

    // The header says it is a plain instrument and how it was read, in a form that reads back.
    expect(rec.header.instrument).toMatchObject({ source: 'serial', port: hostLink, baud: 115200 });
    const identity = rec.header.instrument.identity!;
    expect(identity).toMatchObject({ maker: 'unknown', sends: 'absorbance' });
    const spec = specOfIdentity(identity)!;
    expect(spec).toBe('time=1,time-unit=s,signal=2,signal-unit=%T,delimiter=tab,temperature=3,decimal=point,skip=1,interval=1');
    expect(parsePlainSpec(spec).config).toEqual(parsePlainSpec(SPEC).config);
    expect(rec.header.run.sample).toBe('demo dye, plain lines');
  }, 90_000);

  it('refuses a bad --plain spec with one line and exit code 2, leaving no record behind', async () => {
    const out = join(dir, 'refused.jsonl');
    const cases: Array<[string, RegExp]> = [
      ['time=1,time-unit=s,signal=2,signal-unit=%T,delimiter=tab,colour=red', /key "colour" is unknown; the keys are time, time-unit/],
      ['time=0,time-unit=s,signal=2,signal-unit=%T,delimiter=tab', /time=0 is not a column number; columns are whole numbers from 1/],
      ['time=1,time-unit=s,signal=two,signal-unit=%T,delimiter=tab', /signal=two is not a column number/],
      ['time=1,time-unit=s,signal=2,signal-unit=abs,delimiter=tab', /signal-unit=abs is not a signal unit; use A .*, %T .* or T/],
      ['time=1,time-unit=h,signal=2,signal-unit=A,delimiter=tab', /time-unit=h is not a time unit; use s, ms or min/],
    ];
    for (const [spec, message] of cases) {
      const p = launch(['record', '--port', hostLink, '--out', out, '--plain', spec]);
      let err = '';
      let stdout = '';
      p.stderr!.on('data', (d: Buffer) => (err += d.toString()));
      p.stdout!.on('data', (d: Buffer) => (stdout += d.toString()));
      expect(await exitOf(p)).toBe(2);
      expect(stdout).toBe('');
      const lines = err.trimEnd().split('\n');
      expect(lines).toHaveLength(1);
      expect(lines[0]).toMatch(/^rateline record: --plain ".*": /);
      expect(lines[0]).toMatch(message);
      expect(existsSync(out)).toBe(false);
    }
    // The same spec syntax on the emulator side.
    const e = launch(['emulate', '--port', devLink, '--plain', 'time=1,signal=2']);
    let eErr = '';
    e.stderr!.on('data', (d: Buffer) => (eErr += d.toString()));
    expect(await exitOf(e)).toBe(2);
    expect(eErr.trimEnd().split('\n')).toEqual([
      'rateline emulate: --plain "time=1,signal=2": time-unit, signal-unit, delimiter are missing; the spec needs time, time-unit, signal, signal-unit, delimiter (e.g. time=1,time-unit=s,signal=2,signal-unit=%T,delimiter=tab).',
    ]);
  }, 60_000);
});
