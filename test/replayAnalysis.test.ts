/**
 * A recorded run replayed at full speed through the analyzer must give what analysing the
 * file gives: `rateline analyze FILE --format json`, run as the user would run it.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Journal } from '../acquisition/record/journal';
import { RunSession } from '../acquisition/record/runSession';
import { replayFromFile } from '../acquisition/files/replayFile';
import { RunAnalyzer } from '../kinetics/runAnalyzer';
import { DEMO_RUN, simulateRun } from '../kinetics/reactionModel';
import { demoHeader } from './fixtures/demoRecordHeader';

const root = join(import.meta.dirname, '..');
let dir: string;
let recordPath: string;
let csvPath: string;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'rateline-replay-analysis-'));
  // The demo run of DEMO.md (invented data), with 30 s of baseline before time zero and two spikes.
  const run = simulateRun({ ...DEMO_RUN, spikes: 2 });
  recordPath = join(dir, 'demo.jsonl');
  const j = Journal.create(recordPath, demoHeader(), { timer: false });
  for (let t = 0; t < 30; t++) j.reading({ deviceTime_s: t, hostTime_ms: 0, absorbance: 0.0003, wavelength_nm: 630, cellTemperature_C: 25, flags: 0 });
  j.event({ ev: 'mixed', h: 0, t: 30, wall: '2026-12-01T18:40:00.000+01:00' });
  const rows = ['time_s,absorbance'];
  for (let i = 0; i < run.time_s.length; i++) {
    j.reading({ deviceTime_s: 30 + run.time_s[i]!, hostTime_ms: 0, absorbance: run.absorbance[i]!, wavelength_nm: 630, cellTemperature_C: 25, flags: 0 });
    rows.push(`${run.time_s[i]},${run.absorbance[i]}`);
  }
  j.close();
  csvPath = join(dir, 'demo.csv');
  writeFileSync(csvPath, rows.join('\n') + '\n');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function analyzeCommand(file: string): Record<string, unknown> {
  const out = execFileSync(process.execPath, [join(root, 'bin', 'rateline.js'), 'analyze', file, '--format', 'json'], { cwd: root, encoding: 'utf8' });
  const parsed = JSON.parse(out) as Record<string, unknown>;
  delete parsed.file;
  // The command's own addition beside the analyzer's result: the calibration used, none here.
  expect(parsed.calibration).toBeNull();
  delete parsed.calibration;
  return parsed;
}

async function replayThroughAnalyzer(file: string): Promise<{ result: Record<string, unknown>; readings: number }> {
  const source = await replayFromFile(file, { speed: 'max' });
  const analyzer = new RunAnalyzer();
  const journal = Journal.create(join(dir, `copy-${Math.random().toString(36).slice(2)}.jsonl`), demoHeader(), { timer: false });
  const recorder = new RunSession({ source, journal, analyzer });
  await recorder.start();
  const outcome = await recorder.finished;
  // The command prints the final refit; JSON turns the result into what the command prints.
  const result = JSON.parse(JSON.stringify(analyzer.flush(), (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v))) as Record<string, unknown>;
  return { result, readings: outcome.readings };
}

/**
 * Differences between two results, walking both: numbers may differ by a part in 10⁶
 * (the fits converge to a tolerance and a warm start may land a hair apart), everything
 * else must be equal. Returns the paths that differ.
 */
function differences(a: unknown, b: unknown, path = '', rel = 1e-6): string[] {
  if (typeof a === 'number' && typeof b === 'number') {
    return Math.abs(a - b) <= rel * Math.max(Math.abs(a), Math.abs(b)) + 1e-15 ? [] : [`${path}: ${a} vs ${b}`];
  }
  if (Array.isArray(a) && Array.isArray(b)) {
    if (a.length !== b.length) return [`${path}: ${a.length} items vs ${b.length}`];
    return a.flatMap((x, i) => differences(x, b[i], `${path}[${i}]`, rel));
  }
  if (a !== null && b !== null && typeof a === 'object' && typeof b === 'object') {
    const keys = new Set([...Object.keys(a), ...Object.keys(b)]);
    return [...keys].flatMap((k) => differences((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], `${path}.${k}`, rel));
  }
  return a === b ? [] : [`${path}: ${JSON.stringify(a)} vs ${JSON.stringify(b)}`];
}

describe('replay through the analyzer', () => {
  it('gives the same result as rateline analyze of the record', async () => {
    const replayed = await replayThroughAnalyzer(recordPath);
    expect(replayed.readings).toBe(931);
    const analyzed = analyzeCommand(recordPath);
    expect(analyzed.points).toBe(901);
    expect(differences(replayed.result, analyzed)).toEqual([]);
    // DEMO.md: k_obs = 3.5 × 10⁻³ s⁻¹, first order; the record's analysis must find it (the spikes left out).
    const first = (analyzed.models as { first: { k: number; kCI95: [number, number] } }).first;
    expect(first.kCI95[0]).toBeLessThan(3.5e-3);
    expect(first.kCI95[1]).toBeGreaterThan(3.5e-3);
    expect((analyzed.verdict as { order: string }).order).toBe('first');
  }, 90_000);

  it('gives the same result from the CSV of the same run, replayed or analysed', async () => {
    const replayed = await replayThroughAnalyzer(csvPath);
    const analyzedCsv = analyzeCommand(csvPath);
    expect(differences(replayed.result, analyzedCsv)).toEqual([]);
    // And the CSV and the record hold the same run: the same analysis (negative control: a different run differs).
    expect(differences(analyzedCsv, analyzeCommand(recordPath))).toEqual([]);
    const other = join(dir, 'other.csv');
    const run = simulateRun({ ...DEMO_RUN, seed: 2 });
    writeFileSync(other, ['time_s,absorbance', ...Array.from(run.time_s, (t, i) => `${t},${run.absorbance[i]}`)].join('\n') + '\n');
    expect(differences(analyzeCommand(other), analyzedCsv).length).toBeGreaterThan(10);
  }, 90_000);
});
