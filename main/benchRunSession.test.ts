/**
 * A run on the bench service (the screen's path), with the real analyzer and journal:
 * its final result is what `rateline analyze --format json` gives of its record (the
 * oracle is the record, read by the other program path), Mixed pressed twice moves time
 * zero to the last press, and a counts device's blank is recorded with its reference.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { analysisReadings, readRunRecord } from '../acquisition/record/journalReader';
import type { ReadingSource, SourceEvent, SourceListener } from '../acquisition/sources/sourceTypes';
import { emptyRejectCounts } from '../acquisition/sources/sourceStatus';
import { DEMO_RUN, simulateRun } from '../kinetics/reactionModel';
import { RunAnalyzer } from '../kinetics/runAnalyzer';
import type { AnalysisResult } from '../kinetics/analysisTypes';
import type { BridgeEvent } from './bridge/contract';
import { BenchService } from './benchService';
import { openJournalSink } from './bench/journalSink';
import { run as analyze } from './cli/commands/analyze';

let dir: string;
beforeEach(() => { dir = mkdtempSync(join(tmpdir(), 'rateline-bench-session-')); });
afterEach(() => { vi.restoreAllMocks(); rmSync(dir, { recursive: true, force: true }); });

/** A source the test drives by hand; `sendsBlank` makes it a counts device that answers takeBlank with its reference. */
function handSource(sendsBlank: boolean): ReadingSource & { reading(t: number, a: number): void } {
  const listeners = new Set<SourceListener>();
  const send = (e: SourceEvent): void => { for (const l of listeners) l(e); };
  return {
    kind: 'simulated',
    on(l) { listeners.add(l); return () => listeners.delete(l); },
    async open() { send({ type: 'status', status: { kind: 'connected', detail: 'hand source' } }); },
    async command(cmd) {
      if (cmd.type === 'takeBlank' && sendsBlank) {
        send({ type: 'blank', blank: { netBlank_counts: 52_000, dark_counts: 800, points: 5, wavelength_nm: 630, deviceTime_s: 2, noise_AU: 3e-4, drift_AUperMin: null, warmedUp: true, warnings: [] } });
      }
      return { ok: true };
    },
    async close() { /* nothing held */ },
    rejectedCounts: () => emptyRejectCounts(),
    reading(t, a) { send({ type: 'reading', reading: { deviceTime_s: t, hostTime_ms: performance.now(), absorbance: a, wavelength_nm: 630, cellTemperature_C: null, flags: 0 } }); },
  };
}

function bench(source: ReadingSource): { svc: BenchService; events: BridgeEvent[] } {
  const svc = new BenchService({
    host: 'web', dataDir: dir, defaultSpeed: 100, createSource: () => source,
    createAnalyzer: (o) => new RunAnalyzer(o), openRecord: (o) => openJournalSink(o), listPorts: async () => [],
  });
  const events: BridgeEvent[] = [];
  svc.subscribe((e) => events.push(e));
  return { svc, events };
}

function until(events: BridgeEvent[], pred: (e: BridgeEvent) => boolean, ms = 20_000): Promise<void> {
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

async function analyzeJson(argv: string[]): Promise<AnalysisResult> {
  const out: string[] = [];
  const log = vi.spyOn(console, 'log').mockImplementation((m: unknown) => void out.push(String(m)));
  expect(await analyze(argv)).toBe(0);
  log.mockRestore();
  return JSON.parse(out.join('\n')) as AnalysisResult;
}

const numbers = (r: AnalysisResult): unknown => ({
  k: r.models.first.k, kCI95: r.models.first.kCI95, halfLives: r.halfLivesElapsed, points: r.pointsInWindow, window: r.window,
});

describe('a bench run and its record', () => {
  it('ends with the numbers analyze gives of the record; the last Mixed sets time zero; the window in force is kept', async () => {
    const source = handSource(false);
    const { svc, events } = bench(source);
    expect((await svc.handle({ type: 'start' })).ok).toBe(true);
    const run = simulateRun({ ...DEMO_RUN, duration_s: 640 });
    for (let i = 0; i < 10; i++) source.reading(i, 0.65);
    expect((await svc.handle({ type: 'mixed' })).ok).toBe(true);
    for (let i = 10; i < 14; i++) source.reading(i, 0.65);
    expect((await svc.handle({ type: 'mixed' })).ok).toBe(true);
    for (let i = 0; i < run.time_s.length; i++) source.reading(14 + run.time_s[i]!, run.absorbance[i]!);
    expect((await svc.handle({ type: 'setFitWindow', window: { from_s: 5, to_s: null } })).ok).toBe(true);
    expect((await svc.handle({ type: 'stop' })).ok).toBe(true);
    const total = 14 + run.time_s.length;
    await until(events, (e) => e.type === 'analysis' && e.atCount === total);
    const last = events.filter((e): e is Extract<BridgeEvent, { type: 'analysis' }> => e.type === 'analysis').at(-1)!;
    const path = svc.snapshot().recordPath!;
    await svc.dispose();

    const rec = readRunRecord(path);
    const mixed = rec.events.filter((p) => p.event.ev === 'mixed');
    expect(mixed).toHaveLength(2);
    expect(analysisReadings(rec).timeZero_s).toBe(mixed[1]!.event.t);
    expect(rec.events.find((p) => p.event.ev === 'fitSettings')!.event).toMatchObject({ from_s: 5, to_s: null, targetHalfLives: 3, precision: 0.05 });
    const fromRecord = await analyzeJson([path, '--format', 'json']);
    expect(numbers(last.result)).toEqual(numbers(fromRecord));
    // DEMO.md (invented data): k_obs = 3.5 × 10⁻³ s⁻¹.
    expect(Math.abs(fromRecord.models.first.k! - 3.5e-3)).toBeLessThan(2e-4);
    // Negative control: the first press as time zero (the old first-wins rule) gives other numbers.
    const t0 = mixed[0]!.event.t!;
    const firstWins = new RunAnalyzer({ from_s: 5 });
    for (let i = 0; i < rec.readings.count; i++) if (rec.readings.t_s[i]! >= t0) firstWins.add(rec.readings.t_s[i]! - t0, rec.readings.absorbance[i]!);
    expect(numbers(firstWins.flush())).not.toEqual(numbers(fromRecord));
  }, 60_000);

  it('records a counts device’s blank, taken from the screen, once and with its reference', async () => {
    for (const counts of [true, false]) {
      const source = handSource(counts);
      const { svc } = bench(source);
      expect((await svc.handle({ type: 'start' })).ok).toBe(true);
      expect((await svc.handle({ type: 'takeBlank' })).ok).toBe(true);
      for (let i = 0; i < 12; i++) source.reading(3 + i, 0.6);
      expect((await svc.handle({ type: 'stop' })).ok).toBe(true);
      const path = svc.snapshot().recordPath!;
      await svc.dispose();
      const blanks = readRunRecord(path).events.filter((p) => p.event.ev === 'blank').map((p) => p.event);
      expect(blanks).toHaveLength(1);
      if (counts) expect(blanks[0]).toMatchObject({ reference: { net_counts: 52_000, dark_counts: 800, points: 5, wavelength_nm: 630 } });
      // An absorbance device zeroes itself: the record says a blank was taken, with no reference to give.
      else expect(blanks[0]).not.toHaveProperty('reference');
    }
  }, 60_000);
});
