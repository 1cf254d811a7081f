/**
 * `rateline record --simulate` then `rateline analyze --format json` of its record: the
 * same k, 95% CI, half-lives and point count, to the last digit, as the record command's
 * own final result. The oracle is the record itself, read by the other command; the
 * negative control changes the fit window on the command line and must differ.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { run as record } from './record';
import { run as analyze } from './analyze';

let dir: string;
beforeEach(() => { dir = mkdtempSync(join(tmpdir(), 'rateline-record-analyze-')); });
afterEach(() => { vi.restoreAllMocks(); rmSync(dir, { recursive: true, force: true }); });

interface Numbers { k: number | null; kCI95: unknown; halfLives: number | null; points: number; inWindow: number }
function numbers(r: { models: { first: { k: number | null; kCI95: unknown } }; halfLivesElapsed: number | null; points: number; pointsInWindow: number }): Numbers {
  return { k: r.models.first.k, kCI95: r.models.first.kCI95, halfLives: r.halfLivesElapsed, points: r.points, inWindow: r.pointsInWindow };
}

async function analyzeJson(argv: string[]): Promise<Numbers> {
  const out: string[] = [];
  const log = vi.spyOn(console, 'log').mockImplementation((m: unknown) => void out.push(String(m)));
  expect(await analyze(argv)).toBe(0);
  log.mockRestore();
  return numbers(JSON.parse(out.join('\n')));
}

describe('record then analyze', () => {
  it('gives the numbers the recording ended with', async () => {
    const path = join(dir, 'sim.jsonl');
    const lines: string[] = [];
    const write = vi.spyOn(process.stdout, 'write').mockImplementation((chunk: unknown) => (lines.push(String(chunk)), true));
    // 613 s: a run length that does not end on a scheduled refit, so only the final refit makes the two agree.
    expect(await record(['--simulate', '--speed', 'max', '--max-seconds', '613', '--out', path, '--progress', 'json'])).toBe(0);
    write.mockRestore();
    const summary = JSON.parse(lines.at(-1)!) as { result: Parameters<typeof numbers>[0]; readings: number };
    const recorded = numbers(summary.result);
    expect(recorded.k).not.toBeNull();

    const analysed = await analyzeJson([path, '--format', 'json']);
    expect(analysed).toEqual(recorded);
    // Negative control: another fit window on the command line overrides the record's and changes the fit.
    const other = await analyzeJson([path, '--format', 'json', '--from', '100']);
    expect(other.inWindow).not.toBe(recorded.inWindow);
    expect(other.k).not.toBe(recorded.k);
  }, 60_000);
});
