/**
 * The bench service's record sink over the acquisition journal: the run's details
 * become the record header, the service's events become record events. The journal
 * does the crash-safe writing (fsync policy, never overwriting).
 */
import { performance } from 'node:perf_hooks';
import { Journal } from '../../acquisition/record/journal';
import {
  READING_COLUMNS, RUN_RECORD_FORMAT, RUN_RECORD_VERSION, emptyRunMetadata, isoWithLocalOffset,
  type RecordHeader, type RunMetadata,
} from '../../acquisition/record/runRecordFormat';
import type { SampleDetails } from '../bridge/contract';
import type { RecordEvent, RecordOpening, RecordSink } from './benchDependencies';
import { ensureRunsFolder } from './runsFolder';
import { PROGRAM } from '../programIdentity';
import { dirname } from 'node:path';


function runMetadata(details: SampleDetails, wavelength_nm: number | null): RunMetadata {
  return {
    ...emptyRunMetadata(),
    sample: details.sample ?? null,
    operator: details.operator ?? null,
    temperature_C: details.temperature_C ?? null,
    concentrations: (details.concentrations ?? []).map((c) => ({ name: c.name, value: c.value, unit: c.unit })),
    path_cm: details.path_cm ?? null,
    pH: details.pH ?? null,
    buffer: details.buffer || null,
    volumes: (details.volumes ?? []).map((v) => ({ name: v.name, value_mL: v.value_mL })),
    note: details.notes ?? null,
    wavelength_nm,
  };
}

export function recordHeader(o: RecordOpening): RecordHeader {
  return {
    format: RUN_RECORD_FORMAT,
    version: RUN_RECORD_VERSION,
    started: isoWithLocalOffset(o.started),
    program: { ...PROGRAM },
    run: runMetadata(o.details, o.wavelength_nm),
    calibration: null,
    instrument: {
      source: o.source.kind,
      port: o.source.kind === 'serial' ? o.source.path : null,
      baud: o.source.kind === 'serial' ? o.source.baud : null,
      identity: null,
    },
    columns: [...READING_COLUMNS],
    demo: o.demo,
  };
}

export async function openJournalSink(o: RecordOpening, now_ms: () => number = () => performance.now()): Promise<RecordSink> {
  await ensureRunsFolder(dirname(o.path));
  const journal = Journal.create(o.path, recordHeader(o), { now_ms });
  const h = (): number => journal.hostOffset_ms(now_ms());
  return {
    path: o.path,
    reading: (r) => journal.reading(r),
    release: () => journal.release(),
    event(e: RecordEvent) {
      switch (e.ev) {
        case 'blank': journal.event({ ev: 'blank', h: h(), t: e.t, detail: e.detail, noise_AU: e.noise_AU ?? null, drift_AUperMin: e.drift_AUperMin ?? null }); break;
        case 'mixed': journal.event({ ev: 'mixed', h: h(), t: e.t, wall: isoWithLocalOffset(new Date()) }); break;
        case 'mark': journal.event({ ev: 'mark', h: h(), t: e.t, note: e.note }); break;
        case 'meta': journal.event({ ev: 'meta', h: h(), t: e.t, run: runMetadata(e.details, e.wavelength_nm) }); break;
        case 'warning': journal.event({ ev: 'warning', h: h(), t: e.t, message: e.message }); break;
        case 'gap': journal.event({ ev: 'gap', h: h(), t: e.t, from_h: journal.hostOffset_ms(e.from_ms), to_h: journal.hostOffset_ms(e.to_ms), reason: e.reason }); break;
        case 'status': journal.event({ ev: 'status', h: h(), t: e.t, status: e.status }); break;
        case 'spectrum': journal.event({
          ev: 'spectrum', h: h(), t: e.t, kind: e.frame.kind,
          wavelengths_nm: Array.from(e.frame.wavelengths_nm), values: Array.from(e.frame.values), peak_nm: e.peak_nm,
        }); break;
      }
    },
    async close(stop) {
      try {
        journal.event({ ev: 'stop', h: h(), t: null, reason: stop.reason, detail: stop.detail || stop.reason });
        journal.close(stop.rejected);
      } catch (err) {
        journal.abandon();
        throw err;
      }
    },
  };
}
