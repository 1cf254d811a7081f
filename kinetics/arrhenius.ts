/**
 * Activation energy from runs at several temperatures: k = A exp(−Ea / RT), so
 * ln k = ln A − (Ea/R)(1/T), a straight line in 1/T. Each run's k arrives with its
 * standard error; σ(ln k) ≈ σ_k / k (first-order propagation), so the line is
 * weighted by w = (k/σ_k)² when every run carries one, unweighted otherwise, and its
 * uncertainty is the larger of the internal and the external one (kinetics/seriesLine.ts).
 */
import { fitSeriesLine, interval95, lineUncertainty, predictionStdErr, type LineUncertainty, type SeriesLine } from './seriesLine';
import { celsiusToKelvin, GAS_CONSTANT_J_PER_MOL_K } from './temperature';

export interface RateAtTemperature {
  temperature_C: number;
  k: number;
  kStdErr?: number | null;
  label?: string;
}

export interface ArrheniusResult {
  ok: true;
  activationEnergy_kJPerMol: number;
  activationEnergyStdErr_kJPerMol: number | null;
  activationEnergyCI95_kJPerMol: [number, number] | null;
  /** Pre-exponential factor A, in the unit of k. */
  preExponential: number;
  /** ln A with its SE (A itself is log-normal, so its CI is given as exp of the ln CI). */
  lnPreExponential: number;
  lnPreExponentialStdErr: number | null;
  preExponentialCI95: [number, number] | null;
  /** Covariance of (ln A, slope −Ea/R in K) in the basis used; null when none can be had. */
  lineCovariance: SeriesLine['covariance'];
  uncertainty: LineUncertainty;
  weighted: boolean;
  points: number;
  dof: number;
  rSquared: number | null;
  /** The measured temperatures' range, °C. */
  temperatureRange_C: [number, number];
  /** 1/T (K⁻¹) and ln k per run, for the plot. */
  inverseTemperature_perK: number[];
  lnK: number[];
  warnings: string[];
}

export type ArrheniusOutcome = ArrheniusResult | { ok: false; error: string };

/** The checks every line in 1/T makes of its runs (Arrhenius and Eyring): one sentence or null. */
export function temperatureSeriesProblem(runs: RateAtTemperature[], what: string): string | null {
  if (runs.length < 2) return `${what} needs runs at two or more temperatures; ${runs.length} given.`;
  for (const [i, r] of runs.entries()) {
    const name = r.label ?? `run ${i + 1}`;
    if (!Number.isFinite(r.temperature_C) || celsiusToKelvin(r.temperature_C) <= 0) return `${name}: temperature ${r.temperature_C} °C is not a physical temperature; enter it in °C.`;
    if (!(r.k > 0) || !Number.isFinite(r.k)) return `${name}: rate constant ${r.k} is not positive; ln k needs k > 0 (fit the run again, or leave it out).`;
  }
  if (new Set(runs.map((r) => r.temperature_C)).size < 2) return `all runs are at the same temperature; ${what} needs at least two temperatures.`;
  return null;
}

export function arrheniusFit(runs: RateAtTemperature[]): ArrheniusOutcome {
  const problem = temperatureSeriesProblem(runs, 'an activation energy');
  if (problem) return { ok: false, error: problem };
  const x = runs.map((r) => 1 / celsiusToKelvin(r.temperature_C));
  const y = runs.map((r) => Math.log(r.k));
  const line = fitSeriesLine(x, y, runs.map((r) => (r.kStdErr == null ? null : r.kStdErr / r.k)));
  if (!line.ok) return { ok: false, error: `Arrhenius line: ${line.error}` };

  const R = GAS_CONSTANT_J_PER_MOL_K;
  const toKJ = (v: number) => (-v * R) / 1000;
  const ea = toKJ(line.slope);
  const eaSe = line.slopeStdErr === null ? null : (line.slopeStdErr * R) / 1000;
  const lnACi = interval95(line.intercept, line.interceptStdErr, line.coverageFactor);
  const warnings = [...line.warnings];
  const temps = runs.map((r) => r.temperature_C);
  const spanK = Math.max(...temps) - Math.min(...temps);
  if (spanK < 10) warnings.push(`the temperatures span only ${spanK.toFixed(1)} K; a span of 20 K or more pins Ea down far better.`);
  if (line.basis === 'none') warnings.push('two temperatures give a line with no degrees of freedom left: no uncertainty can be had for Ea.');
  return {
    ok: true,
    activationEnergy_kJPerMol: ea,
    activationEnergyStdErr_kJPerMol: eaSe,
    activationEnergyCI95_kJPerMol: interval95(ea, eaSe, line.coverageFactor),
    preExponential: Math.exp(line.intercept),
    lnPreExponential: line.intercept,
    lnPreExponentialStdErr: line.interceptStdErr,
    preExponentialCI95: lnACi ? [Math.exp(lnACi[0]), Math.exp(lnACi[1])] : null,
    lineCovariance: line.covariance,
    uncertainty: lineUncertainty(line),
    weighted: line.weighted,
    points: runs.length,
    dof: line.dof,
    rSquared: line.rSquared,
    temperatureRange_C: [Math.min(...temps), Math.max(...temps)],
    inverseTemperature_perK: x,
    lnK: y,
    warnings,
  };
}

export interface RatePrediction {
  temperature_C: number;
  k: number;
  lnK: number;
  lnKStdErr: number | null;
  /** exp of the 95% interval of ln k (k is log-normal). */
  kCI95: [number, number] | null;
  outsideMeasuredRange: boolean;
  warnings: string[];
}

/**
 * k at a temperature the user names, ln k = ln A − (Ea/R)/T, with SE from the full
 * covariance of ln A and Ea: Var ln k = Var ln A + Var(slope)/T² + 2 Cov(ln A, slope)/T.
 */
export function predictRateConstant(fit: ArrheniusResult, temperature_C: number): RatePrediction | { ok: false; error: string } {
  if (!Number.isFinite(temperature_C) || celsiusToKelvin(temperature_C) <= 0) return { ok: false, error: `the temperature ${temperature_C} °C to predict at is not a physical temperature; give it in °C.` };
  const T = celsiusToKelvin(temperature_C);
  const slope = (-fit.activationEnergy_kJPerMol * 1000) / GAS_CONSTANT_J_PER_MOL_K;
  const lnK = fit.lnPreExponential + slope / T;
  const se = predictionStdErr(fit.lineCovariance, 1 / T);
  const ci = interval95(lnK, se, fit.uncertainty.coverageFactor);
  const [lo, hi] = fit.temperatureRange_C;
  const outside = temperature_C < lo || temperature_C > hi;
  const warnings: string[] = [];
  if (outside) warnings.push(`${temperature_C} °C lies outside the measured temperatures (${lo}–${hi} °C): the prediction assumes the Arrhenius line holds beyond them, which these runs cannot show.`);
  return { temperature_C, k: Math.exp(lnK), lnK, lnKStdErr: se, kCI95: ci ? [Math.exp(ci[0]), Math.exp(ci[1])] : null, outsideMeasuredRange: outside, warnings };
}
