/**
 * Writing lines of the Rateline protocol (the device side: the emulator and the
 * simulated source), and the host→device commands in both directions. See PROTOCOL.md.
 * Numbers are written with fixed decimals chosen so that rounding is far below the
 * instrument's noise (absorbance to 1e-5 AU, time to 1 ms).
 */
import type { DeviceIdentity, SourceCommand } from '../sources/sourceTypes';
import { ReadingFlag } from '../sources/sourceTypes';
import { crc16Hex } from './crc16';
import { MAX_LINE_CHARS } from './lineProtocol';
import { parseDecimal } from './decimalNumber';

/** Appends the checksum trailer and the line end. */
export function sealLine(payload: string): string {
  return `${payload} ^${crc16Hex(payload)}\n`;
}

function opt(v: number | null | undefined, decimals: number): string {
  return v === null || v === undefined ? '-' : v.toFixed(decimals);
}

function flagLetters(flags: number): string {
  let s = '';
  if (flags & ReadingFlag.saturated) s += 'S';
  if (flags & ReadingFlag.deviceWarning) s += 'W';
  return s || '-';
}

/** Whitespace cannot travel inside a field; it becomes '_'. */
function word(text: string): string {
  const w = text.trim().replace(/\s+/g, '_');
  return w === '' ? '-' : w;
}

export function formatIdentity(id: DeviceIdentity, version = 1): string {
  return sealLine(`id ${version} ${word(id.maker)} ${word(id.model)} ${word(id.serial)} ${word(id.firmware)} ${id.sends === 'counts' ? 'cnt' : 'abs'}`);
}

export function formatAbsorbance(time_s: number, wavelength_nm: number, absorbance: number, cellTemperature_C: number | null, flags = 0): string {
  return sealLine(`a ${time_s.toFixed(3)} ${wavelength_nm.toFixed(1)} ${absorbance.toFixed(5)} ${opt(cellTemperature_C, 2)} ${flagLetters(flags)}`);
}

/** An intensity reading of the sample (`i`) or of the blank cuvette (`b`). Counts are whole numbers. */
export function formatCounts(
  blank: boolean,
  time_s: number,
  wavelength_nm: number,
  sampleCounts: number,
  darkCounts: number | null,
  cellTemperature_C: number | null,
  flags = 0,
): string {
  const tag = blank ? 'b' : 'i';
  return sealLine(`${tag} ${time_s.toFixed(3)} ${wavelength_nm.toFixed(1)} ${sampleCounts.toFixed(0)} ${opt(darkCounts, 0)} ${opt(cellTemperature_C, 2)} ${flagLetters(flags)}`);
}

export function formatTemperature(time_s: number, cellTemperature_C: number): string {
  return sealLine(`t ${time_s.toFixed(3)} ${cellTemperature_C.toFixed(2)}`);
}

/** A spectrum frame on an even wavelength grid; null if it would pass the line length cap. */
export function formatSpectrum(time_s: number, kind: 'absorbance' | 'counts', start_nm: number, step_nm: number, values: ArrayLike<number>): string | null {
  const decimals = kind === 'counts' ? 0 : 4;
  let s = `s ${time_s.toFixed(3)} ${kind === 'counts' ? 'cnt' : 'abs'} ${start_nm.toFixed(2)} ${step_nm.toFixed(3)} ${values.length}`;
  for (let i = 0; i < values.length; i++) s += ' ' + values[i]!.toFixed(decimals);
  return s.length + 6 > MAX_LINE_CHARS ? null : sealLine(s);
}

export function formatAck(seq: number, verb: string): string {
  return sealLine(`ok ${seq} ${verb}`);
}

export function formatNak(seq: number, verb: string, reason: string): string {
  return sealLine(`no ${seq} ${word(verb)} ${word(reason)}`);
}

/** Commands the device understands; `who` asks it to send its identity line again. */
export type DeviceCommand = Exclude<SourceCommand, { type: 'setSpeed' } | { type: 'pause' } | { type: 'resume' }> | { type: 'who' };

/** The protocol verb of a command (what the acknowledgement repeats). */
export function commandVerb(cmd: DeviceCommand): string {
  switch (cmd.type) {
    case 'start': return 'start';
    case 'stop': return 'stop';
    case 'who': return 'who';
    case 'takeBlank': return 'blank';
    case 'setWavelength': return 'wl';
    case 'setInterval': return 'every';
    case 'scan': return 'scan';
  }
}

export function formatCommand(seq: number, cmd: DeviceCommand, blankDuration_s = 5): string {
  const verb = commandVerb(cmd);
  const arg =
    cmd.type === 'setWavelength' ? ` ${cmd.wavelength_nm.toFixed(1)}`
    : cmd.type === 'setInterval' ? ` ${cmd.interval_s.toFixed(3)}`
    : cmd.type === 'takeBlank' ? ` ${blankDuration_s.toFixed(1)}`
    : '';
  return sealLine(`do ${seq} ${verb}${arg}`);
}

export type ParsedCommand =
  | { ok: true; seq: number; command: DeviceCommand; blankDuration_s: number | null }
  | { ok: false; seq: number | null; verb: string; reason: string };

/**
 * Device side: a host command line. Checked like any line (checksum, printable ASCII),
 * and the argument range-checked, so the device can answer `no` with a reason.
 */
export function parseCommandLine(raw: string): ParsedCommand {
  let line = raw;
  if (line.endsWith('\n')) line = line.slice(0, -1);
  if (line.endsWith('\r')) line = line.slice(0, -1);
  const bad = (reason: string, seq: number | null = null, verb = '?'): ParsedCommand => ({ ok: false, seq, verb, reason });
  if (line.length > 200) return bad('line too long');
  for (let i = 0; i < line.length; i++) {
    const c = line.charCodeAt(i);
    if (c < 32 || c > 126) return bad('binary noise');
  }
  const caret = line.length - 5;
  if (caret < 1 || line[caret] !== '^' || line[caret - 1] !== ' ') return bad('no checksum');
  const payload = line.slice(0, caret - 1);
  if (crc16Hex(payload) !== line.slice(caret + 1).toUpperCase()) return bad('checksum');
  const parts = payload.split(' ');
  if (parts[0] !== 'do' || parts.length < 3) return bad('not a command');
  const seq = parseDecimal(parts[1]!, 0, parts[1]!.length);
  if (!Number.isInteger(seq) || seq < 0) return bad('bad sequence number');
  const verb = parts[2]!;
  const arg = parts.length > 3 ? parseDecimal(parts[3]!, 0, parts[3]!.length) : NaN;
  switch (verb) {
    case 'start': return { ok: true, seq, command: { type: 'start' }, blankDuration_s: null };
    case 'stop': return { ok: true, seq, command: { type: 'stop' }, blankDuration_s: null };
    case 'who': return { ok: true, seq, command: { type: 'who' }, blankDuration_s: null };
    case 'scan': return { ok: true, seq, command: { type: 'scan' }, blankDuration_s: null };
    case 'blank':
      if (parts.length > 3 && !(arg > 0 && arg <= 600)) return bad('blank duration out of range', seq, verb);
      return { ok: true, seq, command: { type: 'takeBlank' }, blankDuration_s: parts.length > 3 ? arg : null };
    case 'wl':
      if (!(arg >= 190 && arg <= 1100)) return bad('wavelength out of range', seq, verb);
      return { ok: true, seq, command: { type: 'setWavelength', wavelength_nm: arg }, blankDuration_s: null };
    case 'every':
      if (!(arg >= 0.01 && arg <= 3600)) return bad('interval out of range', seq, verb);
      return { ok: true, seq, command: { type: 'setInterval', interval_s: arg }, blankDuration_s: null };
    default:
      return bad('unknown command', seq, verb);
  }
}
