/**
 * The Rateline line protocol, version 1 (see PROTOCOL.md): parsing device lines on the
 * host and host commands on the device. Pure and stateful only in what the protocol
 * itself needs (the last device time and the unit in use). It never throws and never
 * returns a non-finite number: every bad line becomes a rejection with a reason, counted.
 *
 * Speed matters less for one instrument (about 1,000 lines/s at most on 115200 baud)
 * than for replaying long captures, so the scanner walks the line once with charCodeAt
 * and indexOf, no regular expressions and no split.
 */
import type { DeviceIdentity, RejectReason, SpectrumFrame } from '../sources/sourceTypes';
import { emptyRejectCounts } from '../sources/sourceStatus';
import { ReadingFlag } from '../sources/sourceTypes';
import { crc16 } from './crc16';
import { lastNumberProblem, parseDecimal } from './decimalNumber';
import { DeviceTimeLine } from './deviceTimeLine';
import { readableAbsorbanceProblem } from './absorbance';

export const PROTOCOL_VERSION = 1;
/** Longest accepted line, checksum included, line end excluded (a spectrum of ~500 points fits). */
export const MAX_LINE_CHARS = 4096;

export type DeviceLine =
  | { kind: 'identity'; version: number; identity: DeviceIdentity }
  | { kind: 'absorbance'; deviceTime_s: number; wavelength_nm: number; absorbance: number; cellTemperature_C: number | null; flags: number }
  | {
      kind: 'counts';
      /** True for a `b` line: the device is reading the blank cuvette. */
      blank: boolean;
      deviceTime_s: number;
      wavelength_nm: number;
      sampleCounts: number;
      darkCounts: number | null;
      cellTemperature_C: number | null;
      flags: number;
    }
  | { kind: 'spectrum'; frame: SpectrumFrame }
  | { kind: 'temperature'; deviceTime_s: number; cellTemperature_C: number }
  | { kind: 'ack'; seq: number; verb: string }
  | { kind: 'nak'; seq: number; verb: string; reason: string }
  | { kind: 'empty' }
  | { kind: 'rejected'; reason: RejectReason; detail: string };


/** Where the fields of the line under parse start and end; reused, so a parse allocates little. */
class Fields {
  starts: number[] = [];
  ends: number[] = [];
  count = 0;
  line = '';
  split(line: string, end: number): boolean {
    this.line = line;
    this.count = 0;
    let start = 0;
    while (start <= end) {
      let sp = line.indexOf(' ', start);
      if (sp < 0 || sp > end) sp = end;
      if (sp === start) return false; // empty field: two spaces, or a leading or trailing space
      this.starts[this.count] = start;
      this.ends[this.count] = sp;
      this.count++;
      start = sp + 1;
      if (sp === end) break;
    }
    return this.count > 0;
  }
  text(i: number): string {
    return this.line.slice(this.starts[i], this.ends[i]);
  }
  is(i: number, word: string): boolean {
    const len = this.ends[i]! - this.starts[i]!;
    return len === word.length && this.line.startsWith(word, this.starts[i]);
  }
  /** A number field; NaN (see lastNumberProblem) when it is not one. */
  num(i: number): number {
    return parseDecimal(this.line, this.starts[i]!, this.ends[i]!);
  }
  /** A number field that may be '-' for "not measured". undefined means the field was bad. */
  optNum(i: number): number | null | undefined {
    if (this.is(i, '-')) return null;
    const v = this.num(i);
    return Number.isNaN(v) ? undefined : v;
  }
}

/**
 * Host side: parses device lines one at a time, keeping the state the protocol needs
 * (last device time, the unit in use), and counts every outcome.
 */
export class LineParser {
  readonly rejected = emptyRejectCounts();
  accepted = 0;
  empty = 0;
  /** Lines seen (accepted + empty + rejected). */
  total = 0;
  private readonly clock = new DeviceTimeLine();
  /** Host time of the line under parse (ms), when the caller gives one. */
  private host_ms: number | undefined = undefined;
  private unit: 'absorbance' | 'counts' | null = null;
  private readonly f = new Fields();

  /** Forget the time base and the unit, as after the device identified itself again (restart). */
  resetTimeBase(): void {
    this.clock.reset();
    this.unit = null;
  }

  /**
   * One line. `hostTime_ms` (when the line was read, on any monotonic clock) lets the
   * parser refuse a device time that leaps far ahead of the time that passed (`timeJump`);
   * without it (a capture read from a file) only time going backwards is refused.
   */
  parse(raw: string, hostTime_ms?: number): DeviceLine {
    this.total++;
    this.host_ms = hostTime_ms;
    const out = this.parseLine(raw);
    if (out.kind === 'rejected') this.rejected[out.reason]++;
    else if (out.kind === 'empty') this.empty++;
    else this.accepted++;
    return out;
  }

  private reject(reason: RejectReason, detail: string): DeviceLine {
    return { kind: 'rejected', reason, detail };
  }

  private parseLine(raw: string): DeviceLine {
    let len = raw.length;
    if (len > 0 && raw.charCodeAt(len - 1) === 10) len--;
    if (len > 0 && raw.charCodeAt(len - 1) === 13) len--;
    if (len === 0) return { kind: 'empty' };
    if (len > MAX_LINE_CHARS) return this.reject('overlong', `line of ${len} characters, more than ${MAX_LINE_CHARS}`);
    for (let i = 0; i < len; i++) {
      const c = raw.charCodeAt(i);
      if (c < 32 || c > 126) return this.reject('binaryNoise', `byte 0x${c.toString(16)} at column ${i + 1}`);
    }
    // Trailer: " ^" and four hex digits.
    if (len < 7 || raw.charCodeAt(len - 6) !== 32 || raw.charCodeAt(len - 5) !== 94) return this.reject('malformed', 'no checksum trailer (" ^" and four hex digits)');
    const sent = hex4(raw, len - 4);
    if (sent < 0) return this.reject('malformed', 'checksum is not four hex digits');
    const payloadEnd = len - 6;
    if (crc16(raw, 0, payloadEnd) !== sent) return this.reject('checksum', 'checksum does not match');
    const f = this.f;
    if (!f.split(raw, payloadEnd)) return this.reject('malformed', 'empty field (two spaces in a row)');
    const tagLen = f.ends[0]! - f.starts[0]!;
    const t0 = raw.charCodeAt(0);
    if (tagLen === 1) {
      if (t0 === 97) return this.measurement(false, false); // a
      if (t0 === 105) return this.measurement(true, false); // i
      if (t0 === 98) return this.measurement(true, true); // b
      if (t0 === 115) return this.spectrum(); // s
      if (t0 === 116) return this.temperature(); // t
    } else if (tagLen === 2) {
      if (f.is(0, 'id')) return this.identity();
      if (f.is(0, 'ok') || f.is(0, 'no')) return this.answer(f.is(0, 'ok'));
    }
    return this.reject('unknownType', `unknown line type "${f.text(0).slice(0, 16)}"`);
  }

  private numberReject(field: string): DeviceLine {
    return lastNumberProblem() === 'nonFinite'
      ? this.reject('nonFinite', `${field} is not a finite number`)
      : this.reject('malformed', `${field} is not a number`);
  }

  /** Device time must not go backwards nor leap ahead (deviceTimeLine.ts); the line is rejected if it does. */
  private checkTime(t: number): DeviceLine | null {
    if (t < 0) return this.reject('malformed', 'device time is negative');
    const refused = this.clock.check(t, this.host_ms);
    return refused ? this.reject(refused.reason, refused.detail) : null;
  }

  private acceptTime(t: number): void {
    this.clock.accept(t, this.host_ms);
  }

  private checkUnit(unit: 'absorbance' | 'counts'): DeviceLine | null {
    if (this.unit !== null && this.unit !== unit) return this.reject('unitChange', `device switched from ${this.unit} to ${unit} mid-run`);
    return null;
  }

  private measurement(counts: boolean, blank: boolean): DeviceLine {
    const f = this.f;
    // a t wl A temp flags | i/b t wl sample dark temp flags
    if (f.count < (counts ? 7 : 6)) return this.reject('malformed', `too few fields for a measurement line`);
    const t = f.num(1);
    if (Number.isNaN(t)) return this.numberReject('device time');
    const wl = f.num(2);
    if (Number.isNaN(wl)) return this.numberReject('wavelength');
    if (wl <= 0) return this.reject('malformed', 'wavelength is not positive');
    const value = f.num(3);
    if (Number.isNaN(value)) return this.numberReject(counts ? 'sample counts' : 'absorbance');
    let k = 4;
    let dark: number | null = null;
    if (counts) {
      const d = f.optNum(k++);
      if (d === undefined) return this.numberReject('dark counts');
      dark = d;
    }
    const temp = f.optNum(k++);
    if (temp === undefined) return this.numberReject('cell temperature');
    const flags = deviceFlags(f, k);
    if (flags < 0) return this.reject('malformed', 'flags field is not "-" or letters');
    const unitBad = this.checkUnit(counts ? 'counts' : 'absorbance');
    if (unitBad) return unitBad;
    // A photometer reads about −1 to 10 AU at the very most: a number beyond is a corrupted line, not a reading.
    const unreadable = counts ? null : readableAbsorbanceProblem(value);
    if (unreadable) return this.reject('absorbanceRange', unreadable);
    const timeBad = this.checkTime(t);
    if (timeBad) return timeBad;
    this.acceptTime(t);
    this.unit = counts ? 'counts' : 'absorbance';
    if (!counts) return { kind: 'absorbance', deviceTime_s: t, wavelength_nm: wl, absorbance: value, cellTemperature_C: temp, flags };
    return { kind: 'counts', blank, deviceTime_s: t, wavelength_nm: wl, sampleCounts: value, darkCounts: dark, cellTemperature_C: temp, flags };
  }

  private spectrum(): DeviceLine {
    const f = this.f;
    // s t abs|cnt start_nm step_nm n v1 .. vn
    if (f.count < 7) return this.reject('malformed', 'too few fields for a spectrum frame');
    const t = f.num(1);
    if (Number.isNaN(t)) return this.numberReject('device time');
    const kind = f.is(2, 'abs') ? 'absorbance' : f.is(2, 'cnt') ? 'counts' : null;
    if (!kind) return this.reject('malformed', 'spectrum kind is not "abs" or "cnt"');
    const start = f.num(3);
    if (Number.isNaN(start)) return this.numberReject('start wavelength');
    const step = f.num(4);
    if (Number.isNaN(step)) return this.numberReject('wavelength step');
    const n = f.num(5);
    if (Number.isNaN(n)) return this.numberReject('point count');
    if (!(step > 0) || !(start > 0) || !Number.isInteger(n) || n < 1) return this.reject('malformed', 'spectrum start, step or point count out of range');
    if (f.count - 6 !== n) return this.reject('malformed', `spectrum says ${n} points but carries ${f.count - 6}`);
    const values = new Float64Array(n);
    const wavelengths_nm = new Float64Array(n);
    for (let j = 0; j < n; j++) {
      const v = f.num(6 + j);
      if (Number.isNaN(v)) return this.numberReject(`spectrum point ${j + 1}`);
      values[j] = v;
      wavelengths_nm[j] = start + j * step;
    }
    const timeBad = this.checkTime(t);
    if (timeBad) return timeBad;
    this.acceptTime(t);
    return { kind: 'spectrum', frame: { deviceTime_s: t, wavelengths_nm, values, kind } };
  }

  private temperature(): DeviceLine {
    const f = this.f;
    if (f.count < 3) return this.reject('malformed', 'too few fields for a temperature line');
    const t = f.num(1);
    if (Number.isNaN(t)) return this.numberReject('device time');
    const temp = f.num(2);
    if (Number.isNaN(temp)) return this.numberReject('cell temperature');
    const timeBad = this.checkTime(t);
    if (timeBad) return timeBad;
    this.acceptTime(t);
    return { kind: 'temperature', deviceTime_s: t, cellTemperature_C: temp };
  }

  private identity(): DeviceLine {
    const f = this.f;
    // id version maker model serial firmware abs|cnt
    if (f.count < 7) return this.reject('malformed', 'too few fields for an identity line');
    const version = f.num(1);
    if (Number.isNaN(version) || !Number.isInteger(version) || version < 1) return this.reject('malformed', 'protocol version is not a whole number');
    const sends = f.is(6, 'abs') ? 'absorbance' : f.is(6, 'cnt') ? 'counts' : null;
    if (!sends) return this.reject('malformed', 'identity says neither "abs" nor "cnt"');
    // A device identifies itself when it starts: its clock and unit start afresh.
    this.clock.reset();
    this.unit = sends;
    return { kind: 'identity', version, identity: { maker: f.text(2), model: f.text(3), serial: f.text(4), firmware: f.text(5), sends } };
  }

  private answer(ok: boolean): DeviceLine {
    const f = this.f;
    if (f.count < (ok ? 3 : 4)) return this.reject('malformed', 'too few fields for a command answer');
    const seq = f.num(1);
    if (Number.isNaN(seq) || !Number.isInteger(seq)) return this.reject('malformed', 'command sequence number is not a whole number');
    const verb = f.text(2);
    if (ok) return { kind: 'ack', seq, verb };
    const reason = f.line.slice(f.starts[3], f.ends[f.count - 1]).replace(/_/g, ' ');
    return { kind: 'nak', seq, verb, reason };
  }
}

function hex4(s: string, at: number): number {
  let v = 0;
  for (let i = at; i < at + 4; i++) {
    const c = s.charCodeAt(i);
    const d = c >= 48 && c <= 57 ? c - 48 : c >= 65 && c <= 70 ? c - 55 : c >= 97 && c <= 102 ? c - 87 : -1;
    if (d < 0) return -1;
    v = (v << 4) | d;
  }
  return v;
}

/** Flag letters: S saturated at the detector, W the device warns; '-' for none. Unknown letters are ignored (newer firmware). */
function deviceFlags(f: Fields, i: number): number {
  if (f.is(i, '-')) return 0;
  let flags = 0;
  for (let j = f.starts[i]!; j < f.ends[i]!; j++) {
    const c = f.line.charCodeAt(j);
    if (c === 83) flags |= ReadingFlag.saturated;
    else if (c === 87) flags |= ReadingFlag.deviceWarning;
    else if (c < 65 || c > 90) return -1;
  }
  return flags;
}
