/**
 * The contract of the general fitting core. The core knows nothing of chemistry:
 * it fits y = f(x; p) by (weighted, optionally robust) nonlinear least squares.
 */

/** One named parameter of a model, as the caller sets it up. */
export interface ParameterSpec {
  name: string;
  /** Starting value (or the value held, when fixed). */
  value: number;
  /** Held at `value`, not fitted. */
  fixed?: boolean;
  /** Inclusive bounds; omitted means unbounded on that side. */
  min?: number;
  max?: number;
}

export type RobustLoss = 'none' | 'huber' | 'tukey';

export interface FitOptions {
  maxIterations?: number;
  /** Relative change in chi-square (and in parameters) that counts as converged. */
  tolerance?: number;
  /** Robust re-weighting so a single spike cannot bias the fit; down-weighted points are reported. */
  robust?: RobustLoss;
  /** Tuning constant in units of the (weighted) residual scale; the usual default per loss when omitted. */
  robustTuning?: number;
  /** Confidence level for the intervals; 0.95 by default. */
  confidence?: number;
}

export interface FitProblem {
  parameters: ParameterSpec[];
  x: Float64Array;
  y: Float64Array;
  /** Statistical weights w_i = 1/σ_i²; all 1 (unweighted) when omitted. */
  weights?: Float64Array;
  /** Number of points to use from the start of x/y/weights (arrays may be over-allocated). */
  count?: number;
  /** f(x; p), p in the order of `parameters` (fixed ones included). */
  model: (x: number, p: Float64Array) => number;
  /**
   * Optional analytic derivatives: fills out[j] = ∂f/∂p_j for every parameter
   * (fixed ones may be left 0). Finite differences are used when omitted.
   */
  jacobian?: (x: number, p: Float64Array, out: Float64Array) => void;
  options?: FitOptions;
}

export interface FittedParameter {
  name: string;
  value: number;
  /** Standard error from the covariance matrix scaled by the reduced chi-square (null when fixed or unavailable). */
  stdErr: number | null;
  /** Confidence interval with Student t on `dof` degrees of freedom (null when fixed or unavailable). */
  ci: [number, number] | null;
  fixed: boolean;
  /** The fit ended with this parameter on one of its bounds. */
  atBound: boolean;
}

export interface FitResult {
  ok: boolean;
  parameters: FittedParameter[];
  /** Look-up by name. */
  byName: Record<string, FittedParameter>;
  /**
   * Covariance of the free parameters (row-major, size nFree²), in the order of `freeNames`,
   * (JᵀWJ)⁻¹ · χ²/dof. Null (with a warning) when singular or when dof ≤ 0.
   */
  covariance: Float64Array | null;
  correlation: Float64Array | null;
  freeNames: string[];
  /** Σ w_i r_i² with the final weights (robust weights included). */
  chiSquare: number;
  /** Σ r_i², unweighted. */
  rss: number;
  dof: number;
  /** Residual standard deviation sqrt(chiSquare / dof); null (with a warning) when dof ≤ 0. */
  residualSd: number | null;
  /**
   * AICc from the weighted residuals, n ln(χ²/n) + 2K + 2K(K+1)/(n−K−1) with K = nFree + 1
   * (the +1 counts the residual variance, estimated from the data). Null (with a warning)
   * when n ≤ K + 1 or χ² = 0.
   */
  aicc: number | null;
  n: number;
  iterations: number;
  converged: boolean;
  /** Indices of points the robust loss down-weighted below half weight. */
  outliers: number[];
  warnings: string[];
  /** Residuals y − f(x; p) of the `count` points at the final parameters (0 for points left out). */
  residuals?: Float64Array;
  /** Final robust weight of each point (1 = full weight), null when the fit was not robust. */
  robustWeights?: Float64Array | null;
  /** Confidence level of the intervals. */
  confidence?: number;
}
