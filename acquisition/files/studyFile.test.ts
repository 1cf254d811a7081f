import { describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { mkdtempSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadStudy, parseStudyFile, parseStudyFileName, saveStudy, sha256Hex, studyRelativePath, StudyFileError, type StudyDraft } from './studyFile';

const SAVED = '2026-12-02T09:00:00.000+01:00';
function folderWithRuns() {
  const dir = mkdtempSync(join(tmpdir(), 'rateline-study-'));
  mkdirSync(join(dir, 'runs'));
  writeFileSync(join(dir, 'runs', 'c1.csv'), 'time_s,absorbance\n0,0.65\n1,0.64\n');
  writeFileSync(join(dir, 'runs', 'c2.csv'), 'time_s,absorbance\n0,0.65\n1,0.63\n');
  return dir;
}
function draft(dir: string): StudyDraft {
  const run = (f: string, c: number) => ({
    path: `runs/${f}`, sha256: sha256Hex(readFileSync(join(dir, 'runs', f))),
    conditions: { concentrations: [{ name: 'hypochlorite', concentration_M: c }, { name: 'brilliant blue FCF', concentration_M: 5e-6 }], temperature_C: 25 },
    included: true, leftOutReason: null,
  });
  return {
    by: 'concentration', followedSpecies: 'brilliant blue FCF', excessReagent: 'hypochlorite', stoichiometry: 1, calibration: null,
    safetyNote: 'demo: sodium hypochlorite is corrosive; wear eye protection.', runs: [run('c1.csv', 0.01), run('c2.csv', 0.02)],
  };
}
const message = (f: () => unknown): string => { try { f(); } catch (e) { if (e instanceof StudyFileError) return e.message; throw e; } return 'no error'; };

describe('study file', () => {
  it('hashes with SHA-256 as node:crypto’s reference digest of "abc" (FIPS 180-2 test vector)', () => {
    // FIPS 180-2, appendix B.1: SHA-256("abc")
    expect(sha256Hex(new TextEncoder().encode('abc'))).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(sha256Hex(new TextEncoder().encode('abd'))).not.toBe(createHash('sha256').update('abc').digest('hex')); // negative control
  });

  it('saves a new version beside the old one, never rewriting it; the highest N is current', () => {
    const dir = folderWithRuns();
    const p1 = saveStudy(dir, 'bleach', draft(dir), SAVED);
    const first = readFileSync(p1, 'utf8');
    const p2 = saveStudy(dir, 'bleach', { ...draft(dir), safetyNote: 'changed' }, SAVED);
    expect(p1.endsWith('bleach.v1.study.json')).toBe(true);
    expect(p2.endsWith('bleach.v2.study.json')).toBe(true);
    expect(readFileSync(p1, 'utf8')).toBe(first);
    const old = loadStudy(p1);
    expect(old.newerRevision).toBe(2);
    const cur = loadStudy(p2);
    expect(cur.newerRevision).toBeNull();
    expect(cur.study.safetyNote).toBe('changed');
    expect(cur.runs.map((r) => r.run.conditions.concentrations[0]!.concentration_M)).toEqual([0.01, 0.02]);
    expect(parseStudyFileName('a/b/x.v12.study.json')).toEqual({ name: 'x', revision: 12 });
    expect(parseStudyFileName('x.study.json')).toBeNull();
  });

  it('a changed run, a missing run and a damaged file are each one sentence', () => {
    const dir = folderWithRuns();
    const p = saveStudy(dir, 's', draft(dir), SAVED);
    writeFileSync(join(dir, 'runs', 'c2.csv'), 'time_s,absorbance\n0,0.65\n1,0.60\n');
    expect(message(() => loadStudy(p))).toMatch(/^.*s\.v1\.study\.json: run 2 \(runs\/c2\.csv\) has changed since the study was saved \(its SHA-256 differs\); restore the original, or save a new version of the study with it\.$/);
    const dir2 = folderWithRuns();
    const p2 = saveStudy(dir2, 's', draft(dir2), SAVED);
    writeFileSync(join(dir2, 'runs', 'c1.csv.gone'), ''); // unrelated file
    rmSync(join(dir2, 'runs', 'c1.csv'));
    expect(message(() => loadStudy(p2))).toMatch(/: run 1 \(runs\/c1\.csv\) is missing; put it back, or save a new version of the study without it\.$/);
    expect(message(() => parseStudyFile('{"format":"rateline-study"}', 'x.v1.study.json'))).toMatch(/^x\.v1\.study\.json: not a valid study file at formatVersion \(.*\); keep a copy/);
    expect(message(() => parseStudyFile('{', 'x.v1.study.json'))).toMatch(/^x\.v1\.study\.json: not a study file \(not JSON/);
    // a run left out needs its reason
    const bad = { ...JSON.parse(readFileSync(p2, 'utf8')) };
    bad.runs[0].included = false;
    expect(message(() => parseStudyFile(JSON.stringify(bad), 's.v1.study.json'))).toMatch(/runs\.0 \(a run left out needs a leftOutReason\)/);
    // the name inside must match the file name
    expect(message(() => parseStudyFile(readFileSync(p2, 'utf8'), 's.v7.study.json'))).toMatch(/file name says s version 7 but the file holds s version 1/);
  });

  it('checks the calibration in use like a run', () => {
    const dir = folderWithRuns();
    writeFileSync(join(dir, 'cal.json'), '{"demo":true}\n');
    const p = saveStudy(dir, 'cal', { ...draft(dir), calibration: { path: 'cal.json', sha256: sha256Hex(readFileSync(join(dir, 'cal.json'))) } }, SAVED);
    expect(loadStudy(p).study.calibration!.path).toBe('cal.json');
    writeFileSync(join(dir, 'cal.json'), '{"demo":false}\n');
    expect(message(() => loadStudy(p))).toMatch(/: the calibration \(cal\.json\) has changed since the study was saved \(its SHA-256 differs\)/);
  });

  it('keeps runs inside the study folder', () => {
    const dir = folderWithRuns();
    expect(studyRelativePath(dir, join(dir, 'runs', 'c1.csv'))).toBe('runs/c1.csv');
    expect(message(() => studyRelativePath(join(dir, 'runs'), join(dir, 'x.csv')))).toMatch(/lies outside the study's folder/);
    const d = draft(dir);
    d.runs[0]!.path = '../elsewhere.csv';
    const p = saveStudy(dir, 'out', d, SAVED);
    expect(message(() => loadStudy(p))).toMatch(/run 1 \(\.\.\/elsewhere\.csv\) is not a path inside the study's folder/);
    expect(message(() => saveStudy(dir, 'a/b', draft(dir), SAVED))).toMatch(/is not a plain name/);
  });
});
