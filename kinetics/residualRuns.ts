/**
 * The order verdict's runs test: the Wald–Wolfowitz test of kinetics/fit/runsTest.ts
 * on the signs of the weighted residuals in time order (a model of the wrong shape
 * leaves long stretches of one sign), with one extra rule for the verdict: with fewer
 * than about 10 signs on either side the normal approximation is not trusted
 * (common practice), so the test gives no answer rather than a rough one.
 */
import { runsTest } from './fit/runsTest';

export const RUNS_MIN_SIGNS = 10;

/** Two-sided p of the runs test, or null when there are too few signs to trust it. */
export function residualRunsP(residuals: Float64Array, count = residuals.length): number | null {
  const t = runsTest(residuals, count);
  if (t.positives < RUNS_MIN_SIGNS || t.negatives < RUNS_MIN_SIGNS) return null;
  return t.p;
}
