import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { DEMO_RUN, simulateRun } from '../../kinetics/reactionModel';
import { demoHeader } from '../../test/fixtures/demoRecordHeader';
import { Journal } from '../record/journal';
import { readRunRecord, type RunRecord } from '../record/journalReader';
import { replayFromFile } from '../files/replayFile';
import { ReplaySource, timelineFromRecord, timelineFromReadings } from './replaySource';
import type { RunEvent } from '../record/runRecordFormat';
import type { Reading, SourceEvent } from './sourceTypes';

let dir: string;
beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'rateline-replay-'));
});
afterEach(() => rmSync(dir, { recursive: true, force: true }));

/** The demo run (DEMO.md, invented data) recorded with a blank, time zero, a mark and a gap. */
function demoRecord(dt_s = 1, duration_s = 120): RunRecord {
  const run = simulateRun({ ...DEMO_RUN, dt_s, duration_s });
  const path = join(dir, `demo-${dt_s}-${duration_s}.jsonl`);
  const j = Journal.create(path, demoHeader(), { timer: false });
  j.event({ ev: 'blank', h: 0, t: null, detail: 'blank taken', noise_AU: 0.0004, drift_AUperMin: 0 });
  j.event({ ev: 'mixed', h: 0, t: 0, wall: '2026-12-01T18:40:00.000+01:00' });
  for (let i = 0; i < run.time_s.length; i++) {
    if (i === 10) j.event({ ev: 'mark', h: 0, t: run.time_s[i]!, note: 'bubble' });
    if (i === 20) j.event({ ev: 'gap', h: 0, t: run.time_s[i]!, from_h: 100, to_h: 900, reason: 'cable pulled (demo)' });
    j.reading({ deviceTime_s: run.time_s[i]!, hostTime_ms: 0, absorbance: run.absorbance[i]!, wavelength_nm: 630, cellTemperature_C: 25, flags: 0 });
  }
  j.close();
  return readRunRecord(path);
}

function collect(source: ReplaySource): { readings: Reading[]; events: SourceEvent[]; recorded: RunEvent[]; ended: Promise<void> } {
  const readings: Reading[] = [];
  const events: SourceEvent[] = [];
  const recorded: RunEvent[] = [];
  let done!: () => void;
  const ended = new Promise<void>((resolve) => (done = resolve));
  source.on((e) => {
    events.push(e);
    if (e.type === 'reading') readings.push(e.reading);
    if (e.type === 'status' && e.status.kind === 'ended') done();
  });
  source.onRecorded((e) => recorded.push(e));
  return { readings, events, recorded, ended };
}

const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));

describe('replay of a run record', () => {
  it('plays every reading as recorded, with the events in their places, at max speed', async () => {
    const rec = demoRecord();
    const source = new ReplaySource(timelineFromRecord(rec), { speed: 'max', batch: 7 });
    const c = collect(source);
    await source.open();
    await c.ended;
    expect(c.readings).toHaveLength(rec.readings.count);
    c.readings.forEach((r, i) => {
      expect(r.deviceTime_s).toBe(rec.readings.t_s[i]);
      expect(r.absorbance).toBe(rec.readings.absorbance[i]);
      expect(r.cellTemperature_C).toBe(25);
      expect(r.wavelength_nm).toBe(630);
    });
    expect(c.recorded.map((e) => e.ev)).toEqual(['blank', 'mixed', 'mark', 'gap']);
    // The mark was recorded before reading 10, the gap before reading 20: they are played there.
    const order = c.events.filter((e) => e.type !== 'status').map((e) => (e.type === 'reading' ? 'r' : e.type));
    expect(order.indexOf('gap')).toBe(20);
    expect(c.events.find((e) => e.type === 'gap')).toMatchObject({ from_ms: 100, to_ms: 900, reason: 'cable pulled (demo)' });
    expect(c.events.at(-1)).toMatchObject({ type: 'status', status: { kind: 'ended' } });
    await source.close();
  });

  it('plays plain readings (a CSV run)', async () => {
    const t = Float64Array.from([0, 1, 2]);
    const a = Float64Array.from([0.6, 0.5, 0.4]);
    const source = new ReplaySource(timelineFromReadings(t, a), { speed: 'max' });
    const c = collect(source);
    await source.open();
    await c.ended;
    expect(c.readings.map((r) => [r.deviceTime_s, r.absorbance, r.cellTemperature_C, r.flags])).toEqual([
      [0, 0.6, null, 0],
      [1, 0.5, null, 0],
      [2, 0.4, null, 0],
    ]);
  });

  it.each([10, 50])('honours a speed factor of %i (data seconds per host second, roughly)', async (speed) => {
    // 0.1 s readings; enough data for about 0.8 s of host time at this speed.
    const rec = demoRecord(0.1, 0.8 * speed);
    const source = new ReplaySource(timelineFromRecord(rec), { speed });
    const c = collect(source);
    const start = performance.now();
    await source.open();
    await c.ended;
    const host_s = (performance.now() - start) / 1000;
    const data_s = c.readings.at(-1)!.deviceTime_s - c.readings[0]!.deviceTime_s;
    const measured = data_s / host_s;
    // Timers are coarse and the machine is shared: the bounds only catch a pace that is plainly wrong
    // (max speed would be hundreds of times faster, 1× fifty times slower).
    expect(measured).toBeGreaterThan(speed * 0.6);
    expect(measured).toBeLessThan(speed * 1.3);
    expect(c.readings).toHaveLength(rec.readings.count);
  });

  it('pauses and resumes without losing or repeating a reading', async () => {
    const rec = demoRecord(0.1, 60);
    const source = new ReplaySource(timelineFromRecord(rec), { speed: 50 });
    const c = collect(source);
    await source.open();
    await sleep(150);
    expect(await source.command({ type: 'pause' })).toEqual({ ok: true });
    const atPause = c.readings.length;
    expect(atPause).toBeGreaterThan(0);
    expect(source.isPaused).toBe(true);
    await sleep(300);
    expect(c.readings.length).toBe(atPause); // nothing arrives while paused
    expect(await source.command({ type: 'pause' })).toMatchObject({ ok: false });
    expect(await source.command({ type: 'resume' })).toEqual({ ok: true });
    // Resuming does not jump ahead by the paused time: the next readings follow the last one.
    await sleep(40);
    const afterResume = c.readings.length - atPause;
    expect(afterResume).toBeLessThan(0.3 * 50 * 10); // far less than the 300 ms × 50 × 10/s a jump would dump at once
    expect(await source.command({ type: 'setSpeed', speed: 'max' })).toEqual({ ok: true });
    await c.ended;
    expect(c.readings.map((r) => r.deviceTime_s)).toEqual(Array.from(rec.readings.t_s));
  });

  it('refuses speeds outside 1× to 100× and commands only a live instrument can do', async () => {
    const rec = demoRecord(1, 10);
    const source = new ReplaySource(timelineFromRecord(rec), { speed: 'max' });
    expect(await source.command({ type: 'setSpeed', speed: 500 })).toEqual({
      ok: false,
      error: 'replay speed 500 is not allowed; give a factor from 1 to 100, or max.',
    });
    expect(await source.command({ type: 'setSpeed', speed: 0.5 })).toMatchObject({ ok: false });
    expect(await source.command({ type: 'takeBlank' })).toEqual({ ok: false, error: 'a recorded run cannot take a blank; that needs a live instrument.' });
    expect(() => new ReplaySource(timelineFromRecord(rec), { speed: Number.NaN })).toThrow(/not allowed/);
    await source.close();
  });
});

describe('replay of a file', () => {
  it('opens a record with its events and a CSV run through loadRun', async () => {
    const rec = demoRecord(1, 30);
    const fromRecord = await replayFromFile(rec.path, { speed: 'max' });
    const a = collect(fromRecord);
    await fromRecord.open();
    await a.ended;
    expect(a.readings).toHaveLength(31);
    expect(a.recorded.map((e) => e.ev)).toContain('mixed');
    expect(fromRecord.recordedTimeZero_s).toBe(0);

    const csv = join(dir, 'run.csv');
    writeFileSync(csv, 'time_s;absorbance\n0;0,65\n1;0,64\n2;0,63\n');
    const fromCsv = await replayFromFile(csv, { speed: 'max' });
    const b = collect(fromCsv);
    await fromCsv.open();
    await b.ended;
    expect(b.readings.map((r) => r.absorbance)).toEqual([0.65, 0.64, 0.63]);
    expect(fromCsv.recordedTimeZero_s).toBeNull();
    await expect(replayFromFile(join(dir, 'none.csv'))).rejects.toThrow(/no such file/);
  });
});
