/**
 * The one builder of a run record's header line, for every host that opens a record
 * (`rateline record`, the bench service behind the screen).
 */
import {
  READING_COLUMNS, RUN_RECORD_FORMAT, RUN_RECORD_VERSION, isoWithLocalOffset,
  type RecordCalibration, type RecordHeader, type RecordInstrument, type RunMetadata,
} from './runRecordFormat';

export interface RecordHeaderInput {
  started: Date;
  /** The program that writes the record (name and release). */
  program: { name: string; version: string };
  run: RunMetadata;
  calibration: RecordCalibration | null;
  instrument: RecordInstrument;
  /** Invented data (the simulated instrument): the record says so. */
  demo: boolean;
  /** Device time at which the instrument itself starts the reaction (the simulated instrument: 0), else null. */
  reactionStart_s: number | null;
}

export function buildRecordHeader(o: RecordHeaderInput): RecordHeader {
  return {
    format: RUN_RECORD_FORMAT,
    version: RUN_RECORD_VERSION,
    started: isoWithLocalOffset(o.started),
    program: { name: o.program.name, version: o.program.version },
    run: o.run,
    calibration: o.calibration,
    instrument: o.instrument,
    columns: [...READING_COLUMNS],
    demo: o.demo,
    reactionStart_s: o.reactionStart_s,
  };
}
