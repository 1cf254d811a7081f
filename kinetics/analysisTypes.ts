/**
 * The streaming engine's types. The result's shape is declared once, as the zod schema
 * in analysisSchema.ts; its types are inferred from it here. The options are the
 * analyzer's own (they never cross the bridge as they are).
 */
import type { z } from 'zod';
import type {
  AdviceStateSchema, AnalysisResultSchema, InitialRateSchema, IntegerOrderSchema, LeftOutSchema, ModelNameSchema,
  ModelSummarySchema, NthOrderSummarySchema, StopAdviceSchema, UnitsSchema, VerdictOrderSchema, VerdictSchema,
} from './analysisSchema';

export type IntegerOrder = z.infer<typeof IntegerOrderSchema>;
export type ModelName = z.infer<typeof ModelNameSchema>;
export type VerdictOrder = z.infer<typeof VerdictOrderSchema>;
export type ModelSummary = z.infer<typeof ModelSummarySchema>;
export type NthOrderSummary = z.infer<typeof NthOrderSummarySchema>;
export type Verdict = z.infer<typeof VerdictSchema>;
export type AdviceState = z.infer<typeof AdviceStateSchema>;
export type StopAdvice = z.infer<typeof StopAdviceSchema>;
export type AnalysisUnits = z.infer<typeof UnitsSchema>;
export type LeftOutCounts = z.infer<typeof LeftOutSchema>;
export type InitialRate = z.infer<typeof InitialRateSchema>;
export type AnalysisResult = z.infer<typeof AnalysisResultSchema>;

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
  /** How far the blank may plausibly be off, AU (default 0.05; see endValueBounds.ts). */
  blankAllowance_AU?: number;
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
  /** One reading; `saturated` when the instrument flagged it (it is then left out and counted). */
  add(time_s: number, absorbance: number, saturated?: boolean): void;
  /** The last refit's report (refits come on a schedule set by the reading count). */
  result(): AnalysisResult;
  /** Refit now if readings came in since the last refit (at the end of a run or a feed). */
  flush?(): AnalysisResult;
  readonly count: number;
}
