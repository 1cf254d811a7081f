/**
 * What the streaming engine reports. This is the one contract the command, the
 * bench service and the screens all read; the JSON output of `rateline analyze`
 * is this object with the file and the calibration used beside it (a value that
 * cannot be had is null, never left out).
 */

export type IntegerOrder = 'zero' | 'first' | 'second';
export type ModelName = IntegerOrder | 'nth';
export type VerdictOrder = IntegerOrder | 'undecided';

export interface ModelSummary {
  /** Rate constant in `units.k[model]`; null when the fit is not available yet. */
  k: number | null;
  kStdErr: number | null;
  kCI95: [number, number] | null;
  /** Signal at time zero of the fit window (absorbance, or concentration when calibrated). */
  a0: number | null;
  a0StdErr: number | null;
  /** End signal A∞ (fixed or fitted). */
  aInf: number | null;
  aInfStdErr: number | null;
  aInfFixed: boolean;
  halfLife_s: number | null;
  halfLifeStdErr_s: number | null;
  aicc: number | null;
  rss: number | null;
  chiSquare: number | null;
  dof: number | null;
  /** Wald–Wolfowitz runs test on the residual signs: two-sided p-value. */
  runsTestP: number | null;
  converged: boolean;
  warnings: string[];
}

export interface NthOrderSummary extends ModelSummary {
  order: number | null;
  orderStdErr: number | null;
}

export interface Verdict {
  order: VerdictOrder;
  /** Akaike weights of the integer orders (sum 1), null before any fit. */
  weights: { zero: number | null; first: number | null; second: number | null };
  /** Plain-language reason for the verdict, or for staying undecided. */
  reason: string;
}

export type AdviceState = 'gathering' | 'estimating' | 'settled' | 'farEnough';

export interface StopAdvice {
  state: AdviceState;
  /** Stop suggested at this point (settled and the target reached). */
  suggested: boolean;
  /** Time of the first point at which the stop suggestion held during the feed, or null. */
  atTime_s: number | null;
  /** Predicted time at which the target fraction converted is reached, with its standard error. */
  predictedAt_s: number | null;
  predictedAtStdErr_s: number | null;
  /** Settled and the order decided before the target: an early stop is the user's choice. */
  earlyStopPossible: boolean;
  /** Relative 95% CI half-width of k now, and as predicted at the target (what stopping now costs). */
  kRelCI95Now: number | null;
  kRelCI95AtTarget: number | null;
  reason: string;
}

export interface AnalysisUnits {
  time: 's';
  signal: string;
  k: { zero: string; first: string; second: string; nth: string };
}

export interface AnalysisResult {
  points: number;
  /** Last time minus first time of all points fed (not only the window). */
  duration_s: number;
  /** Points inside the fit window. */
  pointsInWindow: number;
  window: { from_s: number | null; to_s: number | null };
  verdict: Verdict;
  models: { zero: ModelSummary; first: ModelSummary; second: ModelSummary; nth: NthOrderSummary };
  /** The model that drives progress and advice: the verdict's, or first order while undecided. */
  drivingModel: IntegerOrder;
  /** −log2(1 − f) for the fraction converted so far under the driving model. */
  halfLivesElapsed: number | null;
  fractionConverted: number | null;
  targetHalfLives: number;
  stop: StopAdvice;
  /** 0-based indices (in feed order) of points the robust fit down-weighted. */
  outliers: number[];
  units: AnalysisUnits;
  /** Run-level warnings in plain language (signal faded into the noise, nothing reacting, ...). */
  warnings: string[];
  /** The CI covers measurement noise only, not systematic error (temperature, mixing, calibration). */
  uncertaintyNote: string;
}

export interface AnalyzerOptions {
  /** Target in half-lives: fraction converted f = 1 − 2^(−N). Default 3. */
  targetHalfLives?: number;
  /** Settled when the 95% CI half-width of k is within this fraction of k. Default 0.05. */
  precision?: number;
  /** Fit window by time (s); data outside are kept but not fitted. */
  from_s?: number;
  to_s?: number;
  /** Weighted least squares from the absorbance noise model (default true). */
  weighted?: boolean;
  /** Transmittance noise σ_T of the instrument, for the weights. Default 0.001. */
  sigmaT?: number;
  /** Robust fitting against spikes (default true). */
  robust?: boolean;
  /** A∞ held at this value instead of fitted (first, second and n-th order); zero order uses it too. */
  fixedAInf?: number;
  /**
   * Signal label and unit when the data are concentrations (from a calibration); absorbance
   * otherwise. `absorbance` gives the line back to absorbance, A = slope · y + intercept, so
   * the absorbance noise model can still weigh the readings (weighted by default then).
   */
  signal?: { name: string; unit: string; absorbance?: { slope: number; intercept: number } };
}

/** The streaming analyzer's public face. */
export interface RunAnalyzerLike {
  add(time_s: number, absorbance: number): void;
  /** The last refit's report (refits come on a schedule set by the reading count). */
  result(): AnalysisResult;
  /** Refit now if readings came in since the last refit (at the end of a run or a feed). */
  flush?(): AnalysisResult;
  readonly count: number;
}
