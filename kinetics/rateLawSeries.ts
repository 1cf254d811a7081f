/**
 * The rate law from runs at several excess-reagent concentrations. With the reagent B
 * in large excess each run is pseudo-first-order in the dye, k_obs = k [B]^m, so
 * ln k_obs = ln k + m ln [B]: the slope is the order m in B, the intercept gives k
 * (unit M^(−m) s⁻¹). When m is taken as a whole number (most often 1), k follows from
 * the line k_obs = k [B]^m through the origin, which uses every run's weight directly.
 *
 * Both lines are weighted by the runs' own standard errors (σ(ln k_obs) = SE(k_obs)/k_obs,
 * first-order propagation) and take the larger of the internal and the external
 * uncertainty (kinetics/seriesLine.ts). The order is decided only when its interval
 * holds exactly one whole order; otherwise it is reported as undecided, with k given
 * only for the order the user may choose to assume.
 */
import { fitSeriesLine, interval95, lineUncertainty, type LineUncertainty } from './seriesLine';

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
  orderUncertainty: LineUncertainty;
  /** The whole orders (0, 1, 2, 3) inside the order's interval. */
  wholeOrdersInInterval: number[];
  /** Exactly one whole order in the interval: the data decide the order in B. */
  orderDecided: boolean;
  /** The nearest whole order, and whether the CI includes it (null when there is no CI). */
  nearestWholeOrder: number;
  wholeOrderConsistent: boolean | null;
  /** k with the order held at the nearest whole number: k_obs = k [B]^m through the origin. */
  k: number;
  kStdErr: number | null;
  kCI95: [number, number] | null;
  kUncertainty: LineUncertainty;
  kUnit: string;
  /** ln k from the log–log intercept (the order free), in M^(−m) s⁻¹. */
  lnKFreeOrder: number;
  lnKFreeOrderStdErr: number | null;
  weighted: boolean;
  points: number;
  warnings: string[];
}

export type RateLawOutcome = RateLawResult | { ok: false; error: string };

const WHOLE_ORDERS = [0, 1, 2, 3];

export function rateLawFromSeries(runs: RateAtConcentration[]): RateLawOutcome {
  if (runs.length < 2) return { ok: false, error: `a rate law needs runs at two or more concentrations; ${runs.length} given.` };
  for (const [i, r] of runs.entries()) {
    const name = r.label ?? `run ${i + 1}`;
    if (!(r.concentration_M > 0) || !Number.isFinite(r.concentration_M)) return { ok: false, error: `${name}: concentration ${r.concentration_M} M is not positive; enter the excess reagent's concentration after mixing, in mol/L.` };
    if (!(r.kObs_perSecond > 0) || !Number.isFinite(r.kObs_perSecond)) return { ok: false, error: `${name}: k_obs ${r.kObs_perSecond} s⁻¹ is not positive; fit the run again, or leave it out.` };
  }
  if (new Set(runs.map((r) => r.concentration_M)).size < 2) return { ok: false, error: 'all runs are at the same concentration; vary the excess reagent to find its order.' };

  const seKobs = runs.map((r) => r.kObsStdErr_perSecond ?? null);
  const logLine = fitSeriesLine(
    runs.map((r) => Math.log(r.concentration_M)),
    runs.map((r) => Math.log(r.kObs_perSecond)),
    runs.map((r, i) => (seKobs[i] === null ? null : seKobs[i]! / r.kObs_perSecond)),
  );
  if (!logLine.ok) return { ok: false, error: `log–log line: ${logLine.error}` };
  const m = logLine.slope;
  const orderCi = interval95(m, logLine.slopeStdErr, logLine.coverageFactor);
  const whole = Math.max(0, Math.round(m));
  const inInterval = orderCi ? WHOLE_ORDERS.filter((w) => orderCi[0] <= w && w <= orderCi[1]) : [];
  const consistent = orderCi ? inInterval.includes(whole) : null;
  const decided = orderCi !== null && inInterval.length === 1;

  // k_obs = k · [B]^m with m whole: a line through the origin in x = [B]^m (zero order: the weighted mean).
  const kLine = fitSeriesLine(runs.map((r) => r.concentration_M ** whole), runs.map((r) => r.kObs_perSecond), seKobs, { intercept: false });
  if (!kLine.ok) return { ok: false, error: `k line: ${kLine.error}` };
  const warnings = [...logLine.warnings];
  if (orderCi === null) {
    warnings.push(`the order in the excess reagent cannot be decided: ${runs.length} runs without standard errors leave no uncertainty for it; k is given for order ${whole} only if that order is assumed.`);
  } else if (inInterval.length > 1) {
    warnings.push(`the order in the excess reagent cannot be decided: its 95% interval [${orderCi[0].toFixed(2)}, ${orderCi[1].toFixed(2)}] holds the orders ${inInterval.join(', ')}; k is given for order ${whole} only if that order is assumed; add runs over a wider range of concentrations.`);
  } else if (consistent === false) {
    warnings.push(`the order in the excess reagent, ${m.toFixed(2)}, is not consistent with ${whole}; k is given for order ${whole} all the same.`);
  }
  const ratio = Math.max(...runs.map((r) => r.concentration_M)) / Math.min(...runs.map((r) => r.concentration_M));
  if (ratio < 3) warnings.push(`the concentrations span a factor of only ${ratio.toFixed(1)}; a factor of 4 or more pins the order down far better.`);
  return {
    ok: true,
    order: m,
    orderStdErr: logLine.slopeStdErr,
    orderCI95: orderCi,
    orderUncertainty: lineUncertainty(logLine),
    wholeOrdersInInterval: inInterval,
    orderDecided: decided,
    nearestWholeOrder: whole,
    wholeOrderConsistent: consistent,
    k: kLine.slope,
    kStdErr: kLine.slopeStdErr,
    kCI95: interval95(kLine.slope, kLine.slopeStdErr, kLine.coverageFactor),
    kUncertainty: lineUncertainty(kLine),
    kUnit: whole === 0 ? 's^-1' : whole === 1 ? 'M^-1 s^-1' : `M^-${whole} s^-1`,
    lnKFreeOrder: logLine.intercept,
    lnKFreeOrderStdErr: logLine.interceptStdErr,
    weighted: logLine.weighted,
    points: runs.length,
    warnings,
  };
}
