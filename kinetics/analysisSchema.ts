/**
 * What the streaming engine reports, declared once: the zod schema below, with the
 * TypeScript types inferred from it (analysisTypes.ts re-exports them). The command, the
 * bench service, the bridge contract and the screens all read this one shape; the JSON
 * output of `rateline analyze` is this object with the file and the calibration used
 * beside it. A value that cannot be had is null, never left out and never NaN.
 */
import { z } from 'zod';

/** Caps that keep a result a bounded message on the bridge. */
export const RESULT_LIMITS = Object.freeze({ maxWarnings: 200, maxIndices: 1_000_000 });

const num = z.number(); // zod 4 numbers reject NaN and ±Infinity
const nullableNum = num.nullable();
const ci = z.tuple([num, num]).nullable();
const count = z.number().int().min(0);
const warnings = z.array(z.string()).max(RESULT_LIMITS.maxWarnings);

export const IntegerOrderSchema = z.enum(['zero', 'first', 'second']);
export const ModelNameSchema = z.enum(['zero', 'first', 'second', 'nth']);
/**
 * The order verdict: an integer order; `fractional` (the n-th order fit is clearly better
 * than every integer order, its residuals random and n's interval excluding the integer);
 * `noSimpleLaw` (no model leaves random residuals); or `undecided`.
 */
export const VerdictOrderSchema = z.enum(['zero', 'first', 'second', 'fractional', 'noSimpleLaw', 'undecided']);

export const ModelSummarySchema = z.object({
  /** Rate constant in `units.k[model]`; null when the fit is not available. */
  k: nullableNum,
  /** Widened when A∞ sits on a bound (see boundedEnd.ts); null when it cannot be known. */
  kStdErr: nullableNum,
  kCI95: ci,
  /** Signal at time zero of the fit window (absorbance, or concentration when calibrated). */
  a0: nullableNum, a0StdErr: nullableNum,
  /** End signal A∞ (fixed or fitted). */
  aInf: nullableNum, aInfStdErr: nullableNum, aInfFixed: z.boolean(),
  /** A∞ on a physical bound (the blank less its allowance, or the photometer's ceiling). */
  aInfAtBound: z.enum(['lower', 'upper']).nullable(),
  halfLife_s: nullableNum, halfLifeStdErr_s: nullableNum,
  aicc: nullableNum, rss: nullableNum, chiSquare: nullableNum, dof: nullableNum,
  /** Wald–Wolfowitz runs test on the residual signs: two-sided p-value. */
  runsTestP: nullableNum,
  converged: z.boolean(),
  warnings,
});

export const NthOrderSummarySchema = ModelSummarySchema.extend({ order: nullableNum, orderStdErr: nullableNum });

export const VerdictSchema = z.object({
  order: VerdictOrderSchema,
  /** Akaike weights of the integer orders (sum 1), null before any fit. */
  weights: z.object({ zero: nullableNum, first: nullableNum, second: nullableNum }),
  /** The fitted order n when the verdict is `fractional`. */
  fractionalOrder: nullableNum,
  /** Plain-language reason for the verdict, or for staying undecided. */
  reason: z.string(),
  /** With `noSimpleLaw`: what usually bends a run so, in words. Empty otherwise. */
  likelyCauses: z.array(z.string()),
  /** With `noSimpleLaw`: what that does to k. */
  effectOnK: z.string().nullable(),
});

export const AdviceStateSchema = z.enum(['gathering', 'estimating', 'settled', 'farEnough']);

export const StopAdviceSchema = z.object({
  state: AdviceStateSchema,
  /** Stop suggested at this point (settled and the target reached under every plausible order). */
  suggested: z.boolean(),
  /** Time of the first point at which the stop suggestion held during the feed, or null. */
  atTime_s: nullableNum,
  /** Predicted time at which the target fraction converted is reached, with its standard error. */
  predictedAt_s: nullableNum,
  predictedAtStdErr_s: nullableNum,
  /** Settled and the order decided before the target: an early stop is the user's choice. */
  earlyStopPossible: z.boolean(),
  /** Relative 95% CI half-width of k now, and as predicted at the target (what stopping now costs). */
  kRelCI95Now: nullableNum,
  kRelCI95AtTarget: nullableNum,
  /** The models the advice must hold for: the verdict's, or while undecided every order still plausible. */
  plausibleModels: z.array(ModelNameSchema),
  reason: z.string(),
});

export const UnitsSchema = z.object({
  time: z.literal('s'),
  signal: z.string(),
  k: z.object({ zero: z.string(), first: z.string(), second: z.string(), nth: z.string() }),
});

/** Readings the analyzer did not fit, by reason (each also said in `warnings`). */
export const LeftOutSchema = z.object({
  /** Time going backwards. */
  backwards: count,
  /** Not a number. */
  nonFinite: count,
  /** Carrying the instrument's saturated flag, or pinned at a constant ceiling. */
  saturated: count,
  /** Outside what any photometer reads (−1 … 10 AU). */
  outOfRange: count,
});

/** Slope of the first few percent of the change, for an assay read only at low conversion. */
export const InitialRateSchema = z.object({
  /** dA/dt (signal units per second): negative for a falling run, positive for a rising one. */
  slope_perSecond: num,
  slopeStdErr_perSecond: nullableNum,
  slopeCI95_perSecond: ci,
  /** Readings used, and the time after the window start they reach to. */
  readings: count,
  upTo_s: num,
  /** What the slope covers, in words. */
  basis: z.string(),
});

export const AnalysisResultSchema = z.object({
  points: count,
  /** Last time minus first time of all points fed (not only the window). */
  duration_s: num,
  /** Points inside the fit window. */
  pointsInWindow: count,
  window: z.object({ from_s: nullableNum, to_s: nullableNum }),
  verdict: VerdictSchema,
  models: z.object({ zero: ModelSummarySchema, first: ModelSummarySchema, second: ModelSummarySchema, nth: NthOrderSummarySchema }),
  /** The model the curves and progress are shown for: the verdict's, or first order while undecided. */
  drivingModel: ModelNameSchema,
  /** Falling (the followed species is used up) or rising (an absorbing product forms); null before a fit. */
  direction: z.enum(['falling', 'rising']).nullable(),
  /** −log2(1 − f) for the fraction converted so far (the least among the plausible orders); null for a flat run. */
  halfLivesElapsed: nullableNum,
  fractionConverted: nullableNum,
  targetHalfLives: num,
  stop: StopAdviceSchema,
  /** 0-based indices (in feed order) of points the robust fit left out as outliers. */
  outliers: z.array(count).max(RESULT_LIMITS.maxIndices),
  leftOut: LeftOutSchema,
  initialRate: InitialRateSchema.nullable(),
  units: UnitsSchema,
  /** How k is defined: rate = −d[A]/dt = k[A]^n, no stoichiometric factor. */
  rateConvention: z.string(),
  /** Run-level warnings in plain language (signal faded into the noise, nothing reacting, ...). */
  warnings,
  /** The CI covers measurement noise only, not systematic error (temperature, mixing, calibration). */
  uncertaintyNote: z.string(),
});
