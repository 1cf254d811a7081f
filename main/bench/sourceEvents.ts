/**
 * What the bench does with what its source sends: a reading is placed on the run clock,
 * recorded, then analysed; status, gaps, warnings, a blank and spectra go to the screen
 * and into the record. A replayed record's own time zero and marks carry over into the
 * new record.
 */
import { isoWithLocalOffset, type RunEvent } from '../../acquisition/record/runRecordFormat';
import type { Reading, SourceEvent } from '../../acquisition/sources/sourceTypes';
import type { BenchSession } from './benchSession';
import { lateStartWarning } from '../../acquisition/record/recordLines';
import { emptyRejectCounts } from '../../acquisition/sources/sourceStatus';

export function onSourceEvent(s: BenchSession, e: SourceEvent): void {
  switch (e.type) {
    case 'reading': onReading(s, e.reading); break;
    case 'status':
      s.state.sourceStatus = e.status;
      s.emit({ type: 'sourceStatus', status: e.status });
      s.record.sourceEvent(e, s.run.deviceTimeNow());
      if (e.status.kind === 'ended' && s.state.phase === 'running') s.stopSoon('sourceEnded', e.status.detail);
      break;
    case 'rejected':
      s.state.rejected = { ...emptyRejectCounts(), ...e.counts };
      s.lastRejected = { reason: e.reason, line: printable(e.line) };
      s.outbox.otherChanged();
      break;
    case 'gap':
      s.record.sourceEvent(e, s.run.deviceTimeNow());
      s.warn(`no readings for ${((e.to_ms - e.from_ms) / 1000).toFixed(1)} s (${e.reason}); the run goes on.`);
      break;
    case 'warning':
      s.record.sourceEvent(e, s.run.deviceTimeNow());
      s.warn(e.message);
      break;
    case 'blank': {
      s.state.blankTaken = true;
      s.record.sourceEvent(e, s.run.deviceTimeNow());
      s.blanksRecorded++;
      for (const w of e.blank.warnings) s.warn(w);
      s.changed();
      break;
    }
    case 'spectrum': {
      const recorded = s.state.phase === 'running';
      if (recorded) s.record.sourceEvent(e, s.run.deviceTimeNow());
      s.spectra.arrived(e.frame, recorded);
      break;
    }
  }
}

export function onRecordedEvent(s: BenchSession, e: RunEvent): void {
  if (s.state.phase !== 'running') return;
  // A replayed record's time zero (by its own version's rule) was taken when the run
  // started (runLifecycle.ts), so its `mixed` lines do not carry over one by one.
  if (e.ev === 'mark') {
    s.record.event({ ev: 'mark', t: e.t, note: e.note });
  }
}

/** Time zero from a replayed record, on this run's clock, once the clock's origin is known. */
function applyRecordedMixed(s: BenchSession): void {
  const origin = s.run.origin_s;
  if (s.pendingMixedDevice_s === null || origin === null) return;
  // May be negative: the record's mixing came before its first reading.
  s.run.timeZero_s = s.pendingMixedDevice_s - origin;
  s.record.event({ ev: 'mixed', t: s.pendingMixedDevice_s, wall: isoWithLocalOffset(new Date()) });
  s.pendingMixedDevice_s = null;
  s.rebuildAnalyzer();
  s.changed();
}

function onReading(s: BenchSession, r: Reading): void {
  if (s.state.phase !== 'running' || !Number.isFinite(r.absorbance) || !Number.isFinite(r.deviceTime_s)) return;
  const first = s.run.origin_s === null;
  if (!s.lateStartChecked) {
    s.lateStartChecked = true;
    const late = lateStartWarning(r.deviceTime_s);
    if (late) {
      s.record.event({ ev: 'warning', t: r.deviceTime_s, message: late });
      s.warn(late);
    }
  }
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
