/**
 * Turns the four fits of a refit into the AnalysisResult everyone reads: model
 * summaries, the order verdict, progress and the stop advice, and the run-level warnings.
 *
 * While the order is undecided, the advice must hold for every order still plausible
 * (Akaike weight ≥ PLAUSIBLE_MIN_WEIGHT among the integer orders, and the n-th order fit
 * once it is had): k's CI is the widest of theirs, the fraction converted the least, the
 * time to the target the latest. A first-order fit with weight 0 cannot call a
 * second-order run "far enough" at 70% converted.
 */
import type { AnalysisResult, AnalysisUnits, AnalyzerOptions, InitialRate, LeftOutCounts, ModelName } from './analysisTypes';
import type { FitSeries, FittedModel, ModelFit, RateLaw } from './models/modelTypes';
import { AINF, A0 } from './models/modelTypes';
import { emptyNthSummary, emptySummary, summarize, summarizeNth, t95 } from './modelSummary';
import { orderVerdict } from './orderVerdict';
import { fractionConvertedAt, halfLife, halfLivesElapsed, targetFraction, timeToFractionWithStdErr } from './halfLife';
import { forecastKRelCI95 } from './precisionForecast';
import type { StopAdvisor } from './stopAdvice';
import type { WidenedK } from './boundedEnd';

export const UNCERTAINTY_NOTE =
  'Confidence intervals cover measurement noise only, not systematic error (temperature, mixing, calibration, model choice).';
export const RATE_CONVENTION =
  'rate = −d[A]/dt = k[A]^n, with [A] the reacting part of the signal, |A − A∞| (the followed species used up, or an absorbing product still to form), and no stoichiometric factor; for 2A → P with the rate defined as −½ d[A]/dt, the k of that convention is half the k given here.';
/** An order stays plausible for the advice while its Akaike weight is at least this. */
export const PLAUSIBLE_MIN_WEIGHT = 0.05;

export const NO_LEFT_OUT: LeftOutCounts = Object.freeze({ backwards: 0, nonFinite: 0, saturated: 0, outOfRange: 0 });

export interface ReportInput {
  opts: AnalyzerOptions & { targetHalfLives: number; precision: number };
  fits: Record<ModelName, ModelFit>;
  /** k's uncertainty for the fits whose A∞ sits on a bound (boundedEnd.ts). */
  widened: Partial<Record<ModelName, WidenedK>>;
  laws: Record<ModelName, RateLaw>;
  series: FitSeries;
  advisor: StopAdvisor;
  points: number;
  duration_s: number;
  pointsInWindow: number;
  origin_s: number;
  lastTime_s: number;
  lastSignal: number;
  interval_s: number;
  weightOf: (y: number) => number;
  outliers: number[];
  direction: 1 | -1;
  highestAbsorbance_AU: number;
  leftOut: LeftOutCounts;
  initialRate: InitialRate | null;
}

export function unitsFor(opts: AnalyzerOptions): AnalysisUnits {
  const u = opts.signal?.unit ?? 'AU';
  return {
    time: 's',
    signal: opts.signal ? `${opts.signal.name} (${u})` : 'absorbance (AU)',
    k: { zero: `${u} s^-1`, first: 's^-1', second: `${u}^-1 s^-1`, nth: `${u}^(1-n) s^-1` },
  };
}

export function emptyReport(opts: AnalyzerOptions & { targetHalfLives: number; precision: number }, reason: string): AnalysisResult {
  const fixed = opts.fixedAInf !== undefined;
  return {
    points: 0, duration_s: 0, pointsInWindow: 0,
    window: { from_s: opts.from_s ?? null, to_s: opts.to_s ?? null },
    verdict: { order: 'undecided', weights: { zero: null, first: null, second: null }, fractionalOrder: null, reason: 'no fit yet', likelyCauses: [], effectOnK: null },
    models: { zero: emptySummary(true), first: emptySummary(fixed), second: emptySummary(fixed), nth: emptyNthSummary(fixed) },
    drivingModel: 'first', direction: null, halfLivesElapsed: null, fractionConverted: null, targetHalfLives: opts.targetHalfLives,
    stop: {
      state: 'gathering', suggested: false, atTime_s: null, predictedAt_s: null, predictedAtStdErr_s: null,
      earlyStopPossible: false, kRelCI95Now: null, kRelCI95AtTarget: null, plausibleModels: ['first'], reason,
    },
    outliers: [], leftOut: { ...NO_LEFT_OUT }, initialRate: null, units: unitsFor(opts), rateConvention: RATE_CONVENTION,
    warnings: [], uncertaintyNote: UNCERTAINTY_NOTE,
  };
}

interface ModelProgress {
  fraction: number | null;
  kRelNow: number | null;
  kRelTarget: number | null;
  predictedAt_s: number | null;
  predictedAtStdErr_s: number | null;
}

const maxOrNull = (xs: (number | null)[]): number | null => (xs.some((x) => x === null) ? null : Math.max(...(xs as number[])));
const minOrNull = (xs: (number | null)[]): number | null => (xs.some((x) => x === null) ? null : Math.min(...(xs as number[])));

export function buildReport(r: ReportInput): AnalysisResult {
  const { fits, opts } = r;
  const fixed = opts.fixedAInf !== undefined;
  const tauLast = r.lastTime_s - r.origin_s;
  const usable = (f: ModelFit): f is FittedModel => f.ok;
  const frac = (m: ModelName): number | null => { const f = fits[m]; return usable(f) ? fractionConvertedAt(m, f.params, tauLast) : null; };
  const w = r.widened;
  const models = {
    zero: summarize('zero', fits.zero, fixed, w.zero ?? null),
    first: summarize('first', fits.first, fixed, w.first ?? null),
    second: summarize('second', fits.second, fixed, w.second ?? null),
    nth: summarizeNth(fits.nth, fixed, w.nth ?? null),
  };
  const evidence = (m: 'zero' | 'first' | 'second') => ({ aicc: models[m].aicc, runsTestP: models[m].runsTestP, fractionConverted: frac(m) });
  const verdict = orderVerdict({
    zero: evidence('zero'), first: evidence('first'), second: evidence('second'),
    nth: { aicc: models.nth.aicc, runsTestP: models.nth.runsTestP, fractionConverted: frac('nth'), order: models.nth.order, orderStdErr: models.nth.orderStdErr, dof: models.nth.dof },
    highestAbsorbance_AU: r.highestAbsorbance_AU,
  });
  const o = verdict.order;
  const driving: ModelName = o === 'zero' || o === 'first' || o === 'second' ? o : o === 'fractional' ? 'nth' : 'first';
  const decided = driving === o || o === 'fractional';
  let plausible: ModelName[] = [driving];
  if (!decided) {
    plausible = (['zero', 'first', 'second'] as const).filter((m) => usable(fits[m]) && (verdict.weights[m] ?? 0) >= PLAUSIBLE_MIN_WEIGHT);
    if (usable(fits.nth)) plausible.push('nth');
    if (plausible.length === 0) plausible = [driving];
  }
  const fTarget = targetFraction(opts.targetHalfLives);
  const progress = (m: ModelName): ModelProgress => {
    const fit = fits[m];
    const s = models[m];
    if (!usable(fit)) return { fraction: null, kRelNow: null, kRelTarget: null, predictedAt_s: null, predictedAtStdErr_s: null };
    const at = timeToFractionWithStdErr(m, fit.params, fit.covariance, fTarget);
    const kRelNow = s.kStdErr !== null && s.k !== null && s.k > 0 ? (t95(fit.dof) * s.kStdErr) / s.k : null;
    let kRelTarget = kRelNow;
    if (kRelNow !== null && at.value !== null && at.value > tauLast && r.interval_s > 0) {
      const forecast = forecastKRelCI95({
        law: r.laws[m], series: r.series, params: fit.params, free: fit.free,
        reducedChiSquare: fit.chiSquare / fit.dof, fromTau_s: tauLast, toTau_s: at.value,
        interval_s: r.interval_s, weightAt: r.weightOf, tQuantile: t95(fit.dof + (at.value - tauLast) / r.interval_s),
      });
      // A widened k (A∞ on its bound) keeps its widening in the forecast.
      kRelTarget = forecast === null ? null : s.aInfAtBound ? Math.max(forecast, kRelNow) : forecast;
    }
    return {
      fraction: frac(m), kRelNow, kRelTarget,
      predictedAt_s: at.value === null ? null : r.origin_s + at.value, predictedAtStdErr_s: at.stdErr,
    };
  };
  const each = plausible.map(progress);
  const warnings: string[] = [];
  let f = minOrNull(each.map((x) => x.fraction));
  let kRelNow = maxOrNull(each.map((x) => x.kRelNow));
  let notUsableReason: string | undefined;
  const drive = fits[driving];
  const ok = each.every((_, i) => usable(fits[plausible[i]]));
  if (usable(drive)) {
    // Noise of one reading at the last signal, from the fit's own scatter.
    const noise = Math.sqrt(drive.chiSquare / drive.dof / r.weightOf(r.lastSignal));
    const fitted = r.laws[driving].value(tauLast, drive.params);
    const left = Math.abs(fitted - drive.params[AINF]);
    const changed = Math.abs(drive.params[A0] - fitted);
    if (changed < 3 * noise && r.pointsInWindow >= 20) {
      warnings.push(`nothing seems to be reacting: the signal has changed by ${changed.toPrecision(2)} over ${tauLast.toFixed(0)} s, less than 3× the noise (${noise.toPrecision(2)}); check the mixing and the wavelength`);
      // A flat run has no half-lives: its "fraction converted" is the fit's guess of an end it never showed.
      f = null; kRelNow = null;
      notUsableReason = 'nothing seems to be reacting';
    } else if (left < 2 * noise) {
      warnings.push(`the signal has faded into the noise: what is left to react (${left.toPrecision(2)}) is under 2× the noise (${noise.toPrecision(2)}); further readings add little`);
    }
  } else if (r.pointsInWindow >= 20 && !usable(fits.zero) && !usable(fits.first)) {
    warnings.push('nothing seems to be reacting: no fit finds a change in the signal; check the mixing and the wavelength');
    notUsableReason = 'nothing seems to be reacting';
  }
  if (kRelNow === null && notUsableReason === undefined && plausible.some((m) => models[m].aInfAtBound !== null && models[m].kStdErr === null)) {
    notUsableReason = 'the end value A∞ sits on its bound and k is not pinned down until the curve bends further';
  }
  for (const m of plausible) {
    if (models[m].aInfAtBound) warnings.push(`${m === 'nth' ? 'n-th' : m} order: the end value A∞ sits on its ${models[m].aInfAtBound} bound; k's interval is widened by the fit without the bound`);
  }
  if (opts.signal && !opts.signal.absorbance && opts.weighted) warnings.push('weights from the absorbance noise model were applied to a concentration signal');
  if (verdict.order === 'noSimpleLaw') warnings.push(`the readings do not follow a simple rate law; likely causes: ${verdict.likelyCauses.join('; ')}. ${verdict.effectOnK}`);
  const hl = usable(drive) ? halfLife(driving, drive.params) : null;
  const readingsPerHalfLife = hl !== null && r.interval_s > 0 ? hl / r.interval_s : null;
  const stop = r.advisor.update({
    points: r.pointsInWindow, time_s: r.lastTime_s, fitUsable: ok && notUsableReason === undefined, kRelCI95Now: kRelNow,
    kRelCI95AtTarget: maxOrNull(each.map((x) => x.kRelTarget)),
    fractionConverted: f, targetFraction: fTarget, targetHalfLives: opts.targetHalfLives, precision: opts.precision,
    orderDecided: decided, drivingModel: driving,
    predictedAt_s: maxOrNull(each.map((x) => x.predictedAt_s)),
    predictedAtStdErr_s: each[each.map((x) => x.predictedAt_s ?? -Infinity).indexOf(Math.max(...each.map((x) => x.predictedAt_s ?? -Infinity)))]?.predictedAtStdErr_s ?? null,
    plausibleModels: plausible, readingsPerHalfLife, notUsableReason,
  });
  const leftOut = r.leftOut;
  return {
    points: r.points, duration_s: r.duration_s, pointsInWindow: r.pointsInWindow,
    window: { from_s: opts.from_s ?? null, to_s: opts.to_s ?? null },
    verdict, models, drivingModel: driving, direction: r.direction > 0 ? 'falling' : 'rising',
    halfLivesElapsed: halfLivesElapsed(f), fractionConverted: f, targetHalfLives: opts.targetHalfLives,
    stop, outliers: r.outliers, leftOut: { ...leftOut }, initialRate: r.initialRate, units: unitsFor(opts), rateConvention: RATE_CONVENTION,
    warnings, uncertaintyNote: UNCERTAINTY_NOTE,
  };
}
