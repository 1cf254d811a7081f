/**
 * Recorder and replay throughput, with the real journal on the real disk (its commit
 * policy: write and fsync at least every 250 ms, so "fsync at least once a second").
 * Targets: the recorder takes ≥ 50,000 readings/s with that policy, and a recorded
 * 10⁵-point run replays at full speed through the analyzer in ≤ 2 s (reading the file
 * included). The recorder is timed on its recording path (source → journal on disk),
 * with the analysis left out, because the analyzer's own cost is what the replay row
 * measures; both are printed. Ratios are measured in this one run.
 * Run: node --expose-gc --import tsx test/bench/recorder.bench.ts
 */
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { Journal } from '../../acquisition/record/journal';
import { readRunRecord } from '../../acquisition/record/journalReader';
import { RunSession } from '../../acquisition/record/runSession';
import { ReplaySource, timelineFromRecord, timelineFromReadings } from '../../acquisition/sources/replaySource';
import { RunAnalyzer } from '../../kinetics/runAnalyzer';
import type { AnalysisResult, RunAnalyzerLike } from '../../kinetics/analysisTypes';
import { DEMO_RUN, simulateRun } from '../../kinetics/reactionModel';
import { demoHeader } from '../fixtures/demoRecordHeader';

const RECORDER_TARGET_PER_S = 50_000;
const REPLAY_TARGET_S = 2;
/** Readings per recording row: a million, so the run lasts long enough for the periodic fsyncs to count. */
const N_RECORD = 1_000_000;
/** Points of the replayed run. */
const N = 100_000;

const dir = mkdtempSync(join(tmpdir(), 'rateline-bench-rec-'));

/** Demo kinetics (DEMO.md, invented) sampled densely over 1000 s: 10⁶ readings to record, 10⁵ to replay. */
const big = simulateRun({ ...DEMO_RUN, dt_s: 1000 / (N_RECORD - 1), duration_s: 1000, seed: 3 });
const run = simulateRun({ ...DEMO_RUN, dt_s: 1000 / (N - 1), duration_s: 1000, seed: 3 });

function gc(): void {
  (globalThis as { gc?: () => void }).gc?.();
}

/** The journal alone, readings handed over one by one as a source would. */
function journalOnly(name = 'journal-only.jsonl', series = big): { perSecond: number; syncs: number } {
  const journal = Journal.create(join(dir, name), demoHeader());
  const reading = { deviceTime_s: 0, hostTime_ms: 0, absorbance: 0, wavelength_nm: 630, cellTemperature_C: 25 as number | null, flags: 0 };
  const start = performance.now();
  for (let i = 0; i < series.time_s.length; i++) {
    reading.deviceTime_s = series.time_s[i]!;
    reading.absorbance = series.absorbance[i]!;
    reading.hostTime_ms = performance.now();
    journal.reading(reading);
  }
  journal.close();
  const elapsed_s = (performance.now() - start) / 1000;
  return { perSecond: series.time_s.length / elapsed_s, syncs: journal.progress().syncs };
}

/** Counts readings and leaves the analysis out, so that the row below times the recording path alone. */
class AnalysisLeftOut implements RunAnalyzerLike {
  count = 0;
  private readonly idle = new RunAnalyzer();
  add(): void {
    this.count++;
  }
  result(): AnalysisResult {
    return this.idle.result();
  }
}

/** The recorder: a source at full speed → journal (with its fsync policy), the analysis left out. */
async function recorder(name: string, series: typeof run): Promise<{ perSecond: number; syncs: number; bytes: number; seconds: number }> {
  const path = join(dir, name);
  const n = series.time_s.length;
  const journal = Journal.create(path, demoHeader());
  const source = new ReplaySource(timelineFromReadings(series.time_s, series.absorbance, 630), { speed: 'max', batch: 8192 });
  const analyzer = new AnalysisLeftOut();
  const rec = new RunSession({ source, journal, analyzer, wavelength_nm: 630 });
  const start = performance.now();
  await rec.start();
  const outcome = await rec.finished;
  const elapsed_s = (performance.now() - start) / 1000;
  if (outcome.readings !== n || analyzer.count !== n) throw new Error(`recorder kept ${outcome.readings} of ${n} readings`);
  return { perSecond: n / elapsed_s, syncs: journal.progress().syncs, bytes: statSync(path).size / n, seconds: elapsed_s };
}

/** Replay of the recorded file through a fresh analyzer at full speed, reading the file included. */
async function replay(path: string, analyse = true): Promise<{ seconds: number; k: number | null }> {
  const start = performance.now();
  const record = readRunRecord(path);
  const source = new ReplaySource(timelineFromRecord(record), { speed: 'max', batch: 8192 });
  const analyzer = new RunAnalyzer();
  const ended = new Promise<void>((resolve) => {
    source.on((e) => {
      if (e.type === 'reading' && analyse) analyzer.add(e.reading.deviceTime_s, e.reading.absorbance);
      else if (e.type === 'status' && e.status.kind === 'ended') resolve();
    });
  });
  await source.open();
  await ended;
  const k = analyzer.result().models.first.k;
  return { seconds: (performance.now() - start) / 1000, k };
}

async function main(): Promise<number> {
  let failed = 0;
  try {
    journalOnly('warm-up.jsonl', run); // let the JIT settle before anything is timed
    gc();
    const j = journalOnly();
    gc();
    const r = await recorder('recorder.jsonl', big);
    await recorder('replay-me.jsonl', run); // the 10⁵-point record to replay (not timed)
    gc();
    const bare = await replay(join(dir, 'replay-me.jsonl'), false);
    gc();
    const p = await replay(join(dir, 'replay-me.jsonl'));
    const rows = [
      `journal alone:       ${Math.round(j.perSecond).toLocaleString('en')} readings/s (${j.syncs} fsyncs)  ratio to ${RECORDER_TARGET_PER_S.toLocaleString('en')}/s: ${(j.perSecond / RECORDER_TARGET_PER_S).toFixed(1)}×`,
      `recorder (source → journal, analysis left out): ${Math.round(r.perSecond).toLocaleString('en')} readings/s (10^6 readings in ${r.seconds.toFixed(2)} s, ${r.syncs} fsyncs, ${r.bytes.toFixed(1)} bytes/reading)  ratio to ${RECORDER_TARGET_PER_S.toLocaleString('en')}/s: ${(r.perSecond / RECORDER_TARGET_PER_S).toFixed(1)}×`,
      `replay 10^5 points, file read and played, no analysis: ${bare.seconds.toFixed(2)} s`,
      `replay 10^5 points through the analyzer: ${p.seconds.toFixed(2)} s  ratio target/actual: ${(REPLAY_TARGET_S / p.seconds).toFixed(1)}× (k = ${p.k?.toPrecision(4)} s^-1; demo k 3.5e-3)`,
    ];
    for (const row of rows) console.log(row);
    if (r.perSecond < RECORDER_TARGET_PER_S) { console.log('FAIL: recorder below 50,000 readings/s'); failed++; }
    if (p.seconds > REPLAY_TARGET_S) { console.log('FAIL: replay slower than 2 s'); failed++; }
    // DEMO.md: k_obs = 3.5 × 10⁻³ s⁻¹; a replay that gets k wrong is not a replay worth timing.
    if (p.k === null || Math.abs(p.k / 3.5e-3 - 1) > 0.05) { console.log(`FAIL: replayed k ${p.k} is not within 5% of the demo k 3.5e-3 s^-1`); failed++; }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return failed;
}

process.exitCode = (await main()) ? 1 : 0;
