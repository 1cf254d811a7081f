/**
 * The one typed contract between the screen and the bench service. Both hosts carry
 * exactly this: the Electron preload over IPC, and the loopback web host over a
 * WebSocket. Pure (zod only, with the zod declarations of acquisition/sources/sourceStatus.ts),
 * so the renderer imports it as it is.
 *
 * The screen is never trusted: every request is parsed with `parseRequest` on the
 * service side before anything acts on it, and every size is capped here, once.
 *
 * Time: readings travel on the run clock (s since the first reading of the run).
 * `state.timeZero_s` is the run-clock time of mixing ("mixed"); the analysis and the
 * fit window are in time after mixing, t = time_s − timeZero_s.
 */
import { z } from 'zod';
import { AnalysisResultSchema } from '../../kinetics/analysisSchema';
import { RejectReasonSchema, sourceStatusSchema } from '../../acquisition/sources/sourceStatus';

export const CONTRACT_VERSION = 1;

/** Size caps, in one place; both hosts and the service enforce them. */
export const LIMITS = Object.freeze({
  /** A request message (JSON text) from the screen, in bytes. */
  maxRequestBytes: 64 * 1024,
  /** One readings batch pushed to the screen. */
  maxBatchPoints: 4096,
  maxShortText: 200,
  maxNote: 1000,
  maxPath: 4096,
  maxFileName: 255,
  maxConcentrations: 20,
  maxPorts: 256,
  maxRecords: 1000,
  maxWarnings: 200,
  /** Points of one spectrum frame sent to the screen. */
  maxSpectrumPoints: 4096,
});

/** The results are pushed no more often than this (≤ 20 per second). */
export const MIN_ANALYSIS_INTERVAL_MS = 50;
/** Readings are batched for at most this long before they are pushed. */
export const READINGS_BATCH_MS = 50;

/** IPC channel names (Electron) and the WebSocket path (web host). */
export { CHANNELS } from './channels';
export const SOCKET_PATH = '/bridge';
/**
 * The web host's per-launch token: in the address it prints (query `token`, read once by
 * the page and then cleared from the address bar), in a header on every HTTP request that
 * reads or changes anything, and in the socket's first message. Never in a cookie: a
 * browser sends cookies for 127.0.0.1 to every port on it, so any program listening on
 * another port would learn the token.
 */
export const TOKEN_PARAM = 'token';
export const TOKEN_HEADER = 'x-rateline-token';
/** How long the socket waits for its first message (the token) before it is closed. */
export const HELLO_TIMEOUT_MS = 10_000;
/** Close codes of a socket refused for its token (4000–4999 are an application's own). */
export const SOCKET_CLOSE = Object.freeze({ noToken: 4401, wrongToken: 4403 });

const shortText = z.string().max(LIMITS.maxShortText);
const finite = z.number(); // zod 4 numbers reject NaN and ±Infinity
const nonNegInt = z.number().int().min(0);

export const BAUD_RATES = [1200, 2400, 4800, 9600, 19200, 38400, 57600, 115200, 230400, 460800, 921600] as const;
/** The line speed PROTOCOL.md gives for the instrument; the screen offers it first. */
export const DEFAULT_BAUD = 115200;

// ---------------------------------------------------------------- sources

export const SourceChoiceSchema = z.discriminatedUnion('kind', [
  z.object({
    kind: z.literal('simulated'),
    /** Simulated seconds per real second. */
    speed: z.number().min(0.1).max(10_000).optional(),
    seed: z.number().int().min(0).max(2 ** 32 - 1).optional(),
  }).strict(),
  z.object({
    kind: z.literal('serial'),
    path: z.string().min(1).max(LIMITS.maxPath),
    baud: z.union(BAUD_RATES.map((b) => z.literal(b)) as [z.ZodLiteral<number>, ...z.ZodLiteral<number>[]]),
  }).strict(),
  z.object({
    kind: z.literal('replay'),
    /** A record in the runs folder, by file name only (no folders: the service resolves it). */
    file: z.string().min(1).max(LIMITS.maxFileName).regex(/^[^/\\]+$/, 'a file name without folders')
      .refine((s) => s !== '.' && s !== '..', 'a file name without folders'),
    speed: z.union([z.number().min(1).max(100), z.literal('max')]).optional(),
  }).strict(),
]);
export type SourceChoice = z.infer<typeof SourceChoiceSchema>;

// Reject reasons and source status are declared once, in acquisition/sources/sourceStatus.ts;
// here they get the contract's size caps.
export { RejectReasonSchema, type RejectCounts, type RejectReason, type SourceStatus } from '../../acquisition/sources/sourceStatus';
export const RejectCountsSchema = z.record(RejectReasonSchema, nonNegInt);
export const SourceStatusSchema = sourceStatusSchema(shortText, z.string().max(LIMITS.maxNote));

// ---------------------------------------------------------------- run details

export const ConcentrationSchema = z.object({
  name: z.string().min(1).max(80),
  value: z.number().min(0),
  unit: z.string().max(20),
}).strict();

export const SampleDetailsSchema = z.object({
  sample: shortText.optional(),
  operator: shortText.optional(),
  temperature_C: z.number().min(-50).max(200).nullable().optional(),
  concentrations: z.array(ConcentrationSchema).max(LIMITS.maxConcentrations).optional(),
  /** Optical path length of the cell, cm (1.00 for the usual cuvette). */
  path_cm: z.number().gt(0).max(100).nullable().optional(),
  pH: z.number().min(-2).max(16).nullable().optional(),
  buffer: shortText.optional(),
  /** Volumes mixed into the cell, mL, by what they are. */
  volumes: z.array(z.object({ name: z.string().min(1).max(80), value_mL: z.number().gt(0).max(1e4) }).strict()).max(LIMITS.maxConcentrations).optional(),
  notes: z.string().max(LIMITS.maxNote).optional(),
}).strict();
export type SampleDetails = z.infer<typeof SampleDetailsSchema>;

export const FitWindowSchema = z.object({
  from_s: z.number().min(0).nullable(),
  to_s: z.number().min(0).nullable(),
}).strict().refine((w) => w.from_s === null || w.to_s === null || w.from_s < w.to_s, {
  message: 'the fit window must start before it ends',
});
export type FitWindow = z.infer<typeof FitWindowSchema>;

export const AnalysisOptionsSchema = z.object({
  targetHalfLives: z.number().min(0.5).max(10).optional(),
  precision: z.number().min(0.001).max(0.5).optional(),
  weighted: z.boolean().optional(),
  robust: z.boolean().optional(),
}).strict();
export type AnalysisOptionsView = z.infer<typeof AnalysisOptionsSchema>;

// ---------------------------------------------------------------- requests

export const RequestSchema = z.discriminatedUnion('type', [
  z.object({ type: z.literal('getState') }).strict(),
  z.object({ type: z.literal('listPorts') }).strict(),
  z.object({ type: z.literal('listRecords') }).strict(),
  /** The run library: every record in the runs folder with its sample, conditions, k and verdict. */
  z.object({ type: z.literal('listLibrary') }).strict(),
  /**
   * A study of records in the runs folder, combined exactly as `rateline combine` does: the
   * rate law in the excess reagent, or the Arrhenius and Eyring lines; saved as a study file
   * in the runs folder when `saveAs` is given.
   */
  z.object({
    type: z.literal('combineRuns'),
    files: z.array(z.string().min(1).max(LIMITS.maxFileName)).min(2).max(100),
    by: z.enum(['concentration', 'temperature']),
    reagent: z.string().min(1).max(80).optional(),
    followed: z.string().min(1).max(80).optional(),
    predictAt_C: z.number().min(-50).max(200).optional(),
    saveAs: z.object({ name: z.string().regex(/^[\w.-]{1,80}$/, 'letters, digits, dot, dash or underscore'), safetyNote: z.string().min(1).max(LIMITS.maxNote) }).strict().optional(),
  }).strict(),
  z.object({ type: z.literal('chooseSource'), source: SourceChoiceSchema }).strict(),
  z.object({ type: z.literal('connect') }).strict(),
  z.object({ type: z.literal('disconnect') }).strict(),
  z.object({ type: z.literal('takeBlank') }).strict(),
  /** Ask the connected instrument for one spectrum of the sample and find its absorbance maximum. */
  z.object({ type: z.literal('findPeak') }).strict(),
  z.object({ type: z.literal('setWavelength'), wavelength_nm: z.number().min(190).max(1100) }).strict(),
  z.object({ type: z.literal('start') }).strict(),
  z.object({ type: z.literal('stop') }).strict(),
  z.object({ type: z.literal('markEvent'), note: z.string().max(LIMITS.maxNote) }).strict(),
  /** Time zero now: the moment the reagents were mixed. */
  z.object({ type: z.literal('mixed') }).strict(),
  z.object({ type: z.literal('setSampleDetails'), details: SampleDetailsSchema }).strict(),
  z.object({ type: z.literal('setFitWindow'), window: FitWindowSchema }).strict(),
  z.object({ type: z.literal('setAnalysisOptions'), options: AnalysisOptionsSchema }).strict(),
  /** Electron: a native open dialog; the chosen record becomes the replay source. Web host: not offered. */
  z.object({ type: z.literal('openRecord') }).strict(),
  /** Electron: a native save dialog. Web host: written into the runs folder's exports/. */
  z.object({ type: z.literal('saveExport'), format: z.enum(['csv']) }).strict(),
]);
export type BridgeRequest = z.infer<typeof RequestSchema>;
export type RequestType = BridgeRequest['type'];
export type RequestOf<T extends RequestType> = Extract<BridgeRequest, { type: T }>;

// ---------------------------------------------------------------- analysis result (declared once, in kinetics/analysisSchema.ts)

export { AnalysisResultSchema };
const nullableNum = z.number().nullable();
export type AnalysisResultView = z.infer<typeof AnalysisResultSchema>;

// ---------------------------------------------------------------- state and events

export const PhaseSchema = z.enum(['idle', 'connecting', 'connected', 'running', 'stopped', 'error']);
export type BenchPhase = z.infer<typeof PhaseSchema>;

export const BenchStateSchema = z.object({
  contractVersion: z.literal(CONTRACT_VERSION),
  host: z.enum(['electron', 'web']),
  phase: PhaseSchema,
  source: SourceChoiceSchema,
  /** Plain label for the source, e.g. "simulated instrument (demo data), 50× speed". */
  sourceLabel: shortText,
  /** The simulated instrument plays invented demo data: the screen labels it so. */
  demo: z.boolean(),
  sourceStatus: SourceStatusSchema.nullable(),
  wavelength_nm: z.number().nullable(),
  blankTaken: z.boolean(),
  /** Identifies the current run; readings and results carry it, a new run starts a new one. */
  runId: z.string().max(64).nullable(),
  pointCount: nonNegInt,
  timeZero_s: z.number().nullable(),
  sampleDetails: SampleDetailsSchema,
  fitWindow: z.object({ from_s: nullableNum, to_s: nullableNum }),
  analysisOptions: z.object({
    targetHalfLives: finite, precision: finite, weighted: z.boolean(), robust: z.boolean(),
  }),
  recordPath: z.string().max(LIMITS.maxPath).nullable(),
  dataDir: z.string().max(LIMITS.maxPath),
  rejected: RejectCountsSchema,
  /** Readings per second over the last few seconds (host clock), null before two readings. */
  readingRate_perSecond: z.number().nullable(),
});
export type BenchState = z.infer<typeof BenchStateSchema>;

export const ReadingsBatchSchema = z.object({
  type: z.literal('readings'),
  runId: z.string().max(64),
  /** Index (in run order) of the first reading in this batch. */
  fromIndex: nonNegInt,
  time_s: z.array(finite).max(LIMITS.maxBatchPoints),
  absorbance: z.array(finite).max(LIMITS.maxBatchPoints),
  /** Bit set per reading (see ReadingFlag in acquisition/sources/sourceTypes.ts). */
  flags: z.array(nonNegInt).max(LIMITS.maxBatchPoints),
}).refine((b) => b.time_s.length === b.absorbance.length && b.flags.length === b.time_s.length, {
  message: 'readings batch arrays must have one length',
});
export type ReadingsBatch = z.infer<typeof ReadingsBatchSchema>;

export const EventSchema = z.union([
  z.object({ type: z.literal('state'), state: BenchStateSchema }),
  ReadingsBatchSchema,
  z.object({ type: z.literal('analysis'), runId: z.string().max(64), atCount: nonNegInt, result: AnalysisResultSchema }),
  z.object({ type: z.literal('sourceStatus'), status: SourceStatusSchema }),
  z.object({
    type: z.literal('rejected'), counts: RejectCountsSchema, reason: RejectReasonSchema,
    /** The start of the rejected line, printable characters only. */
    line: z.string().max(120),
  }),
  z.object({ type: z.literal('warning'), message: z.string().max(LIMITS.maxNote), at: z.string().max(40) }),
  z.object({ type: z.literal('record'), path: z.string().max(LIMITS.maxPath), status: z.enum(['open', 'closed']) }),
]);
export type BridgeEvent = z.infer<typeof EventSchema>;
export type EventType = BridgeEvent['type'];

// ---------------------------------------------------------------- replies

export const PortInfoSchema = z.object({
  path: z.string().max(LIMITS.maxPath),
  manufacturer: shortText.nullable(),
  serialNumber: shortText.nullable(),
});
export const RecordInfoSchema = z.object({
  name: z.string().max(LIMITS.maxFileName),
  size_bytes: nonNegInt,
  modified: z.string().max(40),
});

export const LibraryEntrySchema = RecordInfoSchema.extend({
  sha256: z.string().max(64),
  started: z.string().max(40).nullable(),
  sample: shortText.nullable(),
  operator: shortText.nullable(),
  temperature_C: z.number().nullable(),
  conditions: z.string().max(LIMITS.maxNote),
  demo: z.boolean(),
  readings: nonNegInt,
  k: z.number().nullable(),
  kCI95: z.tuple([z.number(), z.number()]).nullable(),
  kUnit: z.string().max(40).nullable(),
  verdict: z.string().max(40).nullable(),
  notice: z.string().max(LIMITS.maxNote).nullable(),
  problem: z.string().max(LIMITS.maxNote).nullable(),
});
export type LibraryEntryView = z.infer<typeof LibraryEntrySchema>;

/** A spectrum of the sample and its absorbance maximum, offered as the measuring wavelength. */
export const PeakOfferSchema = z.object({
  /** Device time of the frame (s). */
  deviceTime_s: finite,
  wavelengths_nm: z.array(finite).max(LIMITS.maxSpectrumPoints),
  /** Absorbance at each wavelength; null where none could be had (an opaque pixel of a counts frame). */
  absorbance: z.array(finite.nullable()).max(LIMITS.maxSpectrumPoints),
  /** The maximum found; null when none is worth offering. */
  peak: z.object({
    wavelength_nm: finite, absorbance: finite, pixel_nm: finite,
    method: z.enum(['fit', 'threePoint', 'pixel']), points: nonNegInt, atEdge: z.boolean(),
  }).nullable(),
  /** The wavelength offered (0.1 nm, the step the instrument is set in), or null when none is offered. */
  suggested_nm: z.number().min(190).max(1100).nullable(),
  /** The one sentence the screen shows, e.g. "Absorbance maximum at 629.6 nm (from the spectrum of the sample); use it?". */
  sentence: z.string().max(LIMITS.maxNote),
  /** A caution beside it (a weak band), or null. */
  caution: z.string().max(LIMITS.maxNote).nullable(),
  /** The frame went into the run record (a run was going). */
  recorded: z.boolean(),
}).refine((o) => o.wavelengths_nm.length === o.absorbance.length, { message: 'spectrum arrays must have one length' });
export type PeakOffer = z.infer<typeof PeakOfferSchema>;

/** What each request answers with when it succeeds. */
export const ReplyValueSchemas = {
  getState: BenchStateSchema,
  listPorts: z.object({ ports: z.array(PortInfoSchema).max(LIMITS.maxPorts) }),
  listRecords: z.object({ records: z.array(RecordInfoSchema).max(LIMITS.maxRecords) }),
  combineRuns: z.object({
    /** The command's report, as `rateline combine` prints it. */
    text: z.string().max(200_000),
    /** The notes and warnings it writes beside the report. */
    notes: z.array(z.string().max(2000)).max(200),
    /** The command's JSON (`--format json`): runs, rate law or Arrhenius and Eyring, warnings. */
    result: z.record(z.string(), z.unknown()),
  }),
  listLibrary: z.object({ entries: z.array(LibraryEntrySchema).max(LIMITS.maxRecords), fromCache: nonNegInt }),
  chooseSource: BenchStateSchema,
  connect: BenchStateSchema,
  disconnect: BenchStateSchema,
  takeBlank: BenchStateSchema,
  findPeak: PeakOfferSchema,
  setWavelength: BenchStateSchema,
  start: BenchStateSchema,
  stop: BenchStateSchema,
  markEvent: z.object({ at_s: z.number().nullable() }),
  mixed: BenchStateSchema,
  setSampleDetails: BenchStateSchema,
  setFitWindow: BenchStateSchema,
  setAnalysisOptions: BenchStateSchema,
  /** null path: the dialog was cancelled. */
  openRecord: z.object({ path: z.string().max(LIMITS.maxPath).nullable(), state: BenchStateSchema }),
  saveExport: z.object({ path: z.string().max(LIMITS.maxPath).nullable() }),
} as const satisfies Record<RequestType, z.ZodType>;

export type ReplyValue<T extends RequestType> = z.infer<(typeof ReplyValueSchemas)[T]>;
/** Errors are values with one plain sentence (what, where, what to do). */
export type Reply<T extends RequestType> = { ok: true; value: ReplyValue<T> } | { ok: false; error: string };
export type AnyReply = { ok: true; value: unknown } | { ok: false; error: string };

// ---------------------------------------------------------------- the socket's framing (web host)

export const ClientMessageSchema = z.object({
  kind: z.literal('request'),
  id: z.number().int().min(0).max(Number.MAX_SAFE_INTEGER),
  request: z.unknown(),
}).strict();
export type ClientMessage = { kind: 'request'; id: number; request: BridgeRequest };
/** The socket's first message, before any request: the token (web host only). */
export const HelloMessageSchema = z.object({ kind: z.literal('hello'), token: z.string().max(LIMITS.maxShortText) }).strict();
export type HelloMessage = z.infer<typeof HelloMessageSchema>;
export type ServerMessage =
  | { kind: 'welcome' }
  | { kind: 'reply'; id: number | null; reply: AnyReply }
  | { kind: 'event'; event: BridgeEvent };

// ---------------------------------------------------------------- what the screen sees

/** The bridge as the screen sees it, whichever host carries it (window.rateline in Electron). */
export interface RatelineBridge {
  request<T extends RequestType>(request: RequestOf<T>): Promise<Reply<T>>;
  /** Subscribe to pushed events; returns the unsubscribe function. */
  onEvent(listener: (event: BridgeEvent) => void): () => void;
}

const KNOWN_TYPES: ReadonlySet<string> = new Set(RequestSchema.options.map((o) => o.shape.type.value));

/** Parse a request from the screen; an error is one line naming the field at fault. */
export function parseRequest(input: unknown): { ok: true; request: BridgeRequest } | { ok: false; error: string } {
  const parsed = RequestSchema.safeParse(input);
  if (parsed.success) return { ok: true, request: parsed.data };
  const type = typeof input === 'object' && input !== null ? (input as { type?: unknown }).type : undefined;
  if (typeof type === 'string' && !KNOWN_TYPES.has(type)) {
    return { ok: false, error: `request refused: the request type "${type.slice(0, 40)}" is unknown to this bench service; update the screen and the service together.` };
  }
  return { ok: false, error: `request refused: ${describeIssue(parsed.error)}` };
}

/** What a field of a request is, in the words the screen uses for it. */
const FIELD_WORDS: Record<string, string> = {
  'options.targetHalfLives': 'the target (half-lives)',
  'options.precision': 'the precision of k (a fraction, 0.05 for ±5 %)',
  'window.from_s': 'the start of the fit window (s)',
  'window.to_s': 'the end of the fit window (s)',
  wavelength_nm: 'the wavelength (nm)',
  'details.temperature_C': 'the temperature (°C)',
  'details.path_cm': 'the path length (cm)',
  'details.pH': 'the pH',
  'source.speed': 'the speed',
  'source.baud': 'the baud rate',
  'source.path': 'the serial port',
  'source.file': 'the recorded run (file name)',
  note: 'the note',
};

/** A request's first fault as one sentence: which field, what is wrong with it, what to do. */
export function describeIssue(error: z.ZodError): string {
  const issue = error.issues[0];
  if (!issue) return 'the request could not be read; reload the page.';
  const key = issue.path.map(String).join('.');
  const generic = key.replace(/\.\d+(?=\.|$)/g, '');
  const what = FIELD_WORDS[key] ?? FIELD_WORDS[generic] ?? (key ? key.split('.').pop()!.replace(/_/g, ' ') : 'the request');
  const i = issue as { code: string; minimum?: number | bigint; maximum?: number | bigint; inclusive?: boolean; expected?: string };
  let fault: string;
  if (i.code === 'too_small' && i.minimum !== undefined) fault = `must be ${i.inclusive === false ? 'more than' : 'at least'} ${String(i.minimum)}`;
  else if (i.code === 'too_big' && i.maximum !== undefined) fault = `must be ${i.inclusive === false ? 'less than' : 'at most'} ${String(i.maximum)}`;
  else if (i.code === 'invalid_type') fault = `must be ${i.expected === 'number' ? 'a number' : i.expected === 'string' ? 'text' : `a ${i.expected ?? 'value'}`}`;
  else fault = `is not accepted (${issue.message.toLowerCase()})`;
  return `${what} ${fault}; correct it and try again.`.slice(0, 300);
}
