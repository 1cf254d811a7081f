import { describe, expect, it } from 'vitest';
import { DelimitedReader } from './delimitedReader';
import { PlainSpecError, canonicalSpec, formatPlainLine, parsePlainSpec, plainBanner, plainIdentity, specOfIdentity } from './plainSpec';

const BASE = 'time=1,time-unit=s,signal=2,signal-unit=%T,delimiter=tab';

describe('plain-lines spec', () => {
  it('reads a spec into the reader config (columns from 1 become from 0) and writes it back in full', () => {
    const s = parsePlainSpec(' signal=3 , time=1,time-unit=ms,signal-unit=T,delimiter=semicolon,decimal=comma,temperature=2,skip=2,interval=0.5');
    expect(s.config).toEqual({
      delimiter: ';', columns: { time: 0, value: 2, temperature: 1 }, timeUnit: 'ms', valueUnit: 'transmittance', decimalComma: true, skipLines: 2,
    });
    expect(s.interval_s).toBe(0.5);
    expect(s.canonical).toBe('time=1,time-unit=ms,signal=3,signal-unit=T,delimiter=semicolon,temperature=2,decimal=comma,skip=2,interval=0.5');
    expect(parsePlainSpec(s.canonical).config).toEqual(s.config);
    expect(canonicalSpec(parsePlainSpec('time=2,time-unit=min,signal=1,signal-unit=A,delimiter=|').config, 1)).toBe('time=2,time-unit=min,signal=1,signal-unit=A,delimiter=|,decimal=point,skip=0,interval=1');
    const id = plainIdentity(s);
    expect(specOfIdentity(id)).toBe(s.canonical);
    expect(specOfIdentity({ ...id, model: 'emulator' })).toBeNull();
  });

  it('refuses a wrong spec with one sentence that says what to write', () => {
    const bad: Array<[string, RegExp]> = [
      [`${BASE},colour=red`, /^key "colour" is unknown; the keys are time, time-unit, signal/],
      [BASE.replace('time=1', 'time=0'), /^time=0 is not a column number; columns are whole numbers from 1/],
      [BASE.replace('signal=2', 'signal=1.5'), /^signal=1.5 is not a column number/],
      [BASE.replace('%T', 'abs'), /^signal-unit=abs is not a signal unit/],
      [BASE.replace('time-unit=s', 'time-unit=h'), /^time-unit=h is not a time unit/],
      [BASE.replace('delimiter=tab', 'delimiter=7'), /^delimiter=7 is not a delimiter/],
      [BASE.replace('signal=2', 'signal=1'), /^time and signal are both column 1/],
      [`${BASE},time=3`, /^key "time" is given twice/],
      ['time=1,time-unit=s,signal=2,signal-unit=A,delimiter=comma,decimal=comma', /^decimal=comma with delimiter=comma/],
      [`${BASE},skip=-1`, /^skip=-1 is not a number of lines/],
      [`${BASE},interval=0`, /^interval=0 is not an interval/],
      [`${BASE},tab`, /^"tab" is not key=value/],
      ['time=1', /^time-unit, signal, signal-unit, delimiter are missing/],
    ];
    for (const [spec, message] of bad) {
      expect(() => parsePlainSpec(spec), spec).toThrow(PlainSpecError);
      expect(() => parsePlainSpec(spec), spec).toThrow(message);
    }
    expect(() => parsePlainSpec(BASE)).not.toThrow();
  });

  it('lays out lines that the reader with the same spec reads back, in every unit', () => {
    const m = { time_s: 90, absorbance: 1, temperature_C: 25.04, wavelength_nm: 630 };
    // By hand: A = 1 is T = 0.1 = 10 %T; 90 s = 90000 ms = 1.5 min.
    const cases: Array<[string, string]> = [
      [BASE, '90.00\t10.00'],
      ['time=3,time-unit=ms,signal=1,signal-unit=T,delimiter=semicolon,decimal=comma,temperature=4', '0,10000;7;90000;25,04'],
      ['time=1,time-unit=min,signal=2,signal-unit=A,delimiter=whitespace,wavelength=3', '1.50000  1.0000  630.0'],
    ];
    for (const [specText, line] of cases) {
      const spec = parsePlainSpec(specText);
      expect(formatPlainLine(spec.config, m, 7)).toBe(line);
      const r = new DelimitedReader({ ...spec.config, wavelength_nm: 600 }).parse(line + '\r\n');
      expect(r.kind === 'absorbance' && r.deviceTime_s).toBe(90);
      expect(r.kind === 'absorbance' && r.absorbance).toBeCloseTo(1, 4);
    }
    // Negative control: a %T line read as transmittance gives a negative absorbance, not 1.
    const wrong = new DelimitedReader({ ...parsePlainSpec(BASE.replace('%T', 'T')).config }).parse('90.00\t10.00');
    expect(wrong.kind === 'absorbance' && wrong.absorbance).toBeCloseTo(-1, 12);
  });

  it('skips the banner lines it is told to, and only those', () => {
    const spec = parsePlainSpec(`${BASE},skip=2`);
    const banner = plainBanner(spec.config, 630, 1);
    expect(banner).toEqual(['630\t1', 'time\tsignal\tbanner line 2']);
    const r = new DelimitedReader(spec.config);
    expect([...banner, '1.00\t50.00', '2.00\t50.00'].map((l) => r.parse(l).kind)).toEqual(['empty', 'empty', 'absorbance', 'absorbance']);
    expect(r.headers).toBe(2);
    // Told to skip one line too few, the reader takes the numeric banner line for a reading at t = 630 s.
    const short = new DelimitedReader({ ...spec.config, skipLines: 0 });
    expect(short.parse(banner[0]!)).toMatchObject({ kind: 'absorbance', deviceTime_s: 630 });
  });
});
