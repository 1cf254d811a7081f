/**
 * One interface for every source of readings: a serial-line spectrometer, the
 * simulated instrument, or a recorded run played back. The bench service, the
 * recorder and the `rateline record` command only ever see this.
 */

import type { RejectCounts, RejectReason, SourceStatus } from './sourceStatus';

export type { DeviceIdentity, RejectCounts, RejectReason, SourceStatus } from './sourceStatus';

export type SourceKind = 'serial' | 'simulated' | 'replay';

/** Flags a reading can carry (bit set). */
export const ReadingFlag = {
  none: 0,
  /** Detector counts at or near full scale. */
  saturated: 1 << 0,
  /** Absorbance past the reliable range of a typical instrument (about 2 AU; common practice). */
  beyondRange: 1 << 1,
  /** Computed from intensities (sample, dark, blank) rather than sent as absorbance. */
  fromIntensity: 1 << 2,
  /** The device flagged the reading itself. */
  deviceWarning: 1 << 3,
} as const;

export interface Reading {
  /** Time stamped by the device (s since its start, or since the run's start for replay). */
  deviceTime_s: number;
  /** Host monotonic time when the line arrived (ms, performance.now() or hrtime). */
  hostTime_ms: number;
  /** Always finite. */
  absorbance: number;
  wavelength_nm: number | null;
  /** Cell temperature if the device reports one. */
  cellTemperature_C: number | null;
  /** Raw intensities when the device sent counts. */
  sampleCounts?: number;
  darkCounts?: number;
  flags: number;
}

/** A full-spectrum frame (for choosing the wavelength). */
export interface SpectrumFrame {
  deviceTime_s: number;
  wavelengths_nm: Float64Array;
  /** Absorbance, or raw counts when `kind` is 'counts'. */
  values: Float64Array;
  kind: 'absorbance' | 'counts';
}

export type SourceEvent =
  | { type: 'reading'; reading: Reading }
  | { type: 'spectrum'; frame: SpectrumFrame }
  | { type: 'status'; status: SourceStatus }
  | { type: 'rejected'; reason: RejectReason; line: string; counts: RejectCounts }
  /** The feed stopped and resumed (cable pulled, port reopened): no readings between. */
  | { type: 'gap'; from_ms: number; to_ms: number; reason: string }
  | { type: 'warning'; message: string }
  /** A blank was taken (devices that send counts): the reference now in use and the baseline check. */
  | { type: 'blank'; blank: BlankTaken };

/** The blank reference and its baseline check, as the source took it (see acquisition/protocol/absorbance.ts). */
export interface BlankTaken {
  netBlank_counts: number;
  dark_counts: number;
  points: number;
  wavelength_nm: number;
  /** Device time of the blank's last line. */
  deviceTime_s: number;
  /** SD of the blank as absorbance, and its drift in AU per minute (null when the blank was too short to check). */
  noise_AU: number | null;
  drift_AUperMin: number | null;
  warmedUp: boolean | null;
  warnings: string[];
}

export type SourceListener = (event: SourceEvent) => void;

export interface ReadingSource {
  readonly kind: SourceKind;
  /** Subscribe; returns the unsubscribe function. */
  on(listener: SourceListener): () => void;
  open(): Promise<void>;
  /** Host-to-device commands; sources that cannot do one say so in the returned value. */
  command(cmd: SourceCommand): Promise<{ ok: true } | { ok: false; error: string }>;
  close(): Promise<void>;
  /** Rejected-line counts by reason, so far. */
  rejectedCounts(): RejectCounts;
}

export type SourceCommand =
  | { type: 'start' }
  | { type: 'stop' }
  | { type: 'setWavelength'; wavelength_nm: number }
  | { type: 'takeBlank' }
  | { type: 'setInterval'; interval_s: number }
  /** Ask the device for one full-spectrum frame (to choose the wavelength). */
  | { type: 'scan' }
  /** Replay only. */
  | { type: 'setSpeed'; speed: number | 'max' }
  | { type: 'pause' }
  | { type: 'resume' };
