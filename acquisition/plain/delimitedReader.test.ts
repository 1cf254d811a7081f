import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import Papa from 'papaparse';
import { DelimitedReader } from './delimitedReader';

describe('delimited reader', () => {
  it('splits fields as papaparse does for unquoted lines', () => {
    // papaparse (independent CSV library) as the oracle for field splitting
    for (const delimiter of [',', ';', '\t']) {
      const r = new DelimitedReader({ delimiter, columns: { time: 0, value: 1 }, timeUnit: 's', valueUnit: 'absorbance' });
      fc.assert(fc.property(fc.array(fc.stringMatching(/^[0-9a-z.\-]{0,8}$/), { minLength: 1, maxLength: 8 }), (fields) => {
        const line = fields.join(delimiter);
        const oracle = Papa.parse<string[]>(line, { delimiter, header: false }).data[0] ?? [''];
        expect(r.split(line)).toEqual(oracle.map((s) => s.trim()));
      }), { numRuns: 200 });
    }
  });

  it('reads absorbance columns with a header and a temperature', () => {
    const r = new DelimitedReader({ delimiter: ',', columns: { time: 0, value: 2, temperature: 1 }, timeUnit: 's', valueUnit: 'absorbance', wavelength_nm: 630 });
    expect(r.parse('time_s,temp_C,abs\n').kind).toBe('empty');
    expect(r.parse('0.0,25.0,0.650\n')).toEqual({ kind: 'absorbance', deviceTime_s: 0, wavelength_nm: 630, absorbance: 0.65, cellTemperature_C: 25, flags: 0 });
    expect(r.parse('1.0,25.1,0.648\r\n')).toMatchObject({ absorbance: 0.648, cellTemperature_C: 25.1 });
    expect(r.parse('# a comment\n').kind).toBe('empty');
    expect(r.parse('time,temp,abs\n')).toMatchObject({ kind: 'rejected', reason: 'malformed' }); // text after data began
    expect(r.parse('0.5,25.1,0.649\n')).toMatchObject({ kind: 'rejected', reason: 'timeBackwards' });
    expect(r.parse('2.0,25.1,NaN\n')).toMatchObject({ kind: 'rejected', reason: 'nonFinite' });
    expect(r.parse('3.0,25.1,0.6\u0001\n')).toMatchObject({ kind: 'rejected', reason: 'binaryNoise' });
    expect(r.headers).toBe(2);
    expect(r.accepted).toBe(2);
  });

  it('converts %T and transmittance to absorbance, and ms or min to s', () => {
    // common practice: A = 2 − log10(%T); by hand, 50 %T is 0.30103 AU and 10 %T is 1 AU
    const readsPercentT = (reader: DelimitedReader): boolean => {
      const a = reader.parse('1500;50,0');
      const b = reader.parse('2500;10');
      return a.kind === 'absorbance' && a.deviceTime_s === 1.5 && Math.abs(a.absorbance - 0.30103) < 5e-6
        && b.kind === 'absorbance' && Math.abs(b.absorbance - 1) < 1e-12;
    };
    const percentT = { delimiter: ';', columns: { time: 0, value: 1 }, timeUnit: 'ms', decimalComma: true } as const;
    expect(readsPercentT(new DelimitedReader({ ...percentT, valueUnit: 'percentT' }))).toBe(true);
    // negative control: the same check on a reader that takes %T for a fraction (or for absorbance) fails
    expect(readsPercentT(new DelimitedReader({ ...percentT, valueUnit: 'transmittance' }))).toBe(false);
    expect(readsPercentT(new DelimitedReader({ ...percentT, valueUnit: 'absorbance' }))).toBe(false);
    const pct = new DelimitedReader({ ...percentT, valueUnit: 'percentT' });
    expect(pct.parse('3000;0')).toMatchObject({ kind: 'rejected', reason: 'nonFinite' });
    const frac = new DelimitedReader({ delimiter: 'whitespace', columns: { time: 0, value: 1, wavelength: 2 }, timeUnit: 'min', valueUnit: 'transmittance' });
    const c = frac.parse('  2   0.01\t630.5 ');
    expect(c).toMatchObject({ kind: 'absorbance', deviceTime_s: 120, wavelength_nm: 630.5 });
    expect(c.kind === 'absorbance' && c.absorbance).toBeCloseTo(2, 12);
  });

  it('refuses an absorbance no photometer reads, and a time that leaps ahead of the host clock, each under its own reason', () => {
    const r = new DelimitedReader({ delimiter: ',', columns: { time: 0, value: 1 }, timeUnit: 's', valueUnit: 'percentT' });
    expect(r.parse('0,50', 0).kind).toBe('absorbance');
    // 1e-20 %T is A = 22 AU: nothing reads that; 1e5 %T is A = −3 AU, a sample ten times brighter than the blank and more.
    expect(r.parse('1,1e-20', 1000)).toMatchObject({ kind: 'rejected', reason: 'absorbanceRange' });
    expect(r.parse('2,1e5', 2000)).toMatchObject({ kind: 'rejected', reason: 'absorbanceRange' });
    expect(r.parse('1e15,50', 3000)).toMatchObject({ kind: 'rejected', reason: 'timeJump', detail: 'time leaps from 0 s to 1000000000000000 s while 3.0 s passed on this computer' });
    expect(r.parse('4,50', 4000).kind).toBe('absorbance');
    expect(r.rejected).toMatchObject({ absorbanceRange: 2, timeJump: 1 });
  });

  it('never throws and never yields a non-finite value (fuzz)', () => {
    const r = new DelimitedReader({ delimiter: ',', columns: { time: 0, value: 1, temperature: 2 }, timeUnit: 's', valueUnit: 'percentT' });
    fc.assert(fc.property(fc.array(fc.oneof(fc.string({ maxLength: 60 }), fc.tuple(fc.double(), fc.double(), fc.double()).map((x) => x.join(','))), { maxLength: 40 }), (lines) => {
      for (const l of lines) {
        const out = r.parse(l);
        if (out.kind === 'absorbance') for (const v of [out.deviceTime_s, out.absorbance, out.wavelength_nm]) if (!Number.isFinite(v)) return false;
      }
      const rejected = Object.values(r.rejected).reduce((s, n) => s + n, 0);
      return r.accepted + r.empty + rejected === r.total;
    }), { numRuns: 300 });
  });
});
