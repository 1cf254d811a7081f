/**
 * Activation energy from runs at several temperatures: k = A exp(−Ea / RT), so
 * ln k = ln A − (Ea/R)(1/T), a straight line in 1/T. Each run's k arrives with its
 * standard error; σ(ln k) ≈ σ_k / k (first-order propagation), so the line is
 * weighted by w = (k/σ_k)² when every run carries one, unweighted otherwise.
 */
import { linearFit } from './fit/linearFit';
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
  weighted: boolean;
  points: number;
  dof: number;
  rSquared: number | null;
  /** 1/T (K⁻¹) and ln k per run, for the plot. */
  inverseTemperature_perK: number[];
  lnK: number[];
  warnings: string[];
}

export type ArrheniusOutcome = ArrheniusResult | { ok: false; error: string };

export function arrheniusFit(runs: RateAtTemperature[]): ArrheniusOutcome {
  if (runs.length < 2) return { ok: false, error: `an activation energy needs runs at two or more temperatures; ${runs.length} given.` };
  for (const [i, r] of runs.entries()) {
    const name = r.label ?? `run ${i + 1}`;
    if (!Number.isFinite(r.temperature_C) || celsiusToKelvin(r.temperature_C) <= 0) {
      return { ok: false, error: `${name}: temperature ${r.temperature_C} °C is not a physical temperature; enter it in °C.` };
    }
    if (!(r.k > 0) || !Number.isFinite(r.k)) {
      return { ok: false, error: `${name}: rate constant ${r.k} is not positive; ln k needs k > 0 (fit the run again, or leave it out).` };
    }
  }
  const distinct = new Set(runs.map((r) => r.temperature_C));
  if (distinct.size < 2) return { ok: false, error: 'all runs are at the same temperature; an activation energy needs at least two temperatures.' };

  const x = runs.map((r) => 1 / celsiusToKelvin(r.temperature_C));
  const y = runs.map((r) => Math.log(r.k));
  const weighted = runs.every((r) => r.kStdErr != null && r.kStdErr > 0);
  const weights = weighted ? runs.map((r) => (r.k / r.kStdErr!) ** 2) : undefined;
  const line = linearFit({ x, y, weights, intercept: true });
  if (!line.ok) return { ok: false, error: `Arrhenius line: ${line.warnings.join(' ')}` };

  const R = GAS_CONSTANT_J_PER_MOL_K;
  const slope = line.byName.slope!;
  const inter = line.byName.intercept!;
  const toKJ = (v: number) => (-v * R) / 1000;
  const ea = toKJ(slope.value);
  const eaSe = slope.stdErr === null ? null : (slope.stdErr * R) / 1000;
  const eaCi: [number, number] | null = slope.ci ? [toKJ(slope.ci[1]), toKJ(slope.ci[0])] : null;
  const warnings = [...line.warnings];
  const spanK = Math.max(...x.map((v) => 1 / v)) - Math.min(...x.map((v) => 1 / v));
  if (spanK < 10) warnings.push(`the temperatures span only ${spanK.toFixed(1)} K; a span of 20 K or more pins Ea down far better.`);
  if (runs.length === 2) warnings.push('two temperatures give a line with no degrees of freedom left: no uncertainty can be had for Ea.');
  return {
    ok: true,
    activationEnergy_kJPerMol: ea,
    activationEnergyStdErr_kJPerMol: eaSe,
    activationEnergyCI95_kJPerMol: eaCi,
    preExponential: Math.exp(inter.value),
    lnPreExponential: inter.value,
    lnPreExponentialStdErr: inter.stdErr,
    preExponentialCI95: inter.ci ? [Math.exp(inter.ci[0]), Math.exp(inter.ci[1])] : null,
    weighted,
    points: runs.length,
    dof: line.dof,
    rSquared: line.rSquared,
    inverseTemperature_perK: x,
    lnK: y,
    warnings,
  };
}
