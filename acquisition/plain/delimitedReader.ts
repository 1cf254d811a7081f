/**
 * Many bench instruments print plain delimited lines (time, reading, maybe temperature)
 * rather than a protocol. This reader takes such lines under a column mapping and turns
 * them into the same parsed lines the protocol parser gives, so a serial source can read
 * either. It knows units: absorbance, %T or fractional transmittance (A = −log10 T), and
 * time in s, ms or min. Same guarantees as the protocol parser: never throws, never a
 * non-finite value, every refusal counted by reason.
 */
import type { DeviceLine } from '../protocol/lineProtocol';
import { emptyRejectCounts } from '../sources/sourceStatus';
import { lastNumberProblem, parseDecimal } from '../protocol/decimalNumber';
import type { RejectReason } from '../sources/sourceTypes';
import { DeviceTimeLine } from '../protocol/deviceTimeLine';
import { readableAbsorbanceProblem } from '../protocol/absorbance';

export interface DelimitedConfig {
  /** ',' ';' '\t' or any single character; 'whitespace' splits on runs of spaces and tabs. */
  delimiter: string | 'whitespace';
  /** 0-based column numbers. */
  columns: { time: number; value: number; temperature?: number; wavelength?: number };
  timeUnit: 's' | 'ms' | 'min';
  valueUnit: 'absorbance' | 'percentT' | 'transmittance';
  /** Numbers written with a decimal comma (0,512), as instruments set for many locales print them. */
  decimalComma?: boolean;
  /** Wavelength when no column gives it. */
  wavelength_nm?: number;
  maxLineChars?: number;
  /** Lines ignored at the start, whatever they hold (a banner the instrument prints when it starts). */
  skipLines?: number;
}

const TIME_FACTOR = { s: 1, ms: 1e-3, min: 60 } as const;

export class DelimitedReader {
  readonly rejected = emptyRejectCounts();
  accepted = 0;
  empty = 0;
  headers = 0;
  total = 0;
  private readonly clock = new DeviceTimeLine();
  private host_ms: number | undefined = undefined;
  private seenData = false;
  private readonly maxChars: number;
  private toSkip: number;

  constructor(readonly config: DelimitedConfig) {
    this.maxChars = config.maxLineChars ?? 1024;
    this.toSkip = config.skipLines ?? 0;
  }

  /** Fields of one line, trimmed (exposed for tests). */
  split(line: string): string[] {
    const c = this.config;
    if (c.delimiter === 'whitespace') return line.trim().split(/[ \t]+/);
    return line.split(c.delimiter).map((f) => f.trim());
  }

  /** One line; `hostTime_ms` as for LineParser.parse (a time leaping ahead of the host's is refused). */
  parse(raw: string, hostTime_ms?: number): DeviceLine {
    this.total++;
    this.host_ms = hostTime_ms;
    const out = this.read(raw);
    if (out.kind === 'rejected') this.rejected[out.reason]++;
    else if (out.kind === 'empty') this.empty++;
    else this.accepted++;
    return out;
  }

  private reject(reason: RejectReason, detail: string): DeviceLine {
    return { kind: 'rejected', reason, detail };
  }

  private num(field: string | undefined): { v: number; bad: RejectReason | null } {
    if (field === undefined || field === '') return { v: NaN, bad: 'malformed' };
    const text = this.config.decimalComma ? field.replace(',', '.') : field;
    const v = parseDecimal(text, 0, text.length);
    return { v, bad: Number.isNaN(v) ? lastNumberProblem() : null };
  }

  private read(raw: string): DeviceLine {
    let line = raw;
    if (line.endsWith('\n')) line = line.slice(0, -1);
    if (line.endsWith('\r')) line = line.slice(0, -1);
    if (line.trim() === '') return { kind: 'empty' };
    if (this.toSkip > 0) { this.toSkip--; this.headers++; return { kind: 'empty' }; }
    if (line.length > this.maxChars) return this.reject('overlong', `line of ${line.length} characters, more than ${this.maxChars}`);
    for (let i = 0; i < line.length; i++) {
      const code = line.charCodeAt(i);
      if ((code < 32 && code !== 9) || code === 127 || code > 255) return this.reject('binaryNoise', `byte 0x${code.toString(16)} at column ${i + 1}`);
    }
    if (line.trimStart().startsWith('#')) { this.headers++; return { kind: 'empty' }; }
    const f = this.split(line);
    const c = this.config.columns;
    const t = this.num(f[c.time]);
    const value = this.num(f[c.value]);
    if (t.bad || value.bad) {
      // Text where numbers belong, before any data: a header line (column names, units).
      if (!this.seenData && t.bad === 'malformed') { this.headers++; return { kind: 'empty' }; }
      const which = t.bad ? `time (column ${c.time + 1})` : `value (column ${c.value + 1})`;
      return this.reject((t.bad ?? value.bad)!, `${which} is not ${t.bad === 'nonFinite' || value.bad === 'nonFinite' ? 'a finite number' : 'a number'}`);
    }
    let temp: number | null = null;
    if (c.temperature !== undefined && f[c.temperature] !== undefined && f[c.temperature] !== '') {
      const r = this.num(f[c.temperature]);
      if (r.bad) return this.reject(r.bad, `temperature (column ${c.temperature + 1}) is not a number`);
      temp = r.v;
    }
    let wl = this.config.wavelength_nm ?? 0;
    if (c.wavelength !== undefined) {
      const r = this.num(f[c.wavelength]);
      if (r.bad || !(r.v > 0)) return this.reject(r.bad ?? 'malformed', `wavelength (column ${c.wavelength + 1}) is not a positive number`);
      wl = r.v;
    }
    const time_s = t.v * TIME_FACTOR[this.config.timeUnit];
    let absorbance = value.v;
    if (this.config.valueUnit !== 'absorbance') {
      const T = this.config.valueUnit === 'percentT' ? value.v / 100 : value.v;
      // No light through the cell: the absorbance is not finite, so there is no reading.
      if (!(T > 0)) return this.reject('nonFinite', `transmittance ${value.v}${this.config.valueUnit === 'percentT' ? ' %' : ''} at or below zero gives no finite absorbance`);
      absorbance = -Math.log10(T) + 0;
    }
    const unreadable = readableAbsorbanceProblem(absorbance);
    if (unreadable) return this.reject('absorbanceRange', `value (column ${c.value + 1}): ${unreadable}`);
    const refused = this.clock.check(time_s, this.host_ms);
    if (refused) return this.reject(refused.reason, refused.detail.replace(/^device time/, 'time'));
    this.seenData = true;
    this.clock.accept(time_s, this.host_ms);
    return { kind: 'absorbance', deviceTime_s: time_s, wavelength_nm: wl, absorbance, cellTemperature_C: temp, flags: 0 };
  }
}
