/**
 * Wald–Wolfowitz runs test on the signs of residuals: too few runs (long stretches
 * of one sign) say the model curves differently from the data, a systematic misfit
 * that χ² alone does not show.
 *
 * With n₁ positive and n₂ negative residuals (exact zeros are dropped: they carry
 * no sign) and R runs, under randomness
 *   μ_R = 2n₁n₂/(n₁ + n₂) + 1,
 *   σ²_R = 2n₁n₂(2n₁n₂ − n₁ − n₂) / ((n₁ + n₂)²(n₁ + n₂ − 1)),
 * the formula the NIST/SEMATECH e-Handbook of Statistical Methods gives. The
 * two-sided p uses the normal approximation with a continuity correction of ½
 * toward μ: z = (|R − μ| − ½)/σ, floored at 0, p = P(|Z| > z).
 */
import { normalTwoSidedP } from './studentT';

export interface RunsTestResult {
  runs: number;
  positives: number;
  negatives: number;
  expectedRuns: number | null;
  sdRuns: number | null;
  /** Signed: negative when there are fewer runs than expected (systematic misfit). */
  z: number | null;
  /** Two-sided p-value; null (with a warning) when there are too few signs. */
  p: number | null;
  warnings: string[];
}

/** Runs test on r[0 .. count−1]. */
export function runsTest(r: ArrayLike<number>, count: number = r.length): RunsTestResult {
  let positives = 0;
  let negatives = 0;
  let runs = 0;
  let last = 0;
  const warnings: string[] = [];
  let skipped = 0;
  for (let i = 0; i < count; i++) {
    const v = r[i]!;
    if (!Number.isFinite(v)) {
      skipped++;
      continue;
    }
    const s = v > 0 ? 1 : v < 0 ? -1 : 0;
    if (s === 0) continue;
    if (s > 0) positives++;
    else negatives++;
    if (s !== last) runs++;
    last = s;
  }
  if (skipped > 0) warnings.push(`${skipped} non-finite residual(s) were left out of the runs test.`);
  const n = positives + negatives;
  if (positives === 0 || negatives === 0 || n < 3) {
    warnings.push('runs test needs residuals of both signs (at least 3 in all); it is not available.');
    return { runs, positives, negatives, expectedRuns: null, sdRuns: null, z: null, p: null, warnings };
  }
  const prod = 2 * positives * negatives;
  const expectedRuns = prod / n + 1;
  const variance = (prod * (prod - n)) / (n * n * (n - 1));
  const sdRuns = Math.sqrt(variance);
  if (!(sdRuns > 0)) {
    warnings.push('runs test has no spread with these counts; it is not available.');
    return { runs, positives, negatives, expectedRuns, sdRuns, z: null, p: null, warnings };
  }
  const d = runs - expectedRuns;
  const corrected = Math.max(0, Math.abs(d) - 0.5);
  const z = (Math.sign(d) * corrected) / sdRuns;
  const p = Math.min(1, normalTwoSidedP(corrected / sdRuns));
  if (positives < 10 || negatives < 10) warnings.push('fewer than 10 residuals of one sign: the normal approximation of the runs test is rough.');
  return { runs, positives, negatives, expectedRuns, sdRuns, z, p, warnings };
}
