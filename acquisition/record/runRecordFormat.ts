/**
 * The run record, version 2 (version 1 is still read): the shapes of its lines and their zod schemas. One
 * JSON value per line (JSON Lines): a header object first, then readings as short
 * arrays and events as objects keyed by `ev`, and an `end` object when the run was
 * closed cleanly. RUN_RECORD.md beside this file is the prose description; the two
 * must say the same thing.
 */
import { z } from 'zod';
import { SOURCE_STATUS_KINDS } from '../sources/sourceStatus';

export const RUN_RECORD_FORMAT = 'rateline-run-record';
export const RUN_RECORD_VERSION = 2;
/** Every version this program reads; version 1 differs in its time-zero rule only (see recordTimeZero.ts). */
export const READABLE_RECORD_VERSIONS = [1, 2] as const;

/** The column names of a reading array, in order (documented in the header too). */
export const READING_COLUMNS = ['t_s', 'A', 'h_ms', 'flags', 'cellT_C', 'I_sample', 'I_dark'] as const;

/** zod 4's number() refuses NaN and ±Infinity already (JSON cannot carry them anyway). */
const finite = z.number();
const text = z.string().max(10_000);
const optionalText = text.nullable();
const optionalFinite = finite.nullable();

/** ISO 8601 with an explicit offset (Z or ±hh:mm), so the wall-clock start means one instant. */
const isoWithOffset = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d+)?(Z|[+-]\d{2}:\d{2})$/, 'must be ISO 8601 with an offset');

const quantitySchema = z.object({ name: text, value: finite, unit: text });
const volumeSchema = z.object({ name: text, value_mL: finite });

export const runMetadataSchema = z.object({
  sample: optionalText,
  operator: optionalText,
  wavelength_nm: optionalFinite,
  path_cm: optionalFinite,
  temperature_C: optionalFinite,
  pH: optionalFinite,
  buffer: optionalText,
  concentrations: z.array(quantitySchema),
  volumes: z.array(volumeSchema),
  note: optionalText,
});
export type RunMetadata = z.infer<typeof runMetadataSchema>;

/** A straight-line calibration, signal = (A − intercept) / slope, as used when the run was taken. */
export const calibrationSchema = z
  .object({
    label: text,
    signal: z.object({ name: text, unit: text }),
    slope: finite,
    intercept: finite,
  })
  .catchall(z.unknown());
export type RecordCalibration = z.infer<typeof calibrationSchema>;

export const identitySchema = z.object({
  maker: text,
  model: text,
  serial: text,
  firmware: text,
  sends: z.enum(['absorbance', 'counts']),
});

export const instrumentSchema = z.object({
  source: z.enum(['serial', 'simulated', 'replay']),
  port: optionalText,
  baud: optionalFinite,
  identity: identitySchema.nullable(),
});
export type RecordInstrument = z.infer<typeof instrumentSchema>;

export const headerSchema = z.object({
  format: z.literal(RUN_RECORD_FORMAT),
  version: z.union([z.literal(1), z.literal(2)]),
  started: isoWithOffset,
  program: z.object({ name: text, version: text }),
  run: runMetadataSchema,
  calibration: calibrationSchema.nullable(),
  instrument: instrumentSchema,
  columns: z.array(text),
  demo: z.boolean(),
  /**
   * Version 2: the device time at which the instrument itself started the reaction (the
   * simulated instrument: 0), or null when only the user can say (Mixed). Time zero when
   * the record has no `mixed` event.
   */
  reactionStart_s: optionalFinite.optional(),
});
export type RecordHeader = z.infer<typeof headerSchema>;

/**
 * A reading: [t_s, A, h_ms, flags?, cellT_C?, I_sample?, I_dark?]. Trailing columns are
 * left out when they carry nothing (flags 0, the rest null), so the common line is
 * three numbers.
 */
export const readingLineSchema = z
  .tuple([z.number(), z.number(), z.number()], z.number().nullable())
  .refine((r) => r.length <= READING_COLUMNS.length, { message: `at most ${READING_COLUMNS.length} columns` })
  .refine((r) => r.length < 4 || (typeof r[3] === 'number' && Number.isInteger(r[3]) && r[3] >= 0), {
    message: 'flags (column 4) must be a whole number ≥ 0',
    path: [3],
  });

// A status in a record is checked for its kind only (the one list, sources/sourceStatus.ts),
// so that a record keeps reading if a status gains a field.
const sourceStatusSchema = z.object({ kind: z.enum(SOURCE_STATUS_KINDS) }).catchall(z.unknown());

/** Every event carries the host time since the record was opened (h, ms) and the device time when known. */
const at = { h: finite, t: optionalFinite };

export const eventSchema = z.discriminatedUnion('ev', [
  z.object({
    ev: z.literal('blank'),
    ...at,
    detail: text,
    noise_AU: optionalFinite,
    drift_AUperMin: optionalFinite,
    /** The reference taken from a counts device: I_blank − I_dark (net) and I_dark, over `points` readings. */
    reference: z.object({ net_counts: finite, dark_counts: finite, points: z.number().int().min(0), wavelength_nm: finite }).optional(),
  }),
  z.object({ ev: z.literal('mixed'), ...at, wall: isoWithOffset }),
  z.object({ ev: z.literal('gap'), ...at, from_h: finite, to_h: finite, reason: text }),
  z.object({ ev: z.literal('mark'), ...at, note: text }),
  z.object({
    ev: z.literal('meta'),
    ...at,
    run: runMetadataSchema.partial().optional(),
    instrument: instrumentSchema.partial().optional(),
    calibration: calibrationSchema.nullable().optional(),
  }),
  z.object({ ev: z.literal('warning'), ...at, message: text }),
  /** A full-spectrum frame of the cell (added within version 1; see RUN_RECORD.md). */
  z.object({
    ev: z.literal('spectrum'),
    ...at,
    kind: z.enum(['absorbance', 'counts']),
    wavelengths_nm: z.array(finite).max(100_000),
    values: z.array(finite).max(100_000),
    /** The absorbance maximum found in it, nm, or null. */
    peak_nm: optionalFinite.optional(),
  }).refine((e) => e.wavelengths_nm.length === e.values.length, { message: 'wavelengths_nm and values must have one length' }),
  z.object({ ev: z.literal('status'), ...at, status: sourceStatusSchema }),
  z.object({ ev: z.literal('rejected'), ...at, counts: z.record(z.string(), z.number().int().min(0)) }),
  /** Version 2: the fit window (run time, s), target and precision in force when the run stopped. */
  z.object({
    ev: z.literal('fitSettings'),
    ...at,
    from_s: optionalFinite,
    to_s: optionalFinite,
    targetHalfLives: finite,
    precision: finite,
  }),
  z.object({
    ev: z.literal('stop'),
    ...at,
    reason: z.enum(['user', 'signal', 'limit', 'advice', 'sourceEnded', 'error']),
    detail: text,
  }),
]);
export type RunEvent = z.infer<typeof eventSchema>;
export type RunEventKind = RunEvent['ev'];

export const endSchema = z.object({
  ev: z.literal('end'),
  h: finite,
  wall: isoWithOffset,
  readings: z.number().int().min(0),
  rejected: z.record(z.string(), z.number().int().min(0)),
});
export type RecordEnd = z.infer<typeof endSchema>;

/** A note written later, in the sidecar file beside the record (the record itself is never rewritten). */
export const sidecarNoteSchema = z.object({
  wall: isoWithOffset,
  author: optionalText,
  t: optionalFinite,
  note: text,
});
export type SidecarNote = z.infer<typeof sidecarNoteSchema>;

/** Empty metadata, to be filled by the caller. */
export function emptyRunMetadata(): RunMetadata {
  return {
    sample: null,
    operator: null,
    wavelength_nm: null,
    path_cm: null,
    temperature_C: null,
    pH: null,
    buffer: null,
    concentrations: [],
    volumes: [],
    note: null,
  };
}

/** Local wall-clock time as ISO 8601 with the local offset (not Z), as a bench notebook would write it. */
export function isoWithLocalOffset(date: Date): string {
  const offsetMin = -date.getTimezoneOffset();
  const sign = offsetMin >= 0 ? '+' : '-';
  const abs = Math.abs(offsetMin);
  const pad = (n: number, w = 2): string => String(n).padStart(w, '0');
  return (
    `${date.getFullYear()}-${pad(date.getMonth() + 1)}-${pad(date.getDate())}` +
    `T${pad(date.getHours())}:${pad(date.getMinutes())}:${pad(date.getSeconds())}.${pad(date.getMilliseconds(), 3)}` +
    `${sign}${pad(Math.floor(abs / 60))}:${pad(abs % 60)}`
  );
}

/** Whether a first line announces a run record (used to tell records from CSV without trusting the extension). */
export function looksLikeRunRecordLine(firstLine: string): boolean {
  const s = firstLine.trimStart();
  if (!s.startsWith('{')) return false;
  try {
    const v: unknown = JSON.parse(s);
    return typeof v === 'object' && v !== null && (v as { format?: unknown }).format === RUN_RECORD_FORMAT;
  } catch {
    // A header line is never torn in a record worth reading; anything else is not a record.
    return false;
  }
}
