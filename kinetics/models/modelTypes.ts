/**
 * What the rate-law models share: the series they are fitted to and the fit they
 * return. The models know nothing of streaming: a series is a list of weighted
 * points, some of which may stand for a bin of many readings (see readingBins.ts).
 */
import type { ModelName } from '../analysisTypes';

/** Parameter order used by every rate-law model (n-th order adds the order n). */
export const K = 0, A0 = 1, AINF = 2, ORDER = 3;

/**
 * Points to fit. Time is measured from the start of the fit window (τ, s).
 * A point may stand for a bin: `y` is then the weighted mean signal, `w` the sum of
 * the weights and `v` the weighted variance of the times inside the bin (0 for a
 * single reading), so that models can correct the mean for curvature:
 * mean of f over the bin ≈ f(τ̄) + ½ f''(τ̄) v.
 */
export interface FitSeries {
  tau_s: Float64Array;
  y: Float64Array;
  w: Float64Array;
  v: Float64Array;
  /** Readings each point stands for (1 for a single reading). */
  n: Float64Array;
  /** Number of (pseudo-)points in use. */
  count: number;
  /** Readings they stand for. */
  readings: number;
  /** Σ over bins of the weighted scatter about each bin's own straight line (model-free part of χ²). */
  withinChiSquare: number;
  /** The same, unweighted (part of the residual sum of squares). */
  withinRss: number;
  /** Bins of two or more readings: each costs one degree of freedom (its slope is not used). */
  multiBins: number;
}

export interface ModelOptions {
  /** A∞ held at this value (first, second, n-th order; zero order uses it as its end value). */
  fixedAInf?: number;
  /** Lowest physical A∞: the blank less what a blank can plausibly be off by (see endValueBounds.ts). */
  aInfMin: number;
  /** Highest physical A∞: what the photometer can still read (a product-forming run rises towards it). */
  aInfMax?: number;
  /**
   * +1 for a falling run (the followed species is used up, A0 above A∞), −1 for a rising
   * one (a product that absorbs forms, A∞ above A0). Default +1.
   */
  direction?: 1 | -1;
  /** The signal that reads as the blank (0 AU, or the concentration of A = 0 through a calibration line). */
  blank?: number;
  /** Warm start: parameters of the previous fit of this model. */
  previous?: Float64Array;
}

/** Which bound the end value A∞ sits on, if any (never when the user fixed it). */
export type BoundSide = 'lower' | 'upper' | null;

/** A fit that could not be had: which model, one reason, and what was said on the way. */
export interface FailedModelFit {
  model: ModelName;
  ok: false;
  reason: string;
  warnings: string[];
}

export type ModelFit = FittedModel | FailedModelFit;

export interface FittedModel {
  model: ModelName;
  ok: true;
  /** k, a0, aInf (and n for n-th order). */
  params: Float64Array;
  /** Which parameters were fitted (a parameter left on a bound counts as held). */
  free: boolean[];
  /** Full covariance (rows/columns of held parameters are zero), scaled by the reduced χ². */
  covariance: Float64Array;
  /** Weighted χ² over all readings (pseudo-points plus the within-bin part). */
  chiSquare: number;
  rss: number;
  dof: number;
  aicc: number;
  /** Weighted residual of each pseudo-point, (y − f)·√w, in time order. */
  residuals: Float64Array;
  converged: boolean;
  /** A∞ came to rest on one of its physical bounds (see ModelOptions). */
  aInfAtBound: BoundSide;
  warnings: string[];
}

/** The shape of an integrated rate law, for the fit, the bins and the stop advice. */
export interface RateLaw {
  name: ModelName;
  parameterNames: string[];
  value(tau_s: number, p: Float64Array): number;
  /** ∂f/∂p_j for every parameter. */
  gradient(tau_s: number, p: Float64Array, out: Float64Array): void;
  /** f''(τ), for the bin-mean correction. */
  curvature(tau_s: number, p: Float64Array): number;
  /** Mean of f over a bin with mean time τ̄ and time variance v, where f has a kink the curvature term cannot carry. */
  binAverage?(tau_s: number, v: number, p: Float64Array): number;
}
