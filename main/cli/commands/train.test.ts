import { mkdtempSync, readFileSync, rmSync, writeFileSync, appendFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { InputError } from '../common/cliErrors';
import { run as record } from './record';
import { run as analyze } from './analyze';
import { run as train } from './train';
import { attemptsPath } from '../../../acquisition/record/trainingAttempts';

let dir: string;
let rec: string;

async function captured(fn: () => Promise<number>): Promise<string> {
  const out: string[] = [];
  const log = vi.spyOn(console, 'log').mockImplementation((m: unknown) => void out.push(String(m)));
  const write = vi.spyOn(process.stdout, 'write').mockImplementation(() => true);
  const err = vi.spyOn(console, 'error').mockImplementation(() => undefined);
  try {
    expect(await fn()).toBe(0);
  } finally {
    log.mockRestore(); write.mockRestore(); err.mockRestore();
  }
  return out.join('\n');
}

async function inputError(argv: string[]): Promise<string> {
  try {
    await train(argv);
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    return (e as Error).message;
  }
  throw new Error('no InputError');
}

interface AnalyzeJson { drivingModel: 'first'; models: Record<string, { k: number; kStdErr: number; kCI95: [number, number] }>; stop: { atTime_s: number | null }; halfLivesElapsed: number; verdict: { order: string } }

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'rateline-train-'));
  rec = join(dir, 'demo.jsonl');
  // The demo run (k_obs = 0.35 M^-1 s^-1 × 0.010 M, 1 s readings) to 900 s, about 4.5 half-lives.
  await captured(() => record(['--simulate', '--speed', 'max', '--max-seconds', '900', '--out', rec, '--operator', 'demo', '--temperature-c', '25.0', '--progress', 'json']));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('rateline train scores a stop with the same numbers rateline analyze gives', () => {
  let early: { score: Record<string, any> } & Record<string, any>;
  let atStop: AnalyzeJson;
  let whole: AnalyzeJson;
  beforeAll(async () => {
    early = JSON.parse(await captured(() => train([rec, '--stop-at', '250', '--order', 'first', '--trainee', 'Ana', '--format', 'json'])));
    atStop = JSON.parse(await captured(() => analyze([rec, '--to', '250', '--format', 'json'])));
    whole = JSON.parse(await captured(() => analyze([rec, '--format', 'json'])));
  });

  it('k, its SE and interval at the stop are analyze --to S; the whole run is analyze without a window', () => {
    const m = early.score.trainee.model as string;
    expect(m).toBe(whole.drivingModel);
    expect(early.score.trainee.k).toBe(atStop.models[m].k);
    expect(early.score.trainee.kStdErr).toBe(atStop.models[m].kStdErr);
    expect(early.score.trainee.kCI95).toEqual(atStop.models[m].kCI95);
    expect(early.score.whole.k).toBe(whole.models[m].k);
  });

  it('the advice stop time is the analyzer\'s, and the minutes and standard errors follow from it', () => {
    expect(whole.stop.atTime_s).not.toBeNull();
    expect(early.score.adviceStop_s).toBe(whole.stop.atTime_s);
    expect(early.score.minutesFromAdvice).toBeCloseTo((250 - whole.stop.atTime_s!) / 60, 12);
    const m = whole.drivingModel;
    expect(early.score.kOffInStdErr).toBeCloseTo((atStop.models[m].k - whole.models[m].k) / atStop.models[m].kStdErr, 10);
    expect(early.score.orderRight).toBe(whole.verdict.order === 'first');
  });

  it('half-lives at the stop agree with the first-order half-life t½ = ln 2 / k (textbook integrated rate law)', () => {
    const k = early.score.trainee.k as number;
    expect(early.score.trainee.halfLivesElapsed).toBeCloseTo((250 * k) / Math.LN2, 1);
    expect(early.score.summary).toContain(`stopped at ${((250 * k) / Math.LN2).toFixed(1)} half-lives`);
    expect(early.score.summary).toMatch(/wait about [\d.]+ min more/);
  });

  it('negative control: a score taken at another stop does not pass the same check', async () => {
    const other = JSON.parse(await captured(() => train([rec, '--stop-at', '200', '--format', 'json'])));
    expect(other.score.trainee.k).not.toBe(atStop.models[whole.drivingModel].k);
    expect(other.score.trainee.kStdErr).not.toBe(atStop.models[whole.drivingModel].kStdErr);
  });

  it('letting the run play out is "did not stop", scored against the whole run', async () => {
    const out = JSON.parse(await captured(() => train([rec, '--stop-at', 'end', '--format', 'json'])));
    expect(out.score.stopped).toBe(false);
    expect(out.score.trainee.k).toBe(whole.models[whole.drivingModel].k);
    expect(out.score.summary.startsWith('did not stop')).toBe(true);
  });

  it('keeps every attempt beside the record, lists them, and a damaged line is skipped and counted', async () => {
    const before = readFileSync(rec, 'utf8');
    await captured(() => train([rec, '--stop-at', '400', '--order', 'second', '--trainee', 'Ben']));
    expect(readFileSync(rec, 'utf8')).toBe(before); // the record itself is never touched
    const path = attemptsPath(rec);
    const lines = readFileSync(path, 'utf8').trimEnd().split('\n');
    expect(lines.length).toBeGreaterThanOrEqual(4);
    // Damage one line in the middle: the attempts around it stay readable.
    const damaged = [...lines.slice(0, 1), '{"wall": "torn', ...lines.slice(1)].join('\n') + '\n';
    writeFileSync(path, damaged);
    appendFileSync(path, '');
    const listed = JSON.parse(await captured(() => train([rec, '--attempts', '--format', 'json'])));
    expect(listed.attempts).toHaveLength(lines.length);
    expect(listed.damagedLines).toEqual([2]);
    expect(listed.attempts.map((a: { trainee: string | null }) => a.trainee)).toContain('Ben');
    const ben = listed.attempts.find((a: { trainee: string | null }) => a.trainee === 'Ben');
    expect(ben).toMatchObject({ stopAt_s: 400, statedOrder: 'second' });
    expect(ben.score.orderRight).toBe(whole.verdict.order === 'second');
    const text = await captured(() => train([rec, '--attempts']));
    expect(text).toContain('1 damaged line(s)');
  });
});

describe('rateline train: bad input is one sentence', () => {
  it.each([
    [[], 'no run record given'],
    [['x.jsonl'], 'no --stop-at given'],
    [['x.jsonl', '--stop-at', 'soon'], '--stop-at soon is not'],
    [['x.jsonl', '--stop-at', '100', '--order', 'third'], '--order'],
    [['x.jsonl', '--attempts', '--stop-at', '5'], 'takes no --stop-at'],
  ])('%j', async (argv, what) => {
    const m = await inputError(argv as string[]);
    expect(m).toContain(what);
    expect(m.split('\n')).toHaveLength(1);
  });

  it('a stop before enough readings for a fit says so', async () => {
    expect(await inputError([rec, '--stop-at', '3'])).toMatch(/^rateline train: --stop-at 3 leaves [0-9] reading\(s\) .*stop later\.$/);
  });

  it('a CSV is refused, since attempts are kept beside a run record', async () => {
    const csv = join(dir, 'run.csv');
    writeFileSync(csv, 'time_s,absorbance\n' + Array.from({ length: 30 }, (_, i) => `${i},${(0.65 * Math.exp(-0.0035 * i)).toFixed(4)}`).join('\n') + '\n');
    expect(await inputError([csv, '--stop-at', '20'])).toContain('attempts are kept only beside a run record');
  });
});
