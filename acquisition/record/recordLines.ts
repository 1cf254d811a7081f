/**
 * The one mapping from what a source sends to the run record's event lines, for every
 * host (`rateline record`, the bench service). Readings are not events: the journal
 * writes them itself. A host adds what is its own (marks, Mixed, metadata changes), but
 * never maps a source event a second way.
 */
import { bandMaximum } from '../../kinetics/bandMaximum';
import type { RunEvent } from './runRecordFormat';
import type { SourceEvent } from '../sources/sourceTypes';

/** Where an event line is placed: host time since the record opened (ms), device time now, and the host clock's offset. */
export interface LinePlace {
  h: number;
  t: number | null;
  hostOffset_ms: (host_ms: number) => number;
}

/** The record line for a source event, or null when it has none (a reading; rejected-line totals, which the session throttles). */
export function recordLineFor(e: SourceEvent, at: LinePlace): RunEvent | null {
  switch (e.type) {
    case 'reading':
    case 'rejected':
      return null;
    case 'status':
      return { ev: 'status', h: at.h, t: at.t, status: { ...e.status } };
    case 'gap':
      return { ev: 'gap', h: at.h, t: at.t, from_h: at.hostOffset_ms(e.from_ms), to_h: at.hostOffset_ms(e.to_ms), reason: e.reason };
    case 'warning':
      return { ev: 'warning', h: at.h, t: at.t, message: e.message };
    case 'blank': {
      const b = e.blank;
      const noise = b.noise_AU === null ? '' : `, noise ${b.noise_AU.toExponential(1)} AU`;
      return {
        ev: 'blank', h: at.h, t: b.deviceTime_s,
        detail: `blank of ${b.points} readings at ${b.wavelength_nm} nm (net ${b.netBlank_counts} counts, dark ${b.dark_counts}${noise})`,
        noise_AU: b.noise_AU, drift_AUperMin: b.drift_AUperMin,
        reference: { net_counts: b.netBlank_counts, dark_counts: b.dark_counts, points: b.points, wavelength_nm: b.wavelength_nm },
      };
    }
    case 'spectrum': {
      const f = e.frame;
      const found = f.kind === 'absorbance' ? bandMaximum(f.wavelengths_nm, f.values) : null;
      return {
        ev: 'spectrum', h: at.h, t: f.deviceTime_s, kind: f.kind,
        wavelengths_nm: Array.from(f.wavelengths_nm), values: Array.from(f.values),
        peak_nm: found?.ok && !found.atEdge ? found.wavelength_nm : null,
      };
    }
  }
}

/** The first reading's device time above which the instrument was part-way through a run when the port opened (s). */
export const LATE_START_S = 5;

/** A warning when the first reading's device time is well above 0 (the start of the run was not recorded), else null. */
export function lateStartWarning(firstDeviceTime_s: number): string | null {
  if (!(firstDeviceTime_s > LATE_START_S)) return null;
  return `the instrument's clock read ${firstDeviceTime_s} s at the first reading, so it was part-way through a run when the port opened; the first ${firstDeviceTime_s} s are not in this record, so restart the instrument's run if the start matters.`;
}
