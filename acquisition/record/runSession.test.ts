import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { RunAnalyzer } from '../../kinetics/runAnalyzer';
import { DEMO_RUN, simulateRun } from '../../kinetics/reactionModel';
import { demoHeader } from '../../test/fixtures/demoRecordHeader';
import { Journal, type JournalFs } from './journal';
import { memoryJournalFs } from '../../test/fixtures/memoryJournalFs';
import { analysisReadings, parseRunRecord, readRunRecord } from './journalReader';
import { RunSession } from './runSession';
import { recordLineFor } from './recordLines';
import { fitSettingsToApply, recordFitSettings } from './recordTimeZero';
import type { AnalysisResult } from '../../kinetics/analysisTypes';
import type { ReadingSource, SourceEvent, SourceListener } from '../sources/sourceTypes';
import { emptyRejectCounts } from '../sources/sourceStatus';
import { ReplaySource, timelineFromRecord, timelineFromReadings } from '../sources/replaySource';
import { SimulatedSource } from '../sources/simulatedSource';
import { defaultInstrumentSettings } from '../sources/simulatedInstrument';

let dir: string;
beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'rateline-recorder-'));
});
afterEach(() => rmSync(dir, { recursive: true, force: true }));

/** The demo run of DEMO.md (invented data): first order, k = 3.5 × 10⁻³ s⁻¹, A0 0.65, A∞ 0.005, 1 s readings. */
function demoSource(duration_s = 900, withEvents = true): ReplaySource {
  const run = simulateRun({ ...DEMO_RUN, duration_s });
  if (!withEvents) return new ReplaySource(timelineFromReadings(run.time_s, run.absorbance, 630), { speed: 'max' });
  const path = join(dir, `source-${duration_s}.jsonl`);
  const j = Journal.create(path, demoHeader(), { timer: false });
  // Ten seconds of baseline before mixing, which the analysis must leave out.
  for (let i = 0; i < 10; i++) j.reading({ deviceTime_s: i, hostTime_ms: 0, absorbance: 0.0004 * (i % 3), wavelength_nm: 630, cellTemperature_C: 25, flags: 0 });
  j.event({ ev: 'mixed', h: 0, t: 10, wall: '2026-12-01T18:40:00.000+01:00' });
  for (let i = 0; i < run.time_s.length; i++) {
    if (i === 50) j.event({ ev: 'mark', h: 0, t: 10 + run.time_s[i]!, note: 'bubble (demo)' });
    j.reading({ deviceTime_s: 10 + run.time_s[i]!, hostTime_ms: 0, absorbance: run.absorbance[i]!, wavelength_nm: 630, cellTemperature_C: 25, flags: 0 });
  }
  j.close();
  return new ReplaySource(timelineFromRecord(readRunRecord(path)), { speed: 'max', batch: 64 });
}

function newRecord(name: string, fs?: JournalFs): Journal {
  return Journal.create(join(dir, name), { ...demoHeader(), instrument: { source: 'replay', port: null, baud: null, identity: null } }, { timer: false, ...(fs ? { fs } : {}) });
}

describe('recorder', () => {
  it('journals every reading, analyses from time zero on, and closes the record when the source ends', async () => {
    const journal = newRecord('copy.jsonl');
    const analyzer = new RunAnalyzer();
    const recorder = new RunSession({ source: demoSource(), journal, analyzer, wavelength_nm: 630 });
    await recorder.start();
    const outcome = await recorder.finished;
    expect(outcome.reason).toBe('sourceEnded');
    expect(outcome.error).toBeNull();
    expect(outcome.readings).toBe(911);

    const rec = readRunRecord(journal.path);
    expect(rec.recovery.clean).toBe(true);
    expect(rec.readings.count).toBe(911);
    const kinds = rec.events.map((e) => e.event.ev);
    expect(kinds.filter((k) => k === 'mixed')).toHaveLength(1);
    expect(kinds).toContain('mark');
    expect(kinds.at(-1)).toBe('stop');
    expect(rec.events.find((e) => e.event.ev === 'mixed')!.event.t).toBe(10);
    expect(rec.events.find((e) => e.event.ev === 'stop')!.event).toMatchObject({ reason: 'sourceEnded' });
    expect(kinds).not.toContain('meta'); // the wavelength stayed the header's

    // The analyzer saw exactly the record's analysis readings: the same result as analysing the file.
    expect(analyzer.count).toBe(901);
    const again = new RunAnalyzer();
    const s = analysisReadings(rec);
    for (let i = 0; i < s.time_s.length; i++) again.add(s.time_s[i]!, s.absorbance[i]!);
    expect(outcome.result!.models.first.k).toBe(again.result().models.first.k);
    // DEMO.md: k_obs = 3.5 × 10⁻³ s⁻¹; the run's 95% CI should hold it (a single seeded run, so a loose check).
    const ci = outcome.result!.models.first.kCI95!;
    expect(ci[0]).toBeLessThan(3.5e-3);
    expect(ci[1]).toBeGreaterThan(3.5e-3);
    expect(Math.abs(outcome.result!.models.first.k! - 3.5e-3)).toBeLessThan(1e-4);
  });

  it('stops at the run-time limit', async () => {
    const journal = newRecord('limit.jsonl');
    const recorder = new RunSession({ source: demoSource(300, false), journal, analyzer: new RunAnalyzer(), maxRunSeconds: 120 });
    await recorder.start();
    const outcome = await recorder.finished;
    expect(outcome.reason).toBe('limit');
    const rec = readRunRecord(journal.path);
    expect(rec.readings.t_s.at(-1)).toBe(120);
    expect(rec.readings.count).toBe(121);
    expect(rec.events.at(-1)!.event).toMatchObject({ ev: 'stop', reason: 'limit', detail: 'run time reached 120 s' });
  });

  it('stops when the advice says so, not before it holds', async () => {
    const journal = newRecord('advice.jsonl');
    const analyzer = new RunAnalyzer();
    const recorder = new RunSession({ source: demoSource(1500, false), journal, analyzer, untilAdvice: true });
    await recorder.start();
    const outcome = await recorder.finished;
    expect(outcome.reason).toBe('advice');
    expect(outcome.result!.stop.suggested).toBe(true);
    const last = readRunRecord(journal.path).readings.t_s.at(-1)!;
    expect(outcome.result!.stop.atTime_s).toBe(last);
    // Three half-lives of ln2/k = 198 s (DEMO.md) is about 594 s: the stop cannot come before.
    expect(last).toBeGreaterThanOrEqual(3 * Math.LN2 / 3.5e-3 * 0.9);
    expect(last).toBeLessThan(1500);
  });

  it('waits for a manual time zero and analyses nothing before it', async () => {
    const journal = newRecord('manual.jsonl');
    const analyzer = new RunAnalyzer();
    const recorder = new RunSession({ source: demoSource(60, false), journal, analyzer, timeZero: 'manual' });
    await recorder.start();
    const outcome = await recorder.finished;
    expect(analyzer.count).toBe(0);
    expect(outcome.readings).toBe(61);
    expect(readRunRecord(journal.path).events.map((e) => e.event.ev)).not.toContain('mixed');
  });

  it('stops with one clear sentence when the disk fails, keeping what was saved', async () => {
    const fs = memoryJournalFs();
    const journal = Journal.create('disk.jsonl', demoHeader(), { fs, timer: false, commit_ms: 0 });
    const source = demoSource(300, false);
    let readings = 0;
    source.on((e) => {
      if (e.type === 'reading' && ++readings === 100) fs.failWrites = 'ENOSPC';
    });
    const recorder = new RunSession({ source, journal, analyzer: new RunAnalyzer() });
    await recorder.start();
    const outcome = await recorder.finished;
    expect(outcome.reason).toBe('error');
    expect(outcome.error).toMatch(/^disk\.jsonl: the run record could not be written further \(the disk is full\); it holds \d+ readings .*, complete up to its last line; free space or choose another disk, and record again\.$/);
    // The count said is the count on disk, not the count handed over.
    const onDisk = parseRunRecord(fs.written, 'disk.jsonl').readings.count;
    expect(outcome.error).toContain(`it holds ${onDisk} readings`);
    expect(outcome.readings).toBe(onDisk);
    expect(journal.isClosed).toBe(true);
  });

  it('asks a counts device for the blank first and starts the run only once it is in', async () => {
    const journal = newRecord('counts.jsonl');
    const analyzer = new RunAnalyzer();
    const source = new SimulatedSource({ instrument: defaultInstrumentSettings(DEMO_RUN, { sends: 'counts', seed: 4 }), speed: 'max' });
    const recorder = new RunSession({ source, journal, analyzer, timeZero: { deviceTime_s: 0 }, maxRunSeconds: 400 });
    await recorder.start();
    expect(recorder.progress().phase).toBe('blank'); // the device said it sends counts: blank asked for
    const outcome = await recorder.finished;
    expect(outcome.reason).toBe('limit');
    const rec = readRunRecord(journal.path);
    const kinds = rec.events.map((e) => e.event.ev);
    expect(kinds.indexOf('blank')).toBeGreaterThan(-1);
    expect(kinds.indexOf('blank')).toBeLessThan(kinds.indexOf('mixed'));
    const blank = rec.events.find((e) => e.event.ev === 'blank')!.event;
    expect(blank).toMatchObject({ reference: { points: 5, wavelength_nm: 630 } });
    // Every reading analysed came after the blank; the first after it is the first analysed.
    const firstAnalysed = rec.readings.t_s[rec.events.find((e) => e.event.ev === 'mixed')!.index]!;
    expect(firstAnalysed).toBeGreaterThan(blank.t!);
    expect(analyzer.count).toBe(rec.readings.count);
    // DEMO.md: k_obs = 3.5 × 10⁻³ s⁻¹ must lie in the 95% CI from counts turned into absorbance.
    const ci = analyzer.flush().models.first.kCI95!;
    expect(ci[0]).toBeLessThan(3.5e-3);
    expect(ci[1]).toBeGreaterThan(3.5e-3);
  });

  it('keeps recording when the analysis fails, with a warning in the record', async () => {
    const journal = newRecord('analysis-fault.jsonl');
    const real = new RunAnalyzer();
    // Fault injection: an analyzer that breaks at the 50th reading.
    const failing = {
      get count() { return real.count; },
      add(t: number, a: number) {
        if (real.count === 49) throw new Error('injected fault');
        real.add(t, a);
      },
      result: () => real.result(),
    };
    const recorder = new RunSession({ source: demoSource(200, false), journal, analyzer: failing, untilAdvice: true });
    await recorder.start();
    const outcome = await recorder.finished;
    expect(outcome.reason).toBe('sourceEnded');
    expect(outcome.readings).toBe(201);
    const rec = readRunRecord(journal.path);
    expect(rec.readings.count).toBe(201);
    const warning = rec.events.find((e) => e.event.ev === 'warning')!.event as { message: string };
    expect(warning.message).toMatch(/^the analysis failed at 49 s \(injected fault\); recording goes on/);
    expect(real.count).toBe(49);
  });
});

/** A source these tests drive by hand: each reading goes out when the test says so. */
function handSource(): ReadingSource & { send(e: SourceEvent): void; reading(t: number, a: number): void } {
  const listeners = new Set<SourceListener>();
  const send = (e: SourceEvent): void => { for (const l of listeners) l(e); };
  return {
    kind: 'serial',
    on(l) { listeners.add(l); return () => listeners.delete(l); },
    async open() { send({ type: 'status', status: { kind: 'connected', detail: 'hand source' } }); },
    async command() { return { ok: true }; },
    async close() { /* nothing held */ },
    rejectedCounts: () => emptyRejectCounts(),
    send,
    reading(t, a) { send({ type: 'reading', reading: { deviceTime_s: t, hostTime_ms: 0, absorbance: a, wavelength_nm: 630, cellTemperature_C: null, flags: 0 } }); },
  };
}

/** What `rateline analyze` does with a record: its readings from time zero, its stop settings, one flushed fit. */
function analyseRecord(path: string): AnalysisResult {
  const rec = readRunRecord(path);
  const s = analysisReadings(rec);
  const an = new RunAnalyzer(fitSettingsToApply(recordFitSettings(rec.events)));
  for (let i = 0; i < s.time_s.length; i++) an.add(s.time_s[i]!, s.absorbance[i]!);
  return an.flush();
}

describe('run session', () => {
  it('moves time zero to the last Mixed, refits over the kept readings, and ends with the numbers analyze gives of its record', async () => {
    const run = simulateRun({ ...DEMO_RUN, duration_s: 700 });
    const journal = newRecord('session.jsonl');
    const source = handSource();
    const session = new RunSession({
      source, journal, analyzer: new RunAnalyzer(), createAnalyzer: (o) => new RunAnalyzer(o), timeZero: 'manual',
    });
    await session.start();
    // 20 s of baseline, then Mixed pressed at 20 s and pressed again (a correction) at 25 s.
    for (let i = 0; i < 20; i++) source.reading(i, 0.65);
    session.markMixed();
    for (let i = 0; i < 5; i++) source.reading(20 + i, run.absorbance[0]!);
    session.markMixed();
    for (let i = 0; i < run.time_s.length; i++) source.reading(25 + run.time_s[i]! + 1, run.absorbance[i]!);
    session.setFitWindow({ from_s: 10, to_s: null });
    const outcome = await session.stop('user', 'stopped by the user');

    const rec = readRunRecord(journal.path);
    expect(rec.events.filter((p) => p.event.ev === 'mixed').map((p) => p.event.t)).toEqual([19, 24]);
    expect(analysisReadings(rec).timeZero_s).toBe(24);
    const settings = rec.events.find((p) => p.event.ev === 'fitSettings')!.event;
    expect(settings).toMatchObject({ from_s: 10, to_s: null, targetHalfLives: 3, precision: 0.05 });
    // The session's final result and analyze of its record agree to the last digit.
    const fromRecord = analyseRecord(journal.path);
    expect(outcome.result!.models.first.k).toBe(fromRecord.models.first.k);
    expect(outcome.result!.models.first.kCI95).toEqual(fromRecord.models.first.kCI95);
    expect(outcome.result!.halfLivesElapsed).toBe(fromRecord.halfLivesElapsed);
    expect(outcome.result!.pointsInWindow).toBe(fromRecord.pointsInWindow);
    expect(outcome.result!.window).toEqual({ from_s: 10, to_s: null });
    // DEMO.md (invented data): k_obs = 3.5 × 10⁻³ s⁻¹ at 25 °C, 0.010 M hypochlorite.
    expect(Math.abs(fromRecord.models.first.k! - 3.5e-3)).toBeLessThan(1.5e-4);
    // Negative control: the first-wins rule (time zero 19 s) with no window is not the same fit.
    const wrong = new RunAnalyzer();
    for (let i = 0; i < rec.readings.count; i++) if (rec.readings.t_s[i]! >= 19) wrong.add(rec.readings.t_s[i]! - 19, rec.readings.absorbance[i]!);
    expect(wrong.flush().pointsInWindow).not.toBe(fromRecord.pointsInWindow);
  });

  it('without a final refit the last scheduled result lags the record (negative control for the flush at stop)', () => {
    // Refits come on a schedule set by the reading count, so a run can end between two refits.
    const differs = [701, 903, 1107].some((duration_s) => {
      const run = simulateRun({ ...DEMO_RUN, duration_s });
      const stale = new RunAnalyzer();
      const fresh = new RunAnalyzer();
      for (let i = 0; i < run.time_s.length; i++) {
        stale.add(run.time_s[i]!, run.absorbance[i]!);
        fresh.add(run.time_s[i]!, run.absorbance[i]!);
      }
      return stale.result().models.first.k !== fresh.flush().models.first.k;
    });
    expect(differs).toBe(true);
  });

  it('warns, in the record and in its progress, when the instrument was part-way through its run at the first reading', async () => {
    const journal = newRecord('late.jsonl');
    const source = handSource();
    const session = new RunSession({ source, journal, analyzer: new RunAnalyzer(), warnLateStart: true });
    await session.start();
    for (let i = 0; i < 30; i++) source.reading(312 + i, 0.4 - 0.001 * i);
    expect(session.progress().lastWarning).toMatch(/clock read 312 s at the first reading, so it was part-way through a run/);
    await session.stop('user', 'done');
    const warnings = readRunRecord(journal.path).events.filter((p) => p.event.ev === 'warning');
    expect(warnings).toHaveLength(1);
    // Negative control: an instrument whose clock starts with the run (first reading at 1 s) gets no warning.
    const quiet = new RunSession({ source: handSource(), journal: newRecord('early.jsonl'), analyzer: new RunAnalyzer(), warnLateStart: true });
    await quiet.start();
    expect(quiet.progress().lastWarning).toBeNull();
  });

  it('writes a counts device’s blank with its reference through the one line mapping', () => {
    const line = recordLineFor(
      { type: 'blank', blank: { deviceTime_s: 3, points: 5, wavelength_nm: 630, netBlank_counts: 41000, dark_counts: 900, noise_AU: 2e-4, drift_AUperMin: null, warmedUp: null, warnings: [] } },
      { h: 10, t: 3, hostOffset_ms: (ms) => ms },
    );
    expect(line).toMatchObject({ ev: 'blank', t: 3, reference: { net_counts: 41000, dark_counts: 900, points: 5, wavelength_nm: 630 } });
  });
});
