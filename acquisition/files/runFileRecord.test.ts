import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { DEMO_RUN, simulateRun } from '../../kinetics/reactionModel';
import { demoHeader } from '../../test/fixtures/demoRecordHeader';
import { Journal } from '../record/journal';
import { RunFileError, loadRun } from './runFile';
import { RUN_RECORD_VERSION } from '../record/runRecordFormat';

let dir: string;
beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'rateline-runfile-'));
});
afterEach(() => rmSync(dir, { recursive: true, force: true }));

/** The demo run (DEMO.md, invented) written both as a run record (time zero at device 5 s) and as CSV. */
function writeBoth(name: string, close = true): { record: string; csv: string } {
  const run = simulateRun({ ...DEMO_RUN, duration_s: 120 });
  const record = join(dir, `${name}.jsonl`);
  const j = Journal.create(record, demoHeader(), { timer: false });
  j.reading({ deviceTime_s: 4, hostTime_ms: 0, absorbance: 0.0002, wavelength_nm: 630, cellTemperature_C: null, flags: 0 });
  j.event({ ev: 'mixed', h: 0, t: 5, wall: '2026-12-01T18:40:00.000+01:00' });
  const rows = ['time_s,absorbance'];
  for (let i = 0; i < run.time_s.length; i++) {
    j.reading({ deviceTime_s: 5 + run.time_s[i]!, hostTime_ms: 0, absorbance: run.absorbance[i]!, wavelength_nm: 630, cellTemperature_C: null, flags: 0 });
    rows.push(`${run.time_s[i]},${run.absorbance[i]}`);
  }
  if (close) j.close();
  else j.commit();
  const csv = join(dir, `${name}.csv`);
  writeFileSync(csv, rows.join('\n') + '\n');
  return { record, csv };
}

describe('loadRun reads run records as well as CSV', () => {
  it('gives the same readings from a record as from the CSV of the same readings', async () => {
    const { record, csv } = writeBoth('demo');
    const fromRecord = await loadRun(record);
    const fromCsv = await loadRun(csv);
    expect(fromRecord.source).toEqual({ path: record, format: 'runRecord', version: RUN_RECORD_VERSION, demo: true, calibration: null });
    expect(fromCsv.source.format).toBe('csv');
    // Time is measured from the mixed event; the reading before it (the baseline) is left out.
    expect(Array.from(fromRecord.time_s)).toEqual(Array.from(fromCsv.time_s));
    expect(Array.from(fromRecord.absorbance)).toEqual(Array.from(fromCsv.absorbance));
    expect(fromRecord.notice).toBeUndefined();
  });

  it('knows a record by its header line whatever its extension', async () => {
    const { record } = writeBoth('renamed');
    const txt = join(dir, 'renamed.txt');
    writeFileSync(txt, readFileSync(record));
    const run = await loadRun(txt);
    expect(run.source.format).toBe('runRecord');
    expect(run.time_s.length).toBe(121);
  });

  it('recovers a record cut off mid-run and says so', async () => {
    const { record } = writeBoth('cut', false);
    writeFileSync(record, readFileSync(record, 'utf8') + '[126,0.4');
    const run = await loadRun(record);
    expect(run.time_s.length).toBe(121);
    expect(run.notice).toMatch(/no end line .* recovered 122 readings, dropped the torn last line 125/);
  });

  it('names the file and line of a damaged record', async () => {
    const { record } = writeBoth('bad');
    const lines = readFileSync(record, 'utf8').split('\n');
    lines[9] = '[9,"0.5",9]';
    writeFileSync(record, lines.join('\n'));
    await expect(loadRun(record)).rejects.toThrow(RunFileError);
    await expect(loadRun(record)).rejects.toThrow(new RegExp(`^${record.replace(/[.*+?^${}()|[\]\\/]/g, '\\$&')} line 10: not a valid reading`));
  });
});
