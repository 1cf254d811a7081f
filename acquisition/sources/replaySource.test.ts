import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
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

  it.each([10, 50])('plays each reading when the data clock at a speed factor of %i says it is due', async (speed) => {
    // The replay's clock and timers are the test's, so what is checked is the pacing rule itself:
    // a reading at data time t is handed out at host time (t − t₀)/speed, never early, never late.
    vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout', 'setImmediate', 'clearImmediate', 'Date'] });
    try {
      const rec = demoRecord(0.1, 0.8 * speed);
      const source = new ReplaySource(timelineFromRecord(rec), { speed, now_ms: () => Date.now() });
      const c = collect(source);
      let ended = false;
      void c.ended.then(() => (ended = true));
      const start_ms = Date.now();
      await source.open();
      for (let i = 0; i < 10_000 && !ended; i++) await vi.advanceTimersByTimeAsync(1);
      expect(ended).toBe(true);
      expect(c.readings).toHaveLength(rec.readings.count);
      /** The largest gap, in ms, between when each reading came and when the data clock at `factor` had it due. */
      const worstLag_ms = (factor: number): number => {
        const first = c.readings[0]!;
        return Math.max(...c.readings.map((r) => Math.abs(r.hostTime_ms - first.hostTime_ms - ((r.deviceTime_s - first.deviceTime_s) / factor) * 1000)));
      };
      // Within a few ticks of the 1-ms clock: a timer waits whole milliseconds, so a reading due at
      // 30.0000004 ms comes at 31, and such roundings add up over a run to a few ms.
      expect(worstLag_ms(speed)).toBeLessThanOrEqual(15);
      expect(c.readings[0]!.hostTime_ms - start_ms).toBeLessThan(20); // the first at once
      // negative control: the same readings are far off the pace of another factor
      expect(worstLag_ms(speed * 1.3)).toBeGreaterThan(100);
      expect(worstLag_ms(speed * 0.7)).toBeGreaterThan(100);
    } finally {
      vi.useRealTimers();
    }
  });

  it('pauses and resumes without losing or repeating a reading, and without jumping ahead', async () => {
    vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout', 'setImmediate', 'clearImmediate', 'Date'] });
    try {
      const rec = demoRecord(0.1, 60);
      const source = new ReplaySource(timelineFromRecord(rec), { speed: 50, now_ms: () => Date.now() });
      const c = collect(source);
      await source.open();
      await vi.advanceTimersByTimeAsync(150);
      expect(await source.command({ type: 'pause' })).toEqual({ ok: true });
      const atPause = c.readings.length;
      // 150 ms at 50× is 7.5 s of data, 0.1 s a reading: the first 76 (t = 0 … 7.5 s).
      expect(atPause).toBe(76);
      expect(source.isPaused).toBe(true);
      await vi.advanceTimersByTimeAsync(300);
      expect(c.readings.length).toBe(atPause); // nothing arrives while paused
      expect(await source.command({ type: 'pause' })).toMatchObject({ ok: false });
      expect(await source.command({ type: 'resume' })).toEqual({ ok: true });
      // Resuming carries on from the last reading: 40 ms more at 50× is 2 s of data, 20 readings,
      // not the 150 that jumping over the paused 300 ms would dump at once.
      await vi.advanceTimersByTimeAsync(40);
      expect(c.readings.length - atPause).toBeGreaterThanOrEqual(19);
      expect(c.readings.length - atPause).toBeLessThanOrEqual(21);
      expect(await source.command({ type: 'setSpeed', speed: 'max' })).toEqual({ ok: true });
      for (let i = 0; i < 1000 && c.readings.length < rec.readings.count; i++) await vi.advanceTimersByTimeAsync(1);
      await c.ended;
      expect(c.readings.map((r) => r.deviceTime_s)).toEqual(Array.from(rec.readings.t_s));
    } finally {
      vi.useRealTimers();
    }
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
