import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { readRunRecord } from '../acquisition/record/journalReader';
import type { ReadingSource, SourceEvent, SourceListener } from '../acquisition/sources/sourceTypes';
import { emptyRejectCounts } from '../acquisition/sources/sourceStatus';
import { DEMO_RUN, simulateRun } from '../kinetics/reactionModel';
import type { AnalysisResult } from '../kinetics/analysisTypes';
import { EventSchema, MIN_ANALYSIS_INTERVAL_MS, type BridgeEvent } from './bridge/contract';
import { BenchService } from './benchService';
import { openJournalSink } from './bench/journalSink';
import { createBenchService, DEMO_DURATION_S } from './bench/benchWiring';
import type { AnalyzerOptions, RunAnalyzerLike } from '../kinetics/analysisTypes';
import { emptyReport } from '../kinetics/analysisReport';

/** A stand-in analyzer for these wiring tests: counts what it is fed, fits nothing. */
function testAnalyzer(o: AnalyzerOptions): RunAnalyzerLike {
  let count = 0;
  let first = Number.NaN;
  let last = Number.NaN;
  return {
    get count() { return count; },
    add(t) { if (count === 0) first = t; last = t; count++; },
    result: (): AnalysisResult => ({
      ...emptyReport({ ...o, targetHalfLives: o.targetHalfLives ?? 3, precision: o.precision ?? 0.05 }, 'stand-in'),
      points: count, duration_s: count ? last - first : 0, pointsInWindow: count,
    }),
  };
}

/** A small source of our own for these tests: plays a simulated run in bursts on timers. */
function burstSource(points: number, perBurst = 50): ReadingSource & { commands: string[] } {
  const run = simulateRun({ ...DEMO_RUN, duration_s: points - 1 });
  const listeners = new Set<SourceListener>();
  const commands: string[] = [];
  let timer: ReturnType<typeof setInterval> | null = null;
  let i = 0;
  const send = (e: SourceEvent): void => { for (const l of listeners) l(e); };
  return {
    kind: 'simulated', commands,
    on(l) { listeners.add(l); return () => listeners.delete(l); },
    async open() { send({ type: 'status', status: { kind: 'connected', detail: 'test source' } }); },
    async command(cmd) {
      commands.push(cmd.type);
      if (cmd.type === 'start') {
        timer = setInterval(() => {
          for (let b = 0; b < perBurst && i < run.time_s.length; b++, i++) {
            send({ type: 'reading', reading: { deviceTime_s: run.time_s[i]!, hostTime_ms: performance.now(), absorbance: run.absorbance[i]!, wavelength_nm: 630, cellTemperature_C: null, flags: 0 } });
          }
          if (i >= run.time_s.length && timer) {
            clearInterval(timer);
            timer = null;
            send({ type: 'status', status: { kind: 'ended', detail: 'all points played' } });
          }
        }, 5);
      }
      if (cmd.type === 'stop' && timer) { clearInterval(timer); timer = null; }
      return { ok: true };
    },
    async close() { if (timer) clearInterval(timer); },
    rejectedCounts: () => emptyRejectCounts(),
  };
}

let dir: string;
beforeEach(() => { dir = mkdtempSync(join(tmpdir(), 'rateline-bench-')); });
afterEach(() => rmSync(dir, { recursive: true, force: true }));

function service(source: ReadingSource, now_ms?: () => number): BenchService {
  return new BenchService({
    host: 'web', dataDir: dir, defaultSpeed: 100,
    createSource: () => source,
    createAnalyzer: (o) => testAnalyzer(o),
    openRecord: (o) => openJournalSink(o, now_ms),
    listPorts: async () => [],
    ...(now_ms ? { now_ms } : {}),
  });
}

function until(events: BridgeEvent[], pred: (e: BridgeEvent) => boolean, ms = 10_000): Promise<void> {
  const t0 = Date.now();
  return new Promise((resolve, reject) => {
    const tick = (): void => {
      if (events.some(pred)) resolve();
      else if (Date.now() - t0 > ms) reject(new Error('timed out waiting for an event'));
      else setTimeout(tick, 10);
    };
    tick();
  });
}

describe('bench service', () => {
  it('runs a source to its end: readings in batches, throttled results, a record with every point', async () => {
    // The service's timers and clock are the test's: the throttle is checked as the rule it is
    // (a result at most every 50 ms of the service's clock), not by how fast this machine runs.
    vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout', 'setInterval', 'clearInterval', 'Date'] });
    const n = 1500;
    let svc: BenchService | null = null;
    const events: { at: number; e: BridgeEvent }[] = [];
    const plain: BridgeEvent[] = [];
    try {
      const src = burstSource(n);
      svc = service(src, () => Date.now());
      svc.subscribe((e) => { events.push({ at: Date.now(), e }); plain.push(e); });
      const start = await svc.handle({ type: 'start' });
      expect(start.ok).toBe(true);
      const done = (): boolean => plain.some((e) => e.type === 'record' && e.status === 'closed') && plain.some((e) => e.type === 'analysis' && e.atCount === n);
      for (let i = 0; i < 20_000 && !done(); i++) await vi.advanceTimersByTimeAsync(5);
      expect(done()).toBe(true);
    } finally {
      vi.useRealTimers();
    }

    // every pushed event satisfies the contract the screen reads
    for (const { e } of events) expect(EventSchema.safeParse(e).success, e.type).toBe(true);

    // readings arrive in order, each exactly once, on the run clock (first reading at 0 s)
    const batches = events.map((x) => x.e).filter((e): e is Extract<BridgeEvent, { type: 'readings' }> => e.type === 'readings');
    let next = 0;
    const times: number[] = [];
    for (const b of batches) {
      expect(b.fromIndex).toBe(next);
      next += b.time_s.length;
      times.push(...b.time_s);
    }
    expect(next).toBe(n);
    expect(times[0]).toBe(0);
    expect(times[n - 1]).toBe(n - 1);
    expect(batches.length).toBeLessThan(n / 10); // batched, not one message per reading

    // results throttled to at most 20 per second
    const analyses = events.filter((x) => x.e.type === 'analysis');
    expect(analyses.length).toBeGreaterThan(0);
    for (let i = 1; i < analyses.length; i++) expect(analyses[i]!.at - analyses[i - 1]!.at).toBeGreaterThanOrEqual(MIN_ANALYSIS_INTERVAL_MS);
    // and the throttle acted: the readings came in 30 bursts 5 ms apart, which unthrottled would each bring a result
    expect(analyses.length).toBeLessThan(n / 50 / 3);
    const last = analyses[analyses.length - 1]!.e as Extract<BridgeEvent, { type: 'analysis' }>;
    expect(last.atCount).toBe(n);
    expect(last.result.points).toBe(n);

    // the record on disk holds every point, read back by the acquisition reader
    const state = svc!.snapshot();
    expect(state.phase).toBe('stopped');
    const rec = readRunRecord(state.recordPath!);
    expect(rec.readings.count).toBe(n);
    expect(rec.recovery.clean).toBe(true);
    expect(rec.header.demo).toBe(true);
    const sim = simulateRun({ ...DEMO_RUN, duration_s: n - 1 });
    for (let i = 0; i < n; i += 97) expect(rec.readings.absorbance[i]).toBe(sim.absorbance[i]);
    expect(rec.events.some((p) => p.event.ev === 'stop' && p.event.reason === 'sourceEnded')).toBe(true);
    await svc!.dispose();
  });

  it('stops on request, keeps mixing time, marks and sample details in the record', async () => {
    const src = burstSource(100_000, 20);
    const svc = service(src);
    const events: BridgeEvent[] = [];
    svc.subscribe((e) => events.push(e));
    expect((await svc.handle({ type: 'setSampleDetails', details: { sample: 'dye 5.0 µM (demo)', operator: 'A. N.', temperature_C: 25 } })).ok).toBe(true);
    expect((await svc.handle({ type: 'start' })).ok).toBe(true);
    await until(events, (e) => e.type === 'readings');
    expect((await svc.handle({ type: 'mixed' })).ok).toBe(true);
    const mark = await svc.handle({ type: 'markEvent', note: 'bubble seen' });
    expect(mark.ok).toBe(true);
    await until(events, (e) => e.type === 'analysis' && e.atCount > 200);
    const stop = await svc.handle({ type: 'stop' });
    expect(stop.ok).toBe(true);
    expect(src.commands).toEqual(['start', 'stop']);
    const state = svc.snapshot();
    expect(state.timeZero_s).not.toBeNull();
    const rec = readRunRecord(state.recordPath!);
    expect(rec.readings.count).toBe(state.pointCount);
    expect(rec.header.run.sample).toBe('dye 5.0 µM (demo)');
    expect(rec.header.run.temperature_C).toBe(25);
    expect(rec.events.map((p) => p.event.ev)).toEqual(expect.arrayContaining(['mixed', 'mark', 'stop']));
    // the analysis counts only points after mixing; the run keeps them all
    const last = [...events].reverse().find((e) => e.type === 'analysis') as { result: AnalysisResult; atCount: number };
    expect(last.result.points).toBeLessThan(last.atCount);

    // an export of the run: one row per reading after the header and comments
    const exp = await svc.handle({ type: 'saveExport', format: 'csv' });
    expect(exp.ok).toBe(true);
    const csv = readFileSync((exp as { value: { path: string } }).value.path, 'utf8').trim().split('\r\n');
    expect(csv.filter((l) => !l.startsWith('#')).length).toBe(state.pointCount + 1);
    expect(csv[0]).toContain('demo data');
    await svc.dispose();
  });

  it('answers bad requests with one-line errors and keeps the run going', async () => {
    const svc = service(burstSource(10));
    const cases: unknown[] = [
      { type: 'nope' }, null, { type: 'setWavelength', wavelength_nm: 'blue' },
      { type: 'stop' }, { type: 'mixed' }, { type: 'openRecord' },
      { type: 'chooseSource', source: { kind: 'replay', file: 'missing.jsonl' } },
    ];
    for (const c of cases) {
      const r = await svc.handle(c);
      expect(r.ok, JSON.stringify(c)).toBe(false);
      if (!r.ok) expect(r.error).toMatch(/^[^\n]{10,300}$/);
    }
    expect((await svc.handle({ type: 'getState' })).ok).toBe(true); // and a good request is still answered
    await svc.dispose();
  });

  it('replays a record from the runs folder by name, and lists it', async () => {
    writeFileSync(join(dir, 'old.jsonl'), '{}\n');
    const svc = service(burstSource(10));
    const list = await svc.handle({ type: 'listRecords' });
    expect(list.ok && (list.value as { records: { name: string }[] }).records.map((r) => r.name)).toEqual(['old.jsonl']);
    const chosen = await svc.handle({ type: 'chooseSource', source: { kind: 'replay', file: 'old.jsonl', speed: 'max' } });
    expect(chosen.ok).toBe(true);
    expect(svc.snapshot().demo).toBe(false);
    await svc.dispose();
  });

  it('runs the real simulated instrument, analyzer and journal to the end of the demo run', async () => {
    const svc = createBenchService({ host: 'web', dataDir: dir, speed: 10_000 });
    const events: BridgeEvent[] = [];
    svc.subscribe((e) => events.push(e));
    expect((await svc.handle({ type: 'start' })).ok).toBe(true);
    await until(events, (e) => e.type === 'record' && e.status === 'closed', 25_000);
    await until(events, (e) => e.type === 'analysis' && e.atCount === svc.snapshot().pointCount);
    const state = svc.snapshot();
    expect(state.demo).toBe(true);
    expect(state.pointCount).toBe(DEMO_DURATION_S); // one reading a second of the demo (DEMO.md: 1 s interval)
    const last = [...events].reverse().find((e) => e.type === 'analysis') as Extract<BridgeEvent, { type: 'analysis' }>;
    expect(EventSchema.safeParse(last).success).toBe(true);
    // DEMO.md: k_obs = 0.35 M⁻¹ s⁻¹ × 0.010 M = 3.5 × 10⁻³ s⁻¹, first order in the dye
    expect(last.result.verdict.order).toBe('first');
    const [lo, hi] = last.result.models.first.kCI95!;
    expect(lo).toBeLessThan(3.5e-3);
    expect(hi).toBeGreaterThan(3.5e-3);
    expect(hi - lo).toBeLessThan(0.2 * 3.5e-3);
    expect(last.result.stop.state).toBe('farEnough');
    const rec = readRunRecord(state.recordPath!);
    expect(rec.readings.count).toBe(state.pointCount);
    expect(rec.header.demo).toBe(true);
    await svc.dispose();
  }, 40_000);

  it('stops the run with a one-line warning when the record cannot be written, keeping what was written', async () => {
    const src = burstSource(100_000, 20);
    let written = 0;
    const svc = new BenchService({
      host: 'web', dataDir: dir, defaultSpeed: 100, createSource: () => src, createAnalyzer: (o) => testAnalyzer(o), listPorts: async () => [],
      openRecord: async (o) => {
        const real = await openJournalSink(o);
        return { ...real, path: real.path, reading: (r) => { if (++written > 150) throw new Error('no space left on device'); real.reading(r); } };
      },
    });
    const events: BridgeEvent[] = [];
    svc.subscribe((e) => events.push(e));
    expect((await svc.handle({ type: 'start' })).ok).toBe(true);
    await until(events, (e) => e.type === 'record' && e.status === 'closed');
    const warning = events.find((e) => e.type === 'warning') as { message: string };
    expect(warning.message).toMatch(/could not be written \(no space left on device\); the run was stopped/);
    expect(warning.message).not.toContain('\n');
    expect(svc.snapshot().phase).toBe('stopped');
    const rec = readRunRecord(svc.snapshot().recordPath!);
    expect(rec.readings.count).toBe(150);
    expect((await svc.handle({ type: 'getState' })).ok).toBe(true);
    await svc.dispose();
  });

  it('replays its own record by name through the real replay source: same readings, time zero carried over', async () => {
    const first = createBenchService({ host: 'web', dataDir: dir, speed: 10_000 });
    const ev1: BridgeEvent[] = [];
    first.subscribe((e) => ev1.push(e));
    await first.handle({ type: 'start' });
    await until(ev1, (e) => e.type === 'record' && e.status === 'closed', 25_000);
    const recorded = first.snapshot();
    await first.dispose();

    const second = createBenchService({ host: 'web', dataDir: dir });
    const ev2: BridgeEvent[] = [];
    second.subscribe((e) => ev2.push(e));
    const file = recorded.recordPath!.split('/').pop()!;
    expect((await second.handle({ type: 'chooseSource', source: { kind: 'replay', file, speed: 'max' } })).ok).toBe(true);
    expect((await second.handle({ type: 'start' })).ok).toBe(true);
    await until(ev2, (e) => e.type === 'record' && e.status === 'closed', 25_000);
    const replayed = second.snapshot();
    expect(replayed.pointCount).toBe(recorded.pointCount);
    expect(replayed.demo).toBe(false);
    const a = readRunRecord(recorded.recordPath!);
    const b = readRunRecord(replayed.recordPath!);
    expect(b.readings.count).toBe(a.readings.count);
    expect(Array.from(b.readings.absorbance)).toEqual(Array.from(a.readings.absorbance));
    expect(b.header.instrument.source).toBe('replay');
    // the simulated instrument starts its reaction at its device time 0 and nobody pressed Mixed:
    // the header says so and no `mixed` line was written on the user's behalf
    expect(a.header.reactionStart_s).toBe(0);
    expect(a.events.some((p) => p.event.ev === 'mixed')).toBe(false);
    expect(replayed.timeZero_s).toBe(-a.readings.t_s[0]!);
    expect(b.events.find((p) => p.event.ev === 'mixed')!.event.t).toBe(0); // the replay keeps the record's device clock
    await second.dispose();
  }, 60_000);
});
