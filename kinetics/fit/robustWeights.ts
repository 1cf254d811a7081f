/**
 * Robust weights for iteratively reweighted least squares (IRLS).
 *
 * Residuals are standardized, u_i = √w_i r_i / s, by a robust scale
 * s = 1.4826 · median |√w_i r_i| (the MAD about zero; 1.4826 = 1/Φ⁻¹(0.75) makes it
 * the normal σ — common practice). The weight of a point is ψ(u)/u:
 *   Huber (c = 1.345):  1 for |u| ≤ c, c/|u| beyond;
 *   Tukey biweight (c = 4.685): (1 − (u/c)²)² for |u| < c, 0 beyond.
 * Both tuning constants give 95% efficiency at the normal (common practice).
 */
import type { RobustLoss } from './fitTypes';

export const HUBER_TUNING = 1.345;
export const TUKEY_TUNING = 4.685;
const MAD_TO_SIGMA = 1.4826;

export function defaultTuning(loss: RobustLoss): number {
  return loss === 'tukey' ? TUKEY_TUNING : HUBER_TUNING;
}

/**
 * Robust scale of the weighted residuals √w_i r_i over points with base weight > 0.
 * `scratch` needs n entries. Falls back to the mean absolute residual · √(π/2) when
 * more than half the residuals are exactly zero; 0 means an exact fit.
 */
export function robustScale(r: Float64Array, baseW: Float64Array, n: number, scratch: Float64Array): number {
  let k = 0;
  let sumAbs = 0;
  for (let i = 0; i < n; i++) {
    const w = baseW[i]!;
    if (w === 0) continue;
    const u = Math.abs(r[i]! * Math.sqrt(w));
    scratch[k++] = u;
    sumAbs += u;
  }
  if (k === 0) return 0;
  const s = scratch.subarray(0, k).sort();
  const median = k % 2 === 1 ? s[(k - 1) >> 1]! : 0.5 * (s[k / 2 - 1]! + s[k / 2]!);
  if (median > 0) return MAD_TO_SIGMA * median;
  return (sumAbs / k) * Math.sqrt(Math.PI / 2);
}

/** Robust weight ψ(u)/u of one standardized residual. */
export function robustWeight(u: number, loss: RobustLoss, c: number): number {
  const a = Math.abs(u);
  if (loss === 'huber') return a <= c ? 1 : c / a;
  if (loss === 'tukey') {
    if (a >= c) return 0;
    const t = 1 - (a / c) * (a / c);
    return t * t;
  }
  return 1;
}

/**
 * Fill robustW from the current residuals and return the largest change of any
 * weight (for the IRLS stopping test). Points with base weight 0 keep weight 0.
 */
export function updateRobustWeights(
  r: Float64Array,
  baseW: Float64Array,
  n: number,
  loss: RobustLoss,
  c: number,
  robustW: Float64Array,
  scratch: Float64Array,
): number {
  const s = robustScale(r, baseW, n, scratch);
  let maxChange = 0;
  for (let i = 0; i < n; i++) {
    const w = baseW[i]!;
    const next = w === 0 ? 0 : s > 0 ? robustWeight((r[i]! * Math.sqrt(w)) / s, loss, c) : 1;
    const change = Math.abs(next - robustW[i]!);
    if (change > maxChange) maxChange = change;
    robustW[i] = next;
  }
  return maxChange;
}
