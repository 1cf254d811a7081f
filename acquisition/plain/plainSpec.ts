/**
 * The plain-lines spec: how an instrument that prints plain delimited lines is read, written
 * as one short text of key=value pairs, e.g.
 *
 *   time=1,time-unit=s,signal=2,signal-unit=%T,delimiter=tab,skip=1
 *
 * `rateline record --plain SPEC` reads an instrument with it, `rateline emulate --plain SPEC`
 * prints lines laid out by it, and the run record's header keeps its canonical form, so a
 * record says exactly how its readings were read. Columns count from 1, as a person counts
 * them on the screen; the delimited reader counts from 0.
 */
import type { DelimitedConfig } from './delimitedReader';
import type { DeviceIdentity } from '../sources/sourceTypes';

export interface PlainSpec {
  /** For the delimited reader (0-based columns). */
  config: DelimitedConfig;
  /** Seconds between lines the instrument prints, for the stale-feed watchdog. */
  interval_s: number;
  /** The spec written out in full, keys in a fixed order: what the record keeps. */
  canonical: string;
}

const KEYS = ['time', 'time-unit', 'signal', 'signal-unit', 'delimiter', 'temperature', 'wavelength', 'decimal', 'skip', 'interval'] as const;
type Key = (typeof KEYS)[number];
const REQUIRED: readonly Key[] = ['time', 'time-unit', 'signal', 'signal-unit', 'delimiter'];

const SIGNAL_UNITS = { A: 'absorbance', '%T': 'percentT', T: 'transmittance' } as const;
const SIGNAL_NAMES = { absorbance: 'A', percentT: '%T', transmittance: 'T' } as const;
const TIME_UNITS = ['s', 'ms', 'min'] as const;
const DELIMITER_NAMES: Record<string, string> = { tab: '\t', comma: ',', semicolon: ';', whitespace: 'whitespace' };
const MAX_COLUMN = 256;

/** The syntax, for --help texts. */
export const PLAIN_SPEC_HELP = `SPEC is key=value pairs separated by commas; columns count from 1:
    time=N          column of the time (required)
    time-unit=U     s, ms or min (required)
    signal=N        column of the reading (required)
    signal-unit=U   A (absorbance), %T (percent transmittance) or T (transmittance, 0 to 1);
                    %T and T become absorbance as A = −log10(T) (required)
    delimiter=D     tab, comma, semicolon, whitespace (runs of spaces and tabs), or one
                    other character such as | (required)
    temperature=N   column of the cell temperature in °C (optional)
    wavelength=N    column of the wavelength in nm (optional; else --wavelength-nm)
    decimal=point|comma   how numbers are written, 0.512 or 0,512 (default point)
    skip=N          ignore the first N lines after the port opens (a start-up banner; default 0)
    interval=S      seconds between the lines the instrument prints (default 1); after
                    5 intervals without a line the port is reopened
  Lines starting with # and text lines before the first reading are skipped by themselves.`;

export class PlainSpecError extends Error {
  override readonly name = 'PlainSpecError';
}

function column(key: Key, raw: string): number {
  if (!/^\d+$/.test(raw) || Number(raw) < 1 || Number(raw) > MAX_COLUMN) {
    throw new PlainSpecError(`${key}=${raw} is not a column number; columns are whole numbers from 1 (the first column) to ${MAX_COLUMN}, e.g. ${key}=2`);
  }
  return Number(raw) - 1;
}

function delimiterOf(raw: string): string {
  const named = DELIMITER_NAMES[raw];
  if (named !== undefined) return named;
  if (raw.length === 1 && !/[0-9.+\-eE=\s]/.test(raw) && raw.charCodeAt(0) > 32 && raw.charCodeAt(0) < 127) return raw;
  throw new PlainSpecError(`delimiter=${raw} is not a delimiter; use tab, comma, semicolon, whitespace or one character such as |`);
}

function delimiterName(d: string): string {
  for (const [name, ch] of Object.entries(DELIMITER_NAMES)) if (ch === d) return name;
  return d;
}

/** Reads a spec; throws PlainSpecError with one sentence (no command name) when it is wrong. */
export function parsePlainSpec(text: string): PlainSpec {
  const given = new Map<Key, string>();
  for (const part of text.split(',')) {
    const item = part.trim();
    if (item === '') continue;
    const eq = item.indexOf('=');
    if (eq <= 0) throw new PlainSpecError(`"${item}" is not key=value; write the spec like time=1,time-unit=s,signal=2,signal-unit=%T,delimiter=tab`);
    const key = item.slice(0, eq).trim();
    const value = item.slice(eq + 1).trim();
    if (!(KEYS as readonly string[]).includes(key)) throw new PlainSpecError(`key "${key}" is unknown; the keys are ${KEYS.join(', ')}`);
    if (given.has(key as Key)) throw new PlainSpecError(`key "${key}" is given twice; give it once`);
    if (value === '') throw new PlainSpecError(`key "${key}" has no value; write ${key}=VALUE`);
    given.set(key as Key, value);
  }
  const missing = REQUIRED.filter((k) => !given.has(k));
  if (missing.length > 0) throw new PlainSpecError(`${missing.join(', ')} ${missing.length === 1 ? 'is' : 'are'} missing; the spec needs ${REQUIRED.join(', ')} (e.g. time=1,time-unit=s,signal=2,signal-unit=%T,delimiter=tab)`);

  const time = column('time', given.get('time')!);
  const signal = column('signal', given.get('signal')!);
  const timeUnit = given.get('time-unit')!;
  if (!(TIME_UNITS as readonly string[]).includes(timeUnit)) throw new PlainSpecError(`time-unit=${timeUnit} is not a time unit; use s, ms or min`);
  const signalUnit = given.get('signal-unit')!;
  if (!Object.hasOwn(SIGNAL_UNITS, signalUnit)) throw new PlainSpecError(`signal-unit=${signalUnit} is not a signal unit; use A (absorbance), %T (percent transmittance) or T (transmittance)`);
  const delimiter = delimiterOf(given.get('delimiter')!);
  const columns: DelimitedConfig['columns'] = { time, value: signal };
  if (given.has('temperature')) columns.temperature = column('temperature', given.get('temperature')!);
  if (given.has('wavelength')) columns.wavelength = column('wavelength', given.get('wavelength')!);
  const used = new Map<number, string>();
  for (const [name, c] of [['time', time], ['signal', signal], ['temperature', columns.temperature], ['wavelength', columns.wavelength]] as const) {
    if (c === undefined) continue;
    const other = used.get(c);
    if (other) throw new PlainSpecError(`${other} and ${name} are both column ${c + 1}; each needs its own column`);
    used.set(c, name);
  }
  const decimal = given.get('decimal') ?? 'point';
  if (decimal !== 'point' && decimal !== 'comma') throw new PlainSpecError(`decimal=${decimal} is neither point nor comma`);
  if (decimal === 'comma' && delimiter === ',') throw new PlainSpecError('decimal=comma with delimiter=comma cannot be told apart; instruments with a decimal comma separate fields by semicolon or tab');
  const skipRaw = given.get('skip') ?? '0';
  if (!/^\d+$/.test(skipRaw) || Number(skipRaw) > 1000) throw new PlainSpecError(`skip=${skipRaw} is not a number of lines; give a whole number from 0 to 1000`);
  const intervalRaw = given.get('interval') ?? '1';
  const interval_s = Number(intervalRaw);
  if (!Number.isFinite(interval_s) || !(interval_s >= 0.01 && interval_s <= 3600)) throw new PlainSpecError(`interval=${intervalRaw} is not an interval; give seconds between 0.01 and 3600`);

  const config: DelimitedConfig = {
    delimiter,
    columns,
    timeUnit: timeUnit as DelimitedConfig['timeUnit'],
    valueUnit: SIGNAL_UNITS[signalUnit as keyof typeof SIGNAL_UNITS],
    ...(decimal === 'comma' ? { decimalComma: true } : {}),
    ...(Number(skipRaw) > 0 ? { skipLines: Number(skipRaw) } : {}),
  };
  return { config, interval_s, canonical: canonicalSpec(config, interval_s) };
}

/** The spec written out in full, in a fixed key order. */
export function canonicalSpec(c: DelimitedConfig, interval_s: number): string {
  const parts = [
    `time=${c.columns.time + 1}`, `time-unit=${c.timeUnit}`,
    `signal=${c.columns.value + 1}`, `signal-unit=${SIGNAL_NAMES[c.valueUnit]}`,
    `delimiter=${delimiterName(c.delimiter)}`,
  ];
  if (c.columns.temperature !== undefined) parts.push(`temperature=${c.columns.temperature + 1}`);
  if (c.columns.wavelength !== undefined) parts.push(`wavelength=${c.columns.wavelength + 1}`);
  parts.push(`decimal=${c.decimalComma ? 'comma' : 'point'}`, `skip=${c.skipLines ?? 0}`, `interval=${interval_s}`);
  return parts.join(',');
}

/** What the run record's header says of a plain instrument: it cannot say who it is, only how it was read. */
export const PLAIN_MODEL_PREFIX = 'plain delimited lines read as ';

export function plainIdentity(spec: PlainSpec): DeviceIdentity {
  return { maker: 'unknown', model: `${PLAIN_MODEL_PREFIX}${spec.canonical}`, serial: 'unknown', firmware: 'unknown', sends: 'absorbance' };
}

/** The spec a plain identity was written with, or null for any other identity. */
export function specOfIdentity(identity: DeviceIdentity | null): string | null {
  return identity && identity.model.startsWith(PLAIN_MODEL_PREFIX) ? identity.model.slice(PLAIN_MODEL_PREFIX.length) : null;
}

export interface PlainMeasurement {
  time_s: number;
  absorbance: number;
  temperature_C: number | null;
  wavelength_nm: number;
}

const TIME_DIGITS = { s: 2, ms: 0, min: 5 } as const;
const TIME_PER_SECOND = { s: 1, ms: 1000, min: 1 / 60 } as const;

/**
 * One line as an instrument laid out by the spec would print it: the signal in its unit
 * (%T = 100 · 10^−A), time in its unit, a line number in any column the spec leaves unused.
 */
export function formatPlainLine(c: DelimitedConfig, m: PlainMeasurement, lineNumber: number): string {
  const fields = new Map<number, string>();
  const dec = (x: string): string => (c.decimalComma ? x.replace('.', ',') : x);
  fields.set(c.columns.time, dec((m.time_s * TIME_PER_SECOND[c.timeUnit]).toFixed(TIME_DIGITS[c.timeUnit])));
  const signal = c.valueUnit === 'absorbance' ? m.absorbance.toFixed(4)
    : c.valueUnit === 'percentT' ? (100 * Math.pow(10, -m.absorbance)).toFixed(2)
      : Math.pow(10, -m.absorbance).toFixed(5);
  fields.set(c.columns.value, dec(signal));
  if (c.columns.temperature !== undefined) fields.set(c.columns.temperature, m.temperature_C === null ? '' : dec(m.temperature_C.toFixed(2)));
  if (c.columns.wavelength !== undefined) fields.set(c.columns.wavelength, dec(m.wavelength_nm.toFixed(1)));
  const last = Math.max(...fields.keys());
  const out: string[] = [];
  for (let i = 0; i <= last; i++) out.push(fields.get(i) ?? String(lineNumber));
  return out.join(c.delimiter === 'whitespace' ? '  ' : c.delimiter);
}

/**
 * The start-up banner of `skip` lines: first the wavelength and interval as bare numbers
 * (which a reader not told to skip would take for a reading), then column names.
 */
export function plainBanner(c: DelimitedConfig, wavelength_nm: number, interval_s: number): string[] {
  const n = c.skipLines ?? 0;
  const sep = c.delimiter === 'whitespace' ? '  ' : c.delimiter;
  const lines: string[] = [];
  if (n >= 1) lines.push([String(wavelength_nm), String(interval_s)].join(sep));
  for (let i = 1; i < n; i++) lines.push(['time', 'signal', 'banner line ' + (i + 1)].join(sep));
  return lines;
}
