/**
 * What the bench service needs from the rest of the program, as small interfaces of
 * its own, so that the service is host-agnostic (Electron or the web host) and its
 * tests can put small fakes in place of the serial port, the disk and the clock.
 * The real parts are wired in main/bench/benchWiring.ts.
 */
import type { Reading, ReadingSource, SourceEvent } from '../../acquisition/sources/sourceTypes';
import type { RunEvent } from '../../acquisition/record/runRecordFormat';
import type { AnalyzerOptions, RunAnalyzerLike } from '../../kinetics/analysisTypes';
import type { SampleDetails, SourceChoice } from '../bridge/contract';

/** The record of one run, as the service writes it (the journal's append-only lines). */
export interface RecordSink {
  readonly path: string;
  /** A reading as the source gave it (device time). */
  reading(reading: Reading): void;
  /** Hand what is buffered to the operating system before a possibly long analysis step. */
  release(): void;
  /** A source's event, as the one mapping (acquisition/record/recordLines.ts) writes it; `t` is the device time now. */
  sourceEvent(event: SourceEvent, t: number | null): void;
  /** The bench's own lines (Mixed, a mark, changed details, the fit settings); times `t` are device times (s). */
  event(line: RecordLine): void;
  /**
   * Writes the stop and end lines and closes the file; every reading written before is kept.
   * After a failed write, closes the file as it is (no end line: the reader recovers it).
   */
  close(stop: { reason: 'user' | 'sourceEnded' | 'error'; detail: string; rejected: Record<string, number> }): Promise<void>;
}

/** An event line without its host time, which the sink adds when it writes it. */
export type RecordLine = RunEvent extends infer E ? (E extends RunEvent ? Omit<E, 'h'> : never) : never;

export interface RecordOpening {
  /** Full path of the new record (inside the runs folder). */
  path: string;
  started: Date;
  details: SampleDetails;
  wavelength_nm: number | null;
  source: SourceChoice;
  /** Invented data from the simulated instrument: the record says so. */
  demo: boolean;
}

export interface PortListing {
  path: string;
  manufacturer: string | null;
  serialNumber: string | null;
}

/** Native dialogs (Electron). Absent in the web host, where files stay inside the runs folder. */
export interface BenchDialogs {
  /** A record chosen by the user, or null when cancelled. */
  chooseRecordToOpen(): Promise<string | null>;
  /** Where to save an export, or null when cancelled. */
  chooseExportPath(defaultName: string): Promise<string | null>;
}

export interface BenchDeps {
  host: 'electron' | 'web';
  /** The runs folder: records are written here, and replayed from here by name. */
  dataDir: string;
  /** Speed factor of the simulated instrument when the screen gives none. */
  defaultSpeed: number;
  /** `replayPath` is the resolved record path for a replay source, else null. */
  createSource(choice: SourceChoice, replayPath: string | null): ReadingSource | Promise<ReadingSource>;
  createAnalyzer(options: AnalyzerOptions): RunAnalyzerLike;
  openRecord(opening: RecordOpening): Promise<RecordSink>;
  listPorts(): Promise<PortListing[]>;
  dialogs?: BenchDialogs;
  /** How long to wait for the spectrum frame a scan asks for (ms; default 10 000). */
  spectrumTimeout_ms?: number;
  /** Monotonic clock in ms (performance.now by default). */
  now_ms?: () => number;
}
