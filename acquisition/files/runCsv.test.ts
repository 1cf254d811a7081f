import { describe, expect, it } from 'vitest';
import Papa from 'papaparse';
import { parseRunCsv } from './runCsv';

describe('CSV run text', () => {
  it('reads comma CSV with extra columns and comments, matching papaparse', () => {
    const text = '# demo data\nsample,time_s,absorbance\nx,0,0.650\nx,1.5,"0.640"\n\nx,3,6.4e-1\n';
    const r = parseRunCsv(text, 'runs/a.csv');
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    // papaparse 5.7.1 as the reference reader of the same text
    const ref = Papa.parse<Record<string, string>>(text.split('\n').slice(1).join('\n'), { header: true, skipEmptyLines: true, dynamicTyping: true });
    expect(Array.from(r.run.time_s)).toEqual(ref.data.map((d) => Number(d.time_s)));
    expect(Array.from(r.run.absorbance)).toEqual(ref.data.map((d) => Number(d.absorbance)));
    expect(r.run.delimiter).toBe(',');
  });

  it('reads semicolons with a decimal comma', () => {
    const r = parseRunCsv('time_s;absorbance\n0;0,650\n1;0,648\n', 'b.csv');
    expect(r.ok && Array.from(r.run.absorbance)).toEqual([0.65, 0.648]);
    expect(r.ok && r.run.decimalComma).toBe(true);
  });

  it('names the file and line for each kind of bad input', () => {
    expect(parseRunCsv('time_s,abs\n0,1\n', 'runs/a.csv')).toEqual({ ok: false, error: 'runs/a.csv line 1: no "absorbance" column (the header has "time_s", "abs"); name the columns time_s and absorbance.' });
    expect(parseRunCsv('time_s,absorbance\n0,1\n1,x\n', 'runs/a.csv')).toEqual({ ok: false, error: 'runs/a.csv line 3: "x" in column absorbance is not a number; fix or remove the line.' });
    expect(parseRunCsv('time_s,absorbance\n514,1\n512,1\n', 'runs/a.csv')).toEqual({ ok: false, error: 'runs/a.csv line 3: time goes backwards (512 s after 514 s); sort the file or remove the line.' });
    expect(parseRunCsv('time_s,absorbance\n1\n', 'a.csv')).toMatchObject({ ok: false, error: expect.stringContaining('a.csv line 2:') });
    expect(parseRunCsv('\n\n', 'a.csv')).toMatchObject({ ok: false, error: expect.stringContaining('no header row') });
    expect(parseRunCsv('time_s,absorbance\n0,NaN\n', 'a.csv').ok).toBe(false);
  });
});
