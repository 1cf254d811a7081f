/**
 * One line cannot wreck a run: the real `rateline record` reads a real serial line (a
 * socat pty pair) on which this test plays the instrument itself, line by line at the
 * instrument's own pace, slipping in a line whose device time is 1e15 s and lines with
 * absorbances no photometer reads (5e300, −1e308). The record must keep its time line,
 * count each refusal under its reason, say so in words, and hold every good reading.
 * The record is left in test-artifacts/wrecking-line.jsonl.
 */
import { closeSync, copyFileSync, existsSync, mkdirSync, mkdtempSync, openSync, rmSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readRunRecord } from '../acquisition/record/journalReader';
import { formatAbsorbance, formatIdentity } from '../acquisition/protocol/lineFormat';
import { ChildGroup, exitOf, printed, socatPair } from './childProcesses';

const root = join(import.meta.dirname, '..');
const dir = mkdtempSync(join(tmpdir(), 'rateline-wreck-'));
const devLink = join(dir, 'dev');
const hostLink = join(dir, 'host');
const recordPath = join(dir, 'wreck.jsonl');
const children = new ChildGroup(root);

afterAll(async () => {
  await children.stopAll();
  rmSync(dir, { recursive: true, force: true });
});

const wait = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('rateline record against an instrument that sends one wrecking line', () => {
  it('refuses a device time of 1e15 s and absurd absorbances, counted by reason and said, and the run keeps its time line', async () => {
    await socatPair(children, devLink, hostLink);
    const recorder = children.launch(process.execPath, [join(root, 'bin', 'rateline.js'), 'record', '--port', hostLink, '--out', recordPath, '--progress', 'json', '--progress-ms', '100']);
    let err = '';
    recorder.stderr!.on('data', (d: Buffer) => (err += d.toString()));
    await printed(recorder.stdout!, /"phase":"recording"/, 'the recorder opening the port');
    await until(() => existsSync(devLink));
    const fd = openSync(devLink, 'w');
    const send = (line: string): void => void writeSync(fd, line + '\n', null, 'latin1');
    send(formatIdentity({ maker: 'test', model: 'wrecker', serial: 'w1', firmware: '1', sends: 'absorbance' }));
    // A first-order decay read every 0.1 s of device time, sent every 0.1 s of real time.
    const a = (t: number): number => 0.05 + 0.6 * Math.exp(-0.05 * t);
    const sent: number[] = [];
    for (let i = 1; i <= 60; i++) {
      const t = i / 10;
      if (i === 20) send(formatAbsorbance(1e15, 630, a(t), null));
      if (i === 30) send(formatAbsorbance(t, 630, 5e300, null));
      if (i === 40) send(formatAbsorbance(t, 630, -1e308, null));
      send(formatAbsorbance(t, 630, a(t), null));
      sent.push(t);
      await wait(100);
    }
    closeSync(fd);
    recorder.kill('SIGINT');
    expect(await exitOf(recorder)).toBe(0);
    expect(err).toBe('');

    const rec = readRunRecord(recordPath);
    mkdirSync(join(root, 'test-artifacts'), { recursive: true });
    copyFileSync(recordPath, join(root, 'test-artifacts', 'wrecking-line.jsonl'));
    expect(rec.recovery.clean).toBe(true);
    // Every good reading, on the instrument's own time line, and nothing else.
    expect(Array.from(rec.readings.t_s)).toEqual(sent);
    for (let i = 0; i < rec.readings.count; i++) expect(rec.readings.absorbance[i]).toBeCloseTo(a(sent[i]!), 4);
    expect(rec.end!.rejected).toMatchObject({ timeJump: 1, absorbanceRange: 2, timeBackwards: 0 });
    const warnings = rec.events.flatMap((p) => (p.event.ev === 'warning' ? [p.event.message] : []));
    expect(warnings.some((w) => /^device time leaps from 1\.9 s to 1000000000000000 s while [\d.]+ s passed on this computer: the line was left out and the run keeps its time line/.test(w))).toBe(true);
    expect(warnings.some((w) => /^absorbance 5e\+300 AU is outside what a photometer can read \(-1 to 10 AU\): the line was left out/.test(w))).toBe(true);
  }, 60_000);
});

async function until(cond: () => boolean): Promise<void> {
  for (let i = 0; i < 200 && !cond(); i++) await wait(25);
}
