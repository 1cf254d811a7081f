/**
 * Where the end value A∞ of a run may lie, from the physics of the measurement rather
 * than from the run's own size.
 *
 * - Below: the blank. A solution cannot absorb less than the blank it was zeroed on, so
 *   A∞ < 0 AU means the blank was off: a cuvette that is not the one the blank was read
 *   in, a lamp that drifted, a smear. Matched cuvettes agree to within a few hundredths
 *   of an AU, an unmatched one or a drifting lamp can be 0.05 AU out (common practice),
 *   so the floor is the blank, or the lowest reading where that lies lower, less
 *   BLANK_ALLOWANCE_AU and five standard deviations of the noise at the blank.
 * - Above: what the photometer can read. A product-forming run rises towards its end
 *   value, and a bench photometer reads at most about 4–5 AU (T = 10⁻⁵ is at the edge of
 *   its stray light, common practice), so A∞ stays below ABSORBANCE_CEILING_AU, or just
 *   above the highest reading where that lies higher.
 * A calibrated signal takes the same bounds mapped through its line, y = (A − a)/slope,
 * so the fit in concentration is the absorbance fit in other units.
 */
import { absorbanceSigma } from './reactionModel';

export const BLANK_ALLOWANCE_AU = 0.05;
export const ABSORBANCE_CEILING_AU = 5;
/** Readings outside this range are not absorbances any photometer gives (a wrong unit, a parser fault). */
export const READABLE_RANGE_AU: readonly [number, number] = [-1, 10];

export interface SignalLine { slope: number; intercept: number }

export interface EndValueBounds {
  /** In signal units (AU, or concentration through the line). */
  aInfMin: number;
  aInfMax: number;
  /** The signal that reads as the blank, A = 0. */
  blank: number;
}

/** Signal y for an absorbance A: A itself, or (A − a)/slope through a calibration line. */
export function signalOf(absorbance_AU: number, line?: SignalLine): number {
  return line ? (absorbance_AU - line.intercept) / line.slope : absorbance_AU;
}

/** Absorbance A for a signal y: y itself, or slope · y + a. */
export function absorbanceOf(signal: number, line?: SignalLine): number {
  return line ? line.slope * signal + line.intercept : signal;
}

export function endValueBounds(o: {
  lowest_AU: number; highest_AU: number; sigmaT: number; line?: SignalLine; blankAllowance_AU?: number;
}): EndValueBounds {
  const allowance = o.blankAllowance_AU ?? BLANK_ALLOWANCE_AU;
  const low = Math.min(0, o.lowest_AU) - allowance - 5 * absorbanceSigma(0, o.sigmaT);
  const high = Math.max(ABSORBANCE_CEILING_AU, o.highest_AU + allowance);
  const a = signalOf(low, o.line), b = signalOf(high, o.line);
  return { aInfMin: Math.min(a, b), aInfMax: Math.max(a, b), blank: signalOf(0, o.line) };
}
