/**
 * What `rateline combine` reports for a series, assembled from the pieces in kinetics/:
 * by concentration, the two-step rate law (rateLawSeries.ts), the isolation check of each
 * run (isolation.ts) and the global fit from the readings as a check beside it
 * (globalRateLaw.ts); by temperature, the Arrhenius line, the Eyring line and k at a
 * temperature the user names (arrhenius.ts, eyring.ts). The command only reads files,
 * calls this and prints.
 */
import { rateLawFromSeries, type RateLawResult } from './rateLawSeries';
import { isolationCheck, type IsolationCheck } from './isolation';
import { globalRateLawFit, intervalsAgree, type Agreement, type GlobalRateLawResult } from './globalRateLaw';
import { arrheniusFit, predictRateConstant, type ArrheniusResult, type RatePrediction } from './arrhenius';
import { eyringFit, type EyringResult } from './eyring';

export interface SeriesRun {
  label: string;
  /** Excess reagent after mixing (mol/L) by concentration; temperature (°C) by temperature. */
  x: number;
  kObs_perSecond: number;
  kObsStdErr_perSecond: number | null;
  /** Followed species after mixing, mol/L (null when not known). */
  followed_M?: number | null;
  /** Excess reagent after mixing, mol/L, for a temperature series (null when not known). */
  excess_M?: number | null;
  /** Fraction of the followed species converted by the last reading. */
  fractionConverted?: number | null;
  /** The run's readings and its own first-order fit, for the global fit. */
  readings?: { time_s: ArrayLike<number>; absorbance: ArrayLike<number>; a0: number; aInf: number } | null;
}

export interface ConcentrationSeriesReport {
  rateLaw: RateLawResult;
  isolation: { checks: IsolationCheck[]; notChecked: string | null };
  global:
    | { ok: true; fit: GlobalRateLawResult; order: Agreement; k: Agreement }
    | { ok: false; reason: string };
  warnings: string[];
}

export function combineConcentrationSeries(runs: SeriesRun[], study: { stoichiometry: number }): ConcentrationSeriesReport | { ok: false; error: string } {
  const law = rateLawFromSeries(runs.map((r) => ({ concentration_M: r.x, kObs_perSecond: r.kObs_perSecond, kObsStdErr_perSecond: r.kObsStdErr_perSecond, label: r.label })));
  if (!law.ok) return law;
  const warnings = [...law.warnings];

  const known = runs.filter((r) => r.followed_M != null && r.followed_M > 0);
  const checks = known.map((r) => isolationCheck({
    label: r.label, excess_M: r.x, followed_M: r.followed_M!, stoichiometry: study.stoichiometry,
    fractionConverted: r.fractionConverted ?? null, orderInExcess: law.orderDecided ? law.nearestWholeOrder : 1,
  }));
  for (const c of checks) if (c.warning) warnings.push(c.warning);
  const notChecked = known.length === runs.length ? null
    : `the isolation of ${runs.length - known.length} run(s) is not checked: the followed species' concentration after mixing is not known for them (give it in the run record or the study, and name it with --followed).`;

  let global: ConcentrationSeriesReport['global'];
  if (runs.some((r) => !r.readings)) {
    global = { ok: false, reason: 'no global fit: some runs come from a summary CSV, without their readings.' };
  } else {
    const fit = globalRateLawFit(runs.map((r) => ({
      label: r.label, concentration_M: r.x, time_s: r.readings!.time_s, absorbance: r.readings!.absorbance,
      kObsStart: r.kObs_perSecond, a0Start: r.readings!.a0, aInfStart: r.readings!.aInf,
    })), { k: law.k, order: law.order, heldOrder: law.nearestWholeOrder });
    if (!fit.ok) global = { ok: false, reason: `no global fit: ${fit.error}` };
    else {
      const order = intervalsAgree('order m', law.orderCI95, fit.order.ci95);
      const k = intervalsAgree(`k (order ${law.nearestWholeOrder})`, law.kCI95, fit.k.ci95);
      global = { ok: true, fit, order, k };
      if (order.agree === false) warnings.push(order.sentence);
      if (k.agree === false) warnings.push(k.sentence);
    }
  }
  return { rateLaw: law, isolation: { checks, notChecked }, global, warnings };
}

export interface TemperatureSeriesReport {
  /** Fitted quantity: k = k_obs/[B]^m when every run's [B] is known, else k_obs itself. */
  rateConstant: 'k' | 'kObs';
  kUnit: string;
  orderInExcess: number;
  arrhenius: ArrheniusResult;
  eyring: EyringResult | { ok: false; reason: string };
  prediction: RatePrediction | null;
  warnings: string[];
}

export function combineTemperatureSeries(runs: SeriesRun[], opts: { orderInExcess: number; predictAt_C: number | null }): TemperatureSeriesReport | { ok: false; error: string } {
  const m = opts.orderInExcess;
  const withB = runs.every((r) => r.excess_M != null && r.excess_M > 0);
  const scale = (r: SeriesRun) => (withB ? r.excess_M! ** m : 1);
  // [B] is taken as exact: SE(k) = SE(k_obs)/[B]^m.
  const series = runs.map((r) => ({ temperature_C: r.x, k: r.kObs_perSecond / scale(r), kStdErr: r.kObsStdErr_perSecond === null ? null : r.kObsStdErr_perSecond / scale(r), label: r.label }));
  const arrhenius = arrheniusFit(series);
  if (!arrhenius.ok) return arrhenius;
  const kUnit = !withB ? 's^-1' : m === 0 ? 's^-1' : m === 1 ? 'M^-1 s^-1' : `M^-${m} s^-1`;
  const warnings = [...arrhenius.warnings];
  let eyring: TemperatureSeriesReport['eyring'];
  if (!withB) eyring = { ok: false, reason: "no Eyring line: it needs k in M⁻¹ s⁻¹ from k_obs/[B]^m, and the excess reagent's concentration is not known for every run (give it in the run record with --reagent, or in the study)." };
  else if (m !== 1) eyring = { ok: false, reason: `no Eyring line: with order ${m} in the excess reagent k is in ${kUnit}, and the Eyring form used here (molecularity 2, c° = 1 mol dm⁻³) needs order 1.` };
  else {
    const e = eyringFit(series, kUnit);
    eyring = e.ok ? e : { ok: false, reason: `no Eyring line: ${e.error}` };
    if (e.ok) warnings.push(...e.warnings.filter((w) => !warnings.includes(w)));
  }
  let prediction: RatePrediction | null = null;
  if (opts.predictAt_C !== null) {
    const p = predictRateConstant(arrhenius, opts.predictAt_C);
    if ('ok' in p) return { ok: false, error: p.error };
    prediction = p;
    warnings.push(...p.warnings);
  }
  return { rateConstant: withB ? 'k' : 'kObs', kUnit, orderInExcess: m, arrhenius, eyring, prediction, warnings };
}
