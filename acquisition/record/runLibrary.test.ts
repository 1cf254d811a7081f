/**
 * The run library against records made by the real `rateline record` (simulated
 * instrument): k and the verdict as `rateline analyze` gives them for the same file,
 * computed once and cached by content, a damaged and a truncated record listed with their
 * reasons beside the good ones, sidecars and studies not listed.
 */
import { appendFileSync, copyFileSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ratelineIn } from '../../test/cli/ratelineCli';
import { LIBRARY_CACHE_FOLDER, indexRunsFolder, isRunRecordName } from './runLibrary';

describe('the run library', () => {
  const { dir, rateline } = ratelineIn('rateline-library-');
  const made = rateline('record', '--simulate', '--speed', 'max', '--max-seconds', '400', '--out', 'good.jsonl', '--progress-ms', '60000',
    '--sample', 'brilliant blue FCF (demo)', '--operator', 'lab 2');

  it('lists a good record with what analyze says of it, to the digit', async () => {
    expect(made.code, made.err).toBe(0);
    const analyzed = rateline('analyze', 'good.jsonl', '--format', 'json');
    expect(analyzed.code, analyzed.err).toBe(0);
    const a = JSON.parse(analyzed.out);
    const { entries, fromCache } = await indexRunsFolder(dir);
    expect(fromCache).toBe(0);
    const e = entries.find((x) => x.name === 'good.jsonl')!;
    expect(e.problem).toBeNull();
    expect(e.sample).toBe('brilliant blue FCF (demo)');
    expect(e.operator).toBe('lab 2');
    expect(e.demo).toBe(true);
    expect(e.readings).toBe(a.points);
    // the same numbers, not near ones: one reading of one record gives one k
    expect(e.k).toBe(a.models[a.drivingModel].k);
    expect(e.kCI95).toEqual(a.models[a.drivingModel].kCI95);
    expect(e.verdict).toBe(a.verdict.order);
  }, 120_000);

  it('takes k from the cache the second time, computes again when the cache is deleted, and follows the content', async () => {
    const again = await indexRunsFolder(dir);
    expect(again.fromCache).toBe(again.entries.length);
    rmSync(join(dir, LIBRARY_CACHE_FOLDER), { recursive: true, force: true });
    const fresh = await indexRunsFolder(dir);
    expect(fresh.fromCache).toBe(0);
    expect(fresh.entries.map((e) => e.k)).toEqual(again.entries.map((e) => e.k));
    // A copy dropped into the folder is listed at once, from the cache (same content, same hash).
    copyFileSync(join(dir, 'good.jsonl'), join(dir, 'copied in.jsonl'));
    const withCopy = await indexRunsFolder(dir);
    expect(withCopy.entries.map((e) => e.name).sort()).toEqual(['copied in.jsonl', 'good.jsonl']);
    expect(withCopy.fromCache).toBe(2);
  });

  it('lists a damaged and a truncated record with their reasons, and never hides the good ones', async () => {
    const good = readFileSync(join(dir, 'good.jsonl'), 'utf8');
    writeFileSync(join(dir, 'damaged.jsonl'), good.replace(/^.*\n/, '{"format":"something else"}\n'));
    // cut in the middle of a line, as a pulled plug leaves it
    writeFileSync(join(dir, 'truncated.jsonl'), good.slice(0, Math.floor(good.length * 0.6)));
    writeFileSync(join(dir, 'empty.jsonl'), '');
    // not runs: sidecars and a study
    writeFileSync(join(dir, 'good.notes.jsonl'), '{"note":"bubble at 210 s"}\n');
    writeFileSync(join(dir, 'good.attempts.jsonl'), '');
    writeFileSync(join(dir, 'series.v1.study.json'), '{}');
    const { entries } = await indexRunsFolder(dir);
    const by = new Map(entries.map((e) => [e.name, e]));
    expect([...by.keys()].sort()).toEqual(['copied in.jsonl', 'damaged.jsonl', 'empty.jsonl', 'good.jsonl', 'truncated.jsonl']);
    expect(by.get('good.jsonl')!.k).not.toBeNull();
    expect(by.get('damaged.jsonl')!.problem).toMatch(/damaged\.jsonl/);
    expect(by.get('empty.jsonl')!.problem).toMatch(/empty\.jsonl/);
    // A truncated record is read as recovered: listed with its numbers and the notice, or its reason.
    const t = by.get('truncated.jsonl')!;
    expect(t.notice !== null || t.problem !== null).toBe(true);
    if (t.problem === null) expect(t.readings).toBeLessThan(by.get('good.jsonl')!.readings);
    for (const e of entries) if (e.problem) expect(e.problem.split(/(?<=[.;])\s/).length).toBeLessThanOrEqual(3);
  });

  it('negative control: a record changed after it was cached is analysed again, not read from the cache', async () => {
    appendFileSync(join(dir, 'copied in.jsonl'), '');
    const before = (await indexRunsFolder(dir)).entries.find((e) => e.name === 'copied in.jsonl')!;
    const text = readFileSync(join(dir, 'copied in.jsonl'), 'utf8').split('\n');
    // drop the last third of the readings: a different run, a different hash
    const cut = text.slice(0, Math.floor(text.length * 0.66)).join('\n') + '\n';
    writeFileSync(join(dir, 'copied in.jsonl'), cut);
    const after = (await indexRunsFolder(dir)).entries.find((e) => e.name === 'copied in.jsonl')!;
    expect(after.sha256).not.toBe(before.sha256);
    expect(after.readings).toBeLessThan(before.readings);
    expect(readdirSync(join(dir, LIBRARY_CACHE_FOLDER)).length).toBeGreaterThan(1);
  });

  it('knows a run from its sidecars by name', () => {
    expect(isRunRecordName('run-20261201.jsonl')).toBe(true);
    expect(isRunRecordName('run-20261201.notes.jsonl')).toBe(false);
    expect(isRunRecordName('run.attempts.jsonl')).toBe(false);
    expect(isRunRecordName('series.v3.study.json')).toBe(false);
    expect(isRunRecordName('run.csv')).toBe(false);
  });
});
