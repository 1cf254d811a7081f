/**
 * The rate law from runs at several excess-reagent concentrations. With the reagent B
 * in large excess each run is pseudo-first-order in the dye, k_obs = k [B]^m, so
 * ln k_obs = ln k + m ln [B]: the slope is the order m in B, the intercept gives k
 * (unit M^(−m) s⁻¹). When m is taken as a whole number (most often 1), k follows from
 * the line k_obs = k [B]^m through the origin, which uses every run's weight directly.
 */
import { linearFit } from './fit/linearFit';

export interface RateAtConcentration {
  /** Excess reagent concentration after mixing, mol/L. */
  concentration_M: number;
  /** Observed (pseudo-first-order) rate constant, s⁻¹. */
  kObs_perSecond: number;
  kObsStdErr_perSecond?: number | null;
  label?: string;
}

export interface RateLawResult {
  ok: true;
  /** Order in the excess reagent from the log–log slope. */
  order: number;
  orderStdErr: number | null;
  orderCI95: [number, number] | null;
  /** The nearest whole order, and whether the CI includes it. */
  nearestWholeOrder: number;
  wholeOrderConsistent: boolean | null;
  /** k with the order held at the nearest whole number: k_obs = k [B]^m through the origin. */
  k: number;
  kStdErr: number | null;
  kCI95: [number, number] | null;
  kUnit: string;
  weighted: boolean;
  points: number;
  warnings: string[];
}

export type RateLawOutcome = RateLawResult | { ok: false; error: string };

export function rateLawFromSeries(runs: RateAtConcentration[]): RateLawOutcome {
  if (runs.length < 2) return { ok: false, error: `a rate law needs runs at two or more concentrations; ${runs.length} given.` };
  for (const [i, r] of runs.entries()) {
    const name = r.label ?? `run ${i + 1}`;
    if (!(r.concentration_M > 0) || !Number.isFinite(r.concentration_M)) return { ok: false, error: `${name}: concentration ${r.concentration_M} M is not positive; enter the excess reagent's concentration after mixing, in mol/L.` };
    if (!(r.kObs_perSecond > 0) || !Number.isFinite(r.kObs_perSecond)) return { ok: false, error: `${name}: k_obs ${r.kObs_perSecond} s⁻¹ is not positive; fit the run again, or leave it out.` };
  }
  if (new Set(runs.map((r) => r.concentration_M)).size < 2) return { ok: false, error: 'all runs are at the same concentration; vary the excess reagent to find its order.' };

  const weighted = runs.every((r) => r.kObsStdErr_perSecond != null && r.kObsStdErr_perSecond > 0);
  // σ(ln k) ≈ σ_k / k.
  const logWeights = weighted ? runs.map((r) => (r.kObs_perSecond / r.kObsStdErr_perSecond!) ** 2) : undefined;
  const logLine = linearFit({
    x: runs.map((r) => Math.log(r.concentration_M)),
    y: runs.map((r) => Math.log(r.kObs_perSecond)),
    weights: logWeights,
  });
  if (!logLine.ok) return { ok: false, error: `log–log line: ${logLine.warnings.join(' ')}` };
  const slope = logLine.byName.slope!;
  const m = slope.value;
  const whole = Math.max(0, Math.round(m));
  const consistent = slope.ci ? slope.ci[0] <= whole && whole <= slope.ci[1] : null;

  // k_obs = k · [B]^m with m whole: a line through the origin in x = [B]^m.
  const x = runs.map((r) => r.concentration_M ** whole);
  const kWeights = weighted ? runs.map((r) => 1 / r.kObsStdErr_perSecond! ** 2) : undefined;
  const warnings = [...logLine.warnings];
  let k: number, kSe: number | null, kCi: [number, number] | null;
  if (whole === 0) {
    // Zero order in B: k_obs does not depend on [B]; k is their (weighted) mean.
    const mean = linearFit({ x: runs.map(() => 1), y: runs.map((r) => r.kObs_perSecond), weights: kWeights, intercept: false });
    k = mean.slope; kSe = mean.byName.slope!.stdErr; kCi = mean.byName.slope!.ci;
  } else {
    const line = linearFit({ x, y: runs.map((r) => r.kObs_perSecond), weights: kWeights, intercept: false });
    k = line.slope; kSe = line.byName.slope!.stdErr; kCi = line.byName.slope!.ci;
  }
  if (consistent === false) warnings.push(`the order in the excess reagent, ${m.toFixed(2)}, is not consistent with ${whole}; k is given for order ${whole} all the same.`);
  const ratio = Math.max(...runs.map((r) => r.concentration_M)) / Math.min(...runs.map((r) => r.concentration_M));
  if (ratio < 3) warnings.push(`the concentrations span a factor of only ${ratio.toFixed(1)}; a factor of 4 or more pins the order down far better.`);
  return {
    ok: true,
    order: m,
    orderStdErr: slope.stdErr,
    orderCI95: slope.ci,
    nearestWholeOrder: whole,
    wholeOrderConsistent: consistent,
    k,
    kStdErr: kSe,
    kCI95: kCi,
    kUnit: whole === 0 ? 's^-1' : whole === 1 ? 'M^-1 s^-1' : `M^-${whole} s^-1`,
    weighted,
    points: runs.length,
    warnings,
  };
}
