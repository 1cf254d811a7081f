/**
 * The bench service's record sink over the acquisition journal: the run's details
 * become the record header, the service's events become record events. The journal
 * does the crash-safe writing (fsync policy, never overwriting).
 */
import { performance } from 'node:perf_hooks';
import { Journal } from '../../acquisition/record/journal';
import { emptyRunMetadata, type RecordHeader, type RunEvent, type RunMetadata } from '../../acquisition/record/runRecordFormat';
import { buildRecordHeader } from '../../acquisition/record/recordHeader';
import { recordLineFor } from '../../acquisition/record/recordLines';
import type { SampleDetails } from '../bridge/contract';
import type { RecordOpening, RecordSink } from './benchDependencies';
import { ensureRunsFolder } from './runsFolder';
import { PROGRAM } from '../programIdentity';
import { dirname } from 'node:path';


/** The screen's sample details as the record's run metadata (also for a `meta` line when they change). */
export function runMetadata(details: SampleDetails, wavelength_nm: number | null): RunMetadata {
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

/** The header of a bench run, by the one builder. */
export function benchRecordHeader(o: RecordOpening): RecordHeader {
  return buildRecordHeader({
    started: o.started, program: PROGRAM, run: runMetadata(o.details, o.wavelength_nm), calibration: null,
    instrument: {
      source: o.source.kind,
      port: o.source.kind === 'serial' ? o.source.path : null,
      baud: o.source.kind === 'serial' ? o.source.baud : null,
      identity: null,
    },
    demo: o.demo,
    // The simulated instrument starts its reaction at its device time 0 unless Mixed is pressed.
    reactionStart_s: o.source.kind === 'simulated' ? 0 : null,
  });
}

export async function openJournalSink(o: RecordOpening, now_ms: () => number = () => performance.now()): Promise<RecordSink> {
  await ensureRunsFolder(dirname(o.path));
  const journal = Journal.create(o.path, benchRecordHeader(o), { now_ms });
  const h = (): number => journal.hostOffset_ms(now_ms());
  return {
    path: o.path,
    reading: (r) => journal.reading(r),
    release: () => journal.release(),
    sourceEvent(e, t) {
      const line = recordLineFor(e, { h: h(), t, hostOffset_ms: (ms) => journal.hostOffset_ms(ms) });
      if (line) journal.event(line);
    },
    event(line) {
      journal.event({ ...line, h: h() } as RunEvent);
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
