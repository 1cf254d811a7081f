import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { crc16, crc16Hex } from './crc16';
import { LineParser, MAX_LINE_CHARS, type DeviceLine } from './lineProtocol';
import { parseDecimal } from './decimalNumber';
import {
  formatAbsorbance, formatAck, formatCommand, formatCounts, formatIdentity, formatNak, formatSpectrum,
  formatTemperature, parseCommandLine, sealLine,
} from './lineFormat';
import { ReadingFlag } from '../sources/sourceTypes';

/** Every number anywhere in a parsed line, so the fuzz can check all of them are finite. */
function numbersIn(line: DeviceLine): number[] {
  const out: number[] = [];
  const walk = (v: unknown): void => {
    if (typeof v === 'number') out.push(v);
    else if (v instanceof Float64Array) out.push(...v);
    else if (v && typeof v === 'object') for (const x of Object.values(v)) walk(x);
  };
  walk(line);
  return out;
}

describe('checksum', () => {
  it('matches the catalogue check value and an independent implementation', () => {
    // common practice: CRC catalogue entry CRC-16/CCITT-FALSE, check value of "123456789" is 0x29B1
    expect(crc16('123456789')).toBe(0x29b1);
    // Python binascii.crc_hqx(payload, 0xFFFF), run by hand on these payloads (the worked examples in PROTOCOL.md)
    expect(crc16Hex('id 1 Rateline_demo EMU-1 RL0001 1.0 cnt')).toBe('F9AC');
    expect(crc16Hex('i 1.000 630.0 11876 805 25.01 -')).toBe('C59F');
    expect(crc16Hex('do 5 wl 630.0')).toBe('9B5B');
    // negative control: a plain XOR of the bytes is not this checksum
    let xor = 0;
    for (const c of '123456789') xor ^= c.charCodeAt(0);
    expect(xor).not.toBe(0x29b1);
  });

  it('catches every single flipped character of a line', () => {
    const line = formatCounts(false, 12.5, 630, 11876, 805, 25.01);
    const p = new LineParser();
    expect(p.parse(line).kind).toBe('counts');
    for (let i = 0; i < line.length - 7; i++) {
      const c = line.charCodeAt(i);
      const flipped = line.slice(0, i) + String.fromCharCode(c === 49 ? 50 : 49) + line.slice(i + 1);
      const out = new LineParser().parse(flipped);
      expect(out.kind).toBe('rejected');
    }
  });
});

describe('numbers', () => {
  it('parses strict decimals and refuses NaN, Infinity and overflow as non-finite', () => {
    const n = (s: string) => parseDecimal(s, 0, s.length);
    expect(n('12.5')).toBe(12.5);
    expect(n('-1.25e-3')).toBe(-0.00125);
    expect(n('+7')).toBe(7);
    expect(n('.5')).toBe(0.5);
    for (const bad of ['', '-', '1.2.3', '1e', '0x10', '1,5', '12a']) expect(Number.isNaN(n(bad))).toBe(true);
    const p = new LineParser();
    for (const word of ['NaN', 'nan', 'Infinity', '-inf', 'INF', '1e999']) {
      const out = p.parse(sealLine(`a 1.000 630.0 ${word} - -`));
      expect(out).toMatchObject({ kind: 'rejected', reason: 'nonFinite' });
    }
    expect(p.rejected.nonFinite).toBe(6);
  });
});

describe('line parser', () => {
  it('reads each line type written by the formatter (round trip)', () => {
    const p = new LineParser();
    expect(p.parse(formatIdentity({ maker: 'Rateline demo', model: 'EMU-1', serial: 'RL0001', firmware: '1.0', sends: 'counts' })))
      .toEqual({ kind: 'identity', version: 1, identity: { maker: 'Rateline_demo', model: 'EMU-1', serial: 'RL0001', firmware: '1.0', sends: 'counts' } });
    expect(p.parse(formatCounts(true, 0, 630, 50123, 812, 25))).toMatchObject({ kind: 'counts', blank: true, sampleCounts: 50123, darkCounts: 812 });
    expect(p.parse(formatCounts(false, 1, 630, 11876, null, null, ReadingFlag.saturated)))
      .toEqual({ kind: 'counts', blank: false, deviceTime_s: 1, wavelength_nm: 630, sampleCounts: 11876, darkCounts: null, cellTemperature_C: null, flags: ReadingFlag.saturated });
    expect(p.parse(formatTemperature(2, 25.1))).toEqual({ kind: 'temperature', deviceTime_s: 2, cellTemperature_C: 25.1 });
    const spec = p.parse(formatSpectrum(3, 'counts', 600, 2, [10, 20, 30, 40])!);
    expect(spec.kind).toBe('spectrum');
    if (spec.kind === 'spectrum') {
      expect([...spec.frame.wavelengths_nm]).toEqual([600, 602, 604, 606]);
      expect([...spec.frame.values]).toEqual([10, 20, 30, 40]);
    }
    expect(p.parse(formatAck(7, 'blank'))).toEqual({ kind: 'ack', seq: 7, verb: 'blank' });
    expect(p.parse(formatNak(8, 'wl', 'wavelength out of range'))).toEqual({ kind: 'nak', seq: 8, verb: 'wl', reason: 'wavelength out of range' });
    expect(p.accepted).toBe(7);
  });

  it('round-trips absorbance readings to the written precision (property)', () => {
    fc.assert(fc.property(
      fc.double({ min: 0, max: 1e6, noNaN: true }), fc.double({ min: 190, max: 1100, noNaN: true }),
      fc.double({ min: -1, max: 6, noNaN: true }), fc.option(fc.double({ min: -20, max: 120, noNaN: true })),
      (t, wl, a, temp) => {
        const out = new LineParser().parse(formatAbsorbance(t, wl, a, temp));
        if (out.kind !== 'absorbance') return false;
        // written with 3, 1, 5 and 2 decimals: rounding error at most half the last place
        return Math.abs(out.deviceTime_s - t) <= 5e-4 + 1e-9 && Math.abs(out.wavelength_nm - wl) <= 0.05 + 1e-9
          && Math.abs(out.absorbance - a) <= 5e-6 + 1e-12
          && (temp === null ? out.cellTemperature_C === null : Math.abs(out.cellTemperature_C! - temp) <= 5e-3 + 1e-9);
      }));
  });

  it('round-trips counts readings and spectrum frames (property)', () => {
    fc.assert(fc.property(fc.double({ min: 0, max: 1e6, noNaN: true }), fc.nat(1_000_000), fc.option(fc.nat(5000)), fc.boolean(), (t, s, d, blank) => {
      const out = new LineParser().parse(formatCounts(blank, t, 630, s, d, null));
      return out.kind === 'counts' && out.blank === blank && out.sampleCounts === s && out.darkCounts === d && Math.abs(out.deviceTime_s - t) <= 5e-4 + 1e-9;
    }));
    fc.assert(fc.property(fc.array(fc.double({ min: -1, max: 4, noNaN: true }), { minLength: 1, maxLength: 300 }), fc.double({ min: 190, max: 900, noNaN: true }), (values, start) => {
      const line = formatSpectrum(1, 'absorbance', start, 0.5, values);
      if (line === null) return values.length * 8 > 3000; // only a frame too long for the cap is refused by the formatter
      const out = new LineParser().parse(line);
      return out.kind === 'spectrum' && out.frame.values.length === values.length
        && values.every((v, i) => Math.abs(out.frame.values[i]! - v) <= 5e-5 + 1e-12);
    }), { numRuns: 200 });
  });

  it('refuses each kind of bad line under its own reason', () => {
    const p = new LineParser();
    const cases: [string, string][] = [
      ['x'.repeat(MAX_LINE_CHARS + 1), 'overlong'],
      ['a 1.000 630.0 0.5\u0000 - - ^0000', 'binaryNoise'],
      ['a 1.000 630.0 0.5 - -', 'malformed'],
      ['a 1.000 630.0 0.5 - - ^0000', 'checksum'],
      [sealLine('zz 1 2 3'), 'unknownType'],
      [sealLine('a 1.000 630.0'), 'malformed'],
      [sealLine('a 1.000  630.0 0.5 - -'), 'malformed'],
      [sealLine('a 5.000 630.0 0.5 - -'), 'ok'],
      [sealLine('a 4.000 630.0 0.5 - -'), 'timeBackwards'],
      [sealLine('i 6.000 630.0 100 - - -'), 'unitChange'],
      [sealLine('a 6.000 630.0 Infinity - -'), 'nonFinite'],
      [sealLine('a 6.000 630.0 5e300 - -'), 'absorbanceRange'],
      [sealLine('a 6.000 630.0 -1.5 - -'), 'absorbanceRange'],
      // Host time 5 s after the reading at 5 s: a device time of 1e15 s cannot be.
      [sealLine('a 1000000000000000 630.0 0.5 - -'), 'timeJump'],
      [sealLine('a 7.000 630.0 0.5 - -'), 'ok'], // the time line stayed at 5 s
    ];
    let host_ms = 0;
    for (const [line, reason] of cases) {
      host_ms += 1000;
      const out = p.parse(line, host_ms);
      if (reason === 'ok') expect(out.kind).toBe('absorbance');
      else expect(out).toMatchObject({ kind: 'rejected', reason });
    }
    expect(p.rejected).toEqual({
      checksum: 1, malformed: 3, overlong: 1, nonFinite: 1, timeBackwards: 1, unitChange: 1, binaryNoise: 1, unknownType: 1, timeJump: 1, absorbanceRange: 2,
    });
  });

  it('starts the clock and the unit afresh when the device identifies itself again', () => {
    const p = new LineParser();
    expect(p.parse(formatAbsorbance(100, 630, 0.5, null)).kind).toBe('absorbance');
    p.parse(formatIdentity({ maker: 'm', model: 'x', serial: 's', firmware: 'f', sends: 'counts' }));
    expect(p.parse(formatCounts(false, 0.5, 630, 1000, 10, null)).kind).toBe('counts');
  });

  it('never throws, never yields a non-finite number, and its counts add up (fuzz)', () => {
    const good = fc.oneof(
      fc.tuple(fc.double({ min: 0, max: 1e5, noNaN: true }), fc.double({ min: -2, max: 5, noNaN: true })).map(([t, a]) => formatAbsorbance(t, 630, a, 25)),
      fc.tuple(fc.double({ min: 0, max: 1e5, noNaN: true }), fc.nat(70000)).map(([t, c]) => formatCounts(false, t, 630, c, 800, null)),
    );
    const nonFiniteText = fc.constantFrom('NaN', 'Infinity', '-Infinity', 'nan', 'inf', '1e400').map((w) => sealLine(`a 1.000 630.0 ${w} - -`));
    const garbage = fc.string({ maxLength: 120 });
    const bytes = fc.uint8Array({ maxLength: 200 }).map((b) => Buffer.from(b).toString('latin1'));
    const partial = good.chain((l) => fc.nat(l.length).map((n) => l.slice(0, n)));
    const overlong = fc.integer({ min: MAX_LINE_CHARS + 1, max: MAX_LINE_CHARS * 3 }).map((n) => 'a '.padEnd(n, '9'));
    const mutated = fc.tuple(good, fc.nat(), fc.integer({ min: 0, max: 255 })).map(([l, i, c]) => {
      const at = i % l.length;
      return l.slice(0, at) + String.fromCharCode(c) + l.slice(at + 1);
    });
    const anyLine = fc.oneof(good, nonFiniteText, garbage, bytes, partial, overlong, mutated);
    fc.assert(fc.property(fc.array(anyLine, { maxLength: 60 }), (lines) => {
      const p = new LineParser();
      for (const l of lines) {
        const out = p.parse(l);
        for (const v of numbersIn(out)) if (!Number.isFinite(v)) return false;
      }
      const rejected = Object.values(p.rejected).reduce((s, n) => s + n, 0);
      return p.total === lines.length && p.accepted + p.empty + rejected === p.total;
    }), { numRuns: 400 });
  });
});

describe('commands', () => {
  it('round-trips every command and refuses out-of-range arguments', () => {
    expect(parseCommandLine(formatCommand(1, { type: 'start' }))).toMatchObject({ ok: true, seq: 1, command: { type: 'start' } });
    expect(parseCommandLine(formatCommand(2, { type: 'stop' }))).toMatchObject({ ok: true, command: { type: 'stop' } });
    expect(parseCommandLine(formatCommand(3, { type: 'who' }))).toMatchObject({ ok: true, command: { type: 'who' } });
    expect(parseCommandLine(formatCommand(4, { type: 'takeBlank' }, 3))).toMatchObject({ ok: true, command: { type: 'takeBlank' }, blankDuration_s: 3 });
    expect(parseCommandLine(formatCommand(5, { type: 'setWavelength', wavelength_nm: 629.5 }))).toMatchObject({ ok: true, command: { wavelength_nm: 629.5 } });
    expect(parseCommandLine(formatCommand(6, { type: 'setInterval', interval_s: 0.5 }))).toMatchObject({ ok: true, command: { interval_s: 0.5 } });
    expect(parseCommandLine(formatCommand(10, { type: 'scan' }))).toMatchObject({ ok: true, command: { type: 'scan' } });
    expect(parseCommandLine(formatCommand(7, { type: 'setWavelength', wavelength_nm: 5000 }))).toMatchObject({ ok: false, seq: 7, reason: 'wavelength out of range' });
    expect(parseCommandLine('do 8 start ^0000\n')).toMatchObject({ ok: false, reason: 'checksum' });
    expect(parseCommandLine(sealLine('do 9 dance'))).toMatchObject({ ok: false, seq: 9, reason: 'unknown command' });
    fc.assert(fc.property(fc.string({ maxLength: 80 }), (s) => typeof parseCommandLine(s).ok === 'boolean'));
  });
});
