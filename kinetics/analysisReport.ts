/**
 * Turns the four fits of a refit into the AnalysisResult everyone reads: model
 * summaries, the order verdict, progress under the driving model (the verdict's, or
 * first order while undecided), the stop advice and the run-level warnings.
 */
import type { AnalysisResult, AnalysisUnits, AnalyzerOptions, IntegerOrder, ModelName } from './analysisTypes';
import type { FitSeries, ModelFit, RateLaw } from './models/modelTypes';
import { AINF, A0, K } from './models/modelTypes';
import { emptyNthSummary, emptySummary, summarize, summarizeNth, t95 } from './modelSummary';
import { orderVerdict } from './orderVerdict';
import { fractionConvertedAt, halfLivesElapsed, targetFraction, timeToFractionWithStdErr } from './halfLife';
import { forecastKRelCI95 } from './precisionForecast';
import type { StopAdvisor } from './stopAdvice';

export const UNCERTAINTY_NOTE =
  'Confidence intervals cover measurement noise only, not systematic error (temperature, mixing, calibration, model choice).';

export interface ReportInput {
  opts: AnalyzerOptions & { targetHalfLives: number; precision: number };
  fits: Record<ModelName, ModelFit>;
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
    verdict: { order: 'undecided', weights: { zero: null, first: null, second: null }, reason: 'no fit yet' },
    models: { zero: emptySummary(true), first: emptySummary(fixed), second: emptySummary(fixed), nth: emptyNthSummary(fixed) },
    drivingModel: 'first', halfLivesElapsed: null, fractionConverted: null, targetHalfLives: opts.targetHalfLives,
    stop: {
      state: 'gathering', suggested: false, atTime_s: null, predictedAt_s: null, predictedAtStdErr_s: null,
      earlyStopPossible: false, kRelCI95Now: null, kRelCI95AtTarget: null, reason,
    },
    outliers: [], units: unitsFor(opts), warnings: [], uncertaintyNote: UNCERTAINTY_NOTE,
  };
}

export function buildReport(r: ReportInput): AnalysisResult {
  const { fits, opts } = r;
  const fixed = opts.fixedAInf !== undefined;
  const tauLast = r.lastTime_s - r.origin_s;
  const usable = (f: ModelFit): boolean => f.ok && f.params.every(Number.isFinite);
  const frac = (m: ModelName): number | null => (usable(fits[m]) ? fractionConvertedAt(m, fits[m].params, tauLast) : null);
  const models = {
    zero: summarize('zero', fits.zero, true),
    first: summarize('first', fits.first, fixed),
    second: summarize('second', fits.second, fixed),
    nth: summarizeNth(fits.nth, fixed),
  };
  const evidence = (m: IntegerOrder) => ({ aicc: usable(fits[m]) ? models[m].aicc : null, runsTestP: models[m].runsTestP, fractionConverted: frac(m) });
  const verdict = orderVerdict({ zero: evidence('zero'), first: evidence('first'), second: evidence('second') });
  const driving: IntegerOrder = verdict.order === 'undecided' ? 'first' : verdict.order;
  const fit = fits[driving];
  const ok = usable(fit);
  const f = frac(driving);
  const fTarget = targetFraction(opts.targetHalfLives);
  const warnings: string[] = [];

  let predictedAt_s: number | null = null, predictedAtStdErr_s: number | null = null;
  let kRelNow: number | null = null, kRelTarget: number | null = null;
  if (ok) {
    const at = timeToFractionWithStdErr(driving, fit.params, fit.covariance, fTarget);
    predictedAt_s = at.value === null ? null : r.origin_s + at.value;
    predictedAtStdErr_s = at.stdErr;
    const s = models[driving];
    kRelNow = s.kStdErr !== null && s.k !== null && s.k > 0 ? (t95(fit.dof) * s.kStdErr) / s.k : null;
    if (at.value !== null && at.value > tauLast && r.interval_s > 0) {
      kRelTarget = forecastKRelCI95({
        law: r.laws[driving], series: r.series, params: fit.params, free: fit.free,
        reducedChiSquare: fit.chiSquare / fit.dof, fromTau_s: tauLast, toTau_s: at.value,
        interval_s: r.interval_s, weightAt: r.weightOf, tQuantile: t95(fit.dof + (at.value - tauLast) / r.interval_s),
      });
    } else {
      kRelTarget = kRelNow;
    }
    // Noise of one reading at the last signal, from the fit's own scatter.
    const noise = Math.sqrt(fit.chiSquare / fit.dof / r.weightOf(r.lastSignal));
    const fitted = r.laws[driving].value(tauLast, fit.params);
    const left = Math.abs(fitted - fit.params[AINF]);
    const changed = Math.abs(fit.params[A0] - fitted);
    if (changed < 3 * noise && r.pointsInWindow >= 20) {
      warnings.push(`nothing seems to be reacting: the signal has changed by ${changed.toPrecision(2)} over ${tauLast.toFixed(0)} s, less than 3× the noise (${noise.toPrecision(2)}); check the mixing and the wavelength`);
    } else if (left < 2 * noise) {
      warnings.push(`the signal has faded into the noise: what is left to react (${left.toPrecision(2)}) is under 2× the noise (${noise.toPrecision(2)}); further readings add little`);
    }
    if (!(fit.params[K] > 0)) warnings.push(`${driving} order: k is not positive; the data do not show a decay`);
  }
  if (opts.signal && !opts.signal.absorbance && opts.weighted) warnings.push('weights from the absorbance noise model were applied to a concentration signal');
  const stop = r.advisor.update({
    points: r.pointsInWindow, time_s: r.lastTime_s, fitUsable: ok, kRelCI95Now: kRelNow, kRelCI95AtTarget: kRelTarget,
    fractionConverted: f, targetFraction: fTarget, targetHalfLives: opts.targetHalfLives, precision: opts.precision,
    orderDecided: verdict.order !== 'undecided', drivingModel: driving, predictedAt_s, predictedAtStdErr_s,
  });
  return {
    points: r.points, duration_s: r.duration_s, pointsInWindow: r.pointsInWindow,
    window: { from_s: opts.from_s ?? null, to_s: opts.to_s ?? null },
    verdict, models, drivingModel: driving,
    halfLivesElapsed: halfLivesElapsed(f), fractionConverted: f, targetHalfLives: opts.targetHalfLives,
    stop, outliers: r.outliers, units: unitsFor(opts), warnings, uncertaintyNote: UNCERTAINTY_NOTE,
  };
}
