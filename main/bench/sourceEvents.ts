/**
 * What the bench does with what its source sends: a reading is placed on the run clock,
 * recorded, then analysed; status, gaps, warnings, a blank and spectra go to the screen
 * and into the record. A replayed record's own time zero and marks carry over into the
 * new record.
 */
import type { RunEvent } from '../../acquisition/record/runRecordFormat';
import type { Reading, SourceEvent } from '../../acquisition/sources/sourceTypes';
import { bandMaximum } from '../../kinetics/bandMaximum';
import type { BenchSession } from './benchSession';
import { emptyRejectCounts } from '../../acquisition/sources/sourceStatus';

export function onSourceEvent(s: BenchSession, e: SourceEvent): void {
  switch (e.type) {
    case 'reading': onReading(s, e.reading); break;
    case 'status':
      s.state.sourceStatus = e.status;
      s.emit({ type: 'sourceStatus', status: e.status });
      s.record.event({ ev: 'status', t: s.run.deviceTimeNow(), status: e.status });
      if (e.status.kind === 'ended' && s.state.phase === 'running') s.stopSoon('sourceEnded', e.status.detail);
      break;
    case 'rejected':
      s.state.rejected = { ...emptyRejectCounts(), ...e.counts };
      s.lastRejected = { reason: e.reason, line: printable(e.line) };
      s.outbox.otherChanged();
      break;
    case 'gap':
      s.record.event({ ev: 'gap', t: s.run.deviceTimeNow(), from_ms: e.from_ms, to_ms: e.to_ms, reason: e.reason });
      s.warn(`no readings for ${((e.to_ms - e.from_ms) / 1000).toFixed(1)} s (${e.reason}); the run goes on.`);
      break;
    case 'warning':
      s.record.event({ ev: 'warning', t: s.run.deviceTimeNow(), message: e.message });
      s.warn(e.message);
      break;
    case 'blank': {
      const b = e.blank;
      s.state.blankTaken = true;
      const noise = b.noise_AU === null ? '' : `, noise ${b.noise_AU.toExponential(1)} AU`;
      s.record.event({ ev: 'blank', t: b.deviceTime_s, detail: `blank of ${b.points} readings at ${b.wavelength_nm} nm${noise}`, noise_AU: b.noise_AU, drift_AUperMin: b.drift_AUperMin });
      for (const w of b.warnings) s.warn(w);
      s.changed();
      break;
    }
    case 'spectrum': {
      const recorded = s.state.phase === 'running';
      if (recorded) {
        const f = e.frame;
        const found = f.kind === 'absorbance' ? bandMaximum(f.wavelengths_nm, f.values) : null;
        s.record.event({ ev: 'spectrum', t: f.deviceTime_s, frame: f, peak_nm: found?.ok && !found.atEdge ? found.wavelength_nm : null });
      }
      s.spectra.arrived(e.frame, recorded);
      break;
    }
  }
}

export function onRecordedEvent(s: BenchSession, e: RunEvent): void {
  if (s.state.phase !== 'running') return;
  if (e.ev === 'mixed' && e.t !== null) {
    s.pendingMixedDevice_s = e.t;
    applyRecordedMixed(s);
  } else if (e.ev === 'mark') {
    s.record.event({ ev: 'mark', t: e.t, note: e.note });
  }
}

/** Time zero from a replayed record, on this run's clock, once the clock's origin is known. */
function applyRecordedMixed(s: BenchSession): void {
  const origin = s.run.origin_s;
  if (s.pendingMixedDevice_s === null || origin === null) return;
  // May be negative: the record's mixing came before its first reading.
  s.run.timeZero_s = s.pendingMixedDevice_s - origin;
  s.record.event({ ev: 'mixed', t: s.pendingMixedDevice_s });
  s.pendingMixedDevice_s = null;
  s.rebuildAnalyzer();
  s.changed();
}

function onReading(s: BenchSession, r: Reading): void {
  if (s.state.phase !== 'running' || !Number.isFinite(r.absorbance) || !Number.isFinite(r.deviceTime_s)) return;
  const first = s.run.origin_s === null;
  const t = s.run.place(r.deviceTime_s, r.absorbance, r.flags);
  if (first) applyRecordedMixed(s);
  s.record.write((rec) => rec.reading(r));
  // The reading reaches the operating system before the analysis step that may hold the thread.
  s.record.write((rec) => rec.release());
  s.run.feed(t, r.absorbance);
  s.outbox.readingsAvailable(s.run.count);
}

/** A rejected line as the screen may show it: printable ASCII, capped. */
function printable(line: string): string {
  return line.replace(/[^\x20-\x7e]/g, '?').slice(0, 120);
}
