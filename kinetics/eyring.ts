/**
 * Activation enthalpy, entropy and Gibbs energy from runs at several temperatures, by
 * the Eyring equation of transition-state theory with transmission coefficient κ = 1:
 *
 *   k = κ (k_B T / h) (c°)^(1−n) exp(ΔS‡/R) exp(−ΔH‡/(R T)),
 *
 * for a reaction of molecularity n = 2 with k in M⁻¹ s⁻¹ and the standard state
 * c° = 1 mol dm⁻³, so (c°)^(1−n) = 1 M⁻¹ and, numerically,
 *
 *   ln(k/T) = ln(k_B/h) + ΔS‡/R − (ΔH‡/R)(1/T).
 *
 * The line in 1/T is weighted and its uncertainty chosen exactly as the Arrhenius
 * line (σ(ln(k/T)) = σ_k/k, T taken as exact). ΔG‡ at a temperature T₀ is
 * ΔH‡ − T₀ΔS‡ = R T₀ [ln(k_B/h) − ln(k/T)(T₀)], so its SE is R T₀ times that of the
 * line's value at 1/T₀ (full covariance of slope and intercept).
 * Constants: CODATA 2018, exact since the 2019 SI redefinition.
 */
import { temperatureSeriesProblem, type RateAtTemperature } from './arrhenius';
import { fitSeriesLine, interval95, lineUncertainty, predictionStdErr, type LineUncertainty } from './seriesLine';
import { celsiusToKelvin, GAS_CONSTANT_J_PER_MOL_K } from './temperature';

/** Boltzmann constant, J K⁻¹ (CODATA 2018, exact). */
export const BOLTZMANN_J_PER_K = 1.380649e-23;
/** Planck constant, J s (CODATA 2018, exact). */
export const PLANCK_J_S = 6.62607015e-34;
/** The reference temperature for ΔG‡, K (25 °C). */
export const EYRING_REFERENCE_K = 298.15;

export interface EyringResult {
  ok: true;
  activationEnthalpy_kJPerMol: number;
  activationEnthalpyStdErr_kJPerMol: number | null;
  activationEnthalpyCI95_kJPerMol: [number, number] | null;
  activationEntropy_JPerMolK: number;
  activationEntropyStdErr_JPerMolK: number | null;
  activationEntropyCI95_JPerMolK: [number, number] | null;
  /** ΔG‡ at `gibbsTemperature_K`. */
  activationGibbs_kJPerMol: number;
  activationGibbsStdErr_kJPerMol: number | null;
  activationGibbsCI95_kJPerMol: [number, number] | null;
  gibbsTemperature_K: number;
  uncertainty: LineUncertainty;
  points: number;
  /** What the numbers assume, to print beside them. */
  assumptions: string;
  /** 1/T and ln(k/T) per run, for the plot. */
  inverseTemperature_perK: number[];
  lnKOverT: number[];
  warnings: string[];
}

export type EyringOutcome = EyringResult | { ok: false; error: string };

/** `runs`: k in M⁻¹ s⁻¹ (second order overall: first in the dye, first in the excess reagent). */
export function eyringFit(runs: RateAtTemperature[], kUnit = 'M^-1 s^-1'): EyringOutcome {
  const problem = temperatureSeriesProblem(runs, 'an Eyring line');
  if (problem) return { ok: false, error: problem };
  const T = runs.map((r) => celsiusToKelvin(r.temperature_C));
  const x = T.map((t) => 1 / t);
  const y = runs.map((r, i) => Math.log(r.k / T[i]!));
  const line = fitSeriesLine(x, y, runs.map((r) => (r.kStdErr == null ? null : r.kStdErr / r.k)));
  if (!line.ok) return { ok: false, error: `Eyring line: ${line.error}` };
  const R = GAS_CONSTANT_J_PER_MOL_K;
  const lnKbOverH = Math.log(BOLTZMANN_J_PER_K / PLANCK_J_S);
  const f = line.coverageFactor;
  const dH = (-line.slope * R) / 1000;
  const dHSe = line.slopeStdErr === null ? null : (line.slopeStdErr * R) / 1000;
  const dS = (line.intercept - lnKbOverH) * R;
  const dSSe = line.interceptStdErr === null ? null : line.interceptStdErr * R;
  const T0 = EYRING_REFERENCE_K;
  const dG = dH - (T0 * dS) / 1000;
  const lineSe = predictionStdErr(line.covariance, 1 / T0);
  const dGSe = lineSe === null ? null : (R * T0 * lineSe) / 1000;
  const warnings = [...line.warnings];
  if (line.basis === 'none') warnings.push('two temperatures give a line with no degrees of freedom left: no uncertainty can be had for ΔH‡ and ΔS‡.');
  return {
    ok: true,
    activationEnthalpy_kJPerMol: dH,
    activationEnthalpyStdErr_kJPerMol: dHSe,
    activationEnthalpyCI95_kJPerMol: interval95(dH, dHSe, f),
    activationEntropy_JPerMolK: dS,
    activationEntropyStdErr_JPerMolK: dSSe,
    activationEntropyCI95_JPerMolK: interval95(dS, dSSe, f),
    activationGibbs_kJPerMol: dG,
    activationGibbsStdErr_kJPerMol: dGSe,
    activationGibbsCI95_kJPerMol: interval95(dG, dGSe, f),
    gibbsTemperature_K: T0,
    uncertainty: lineUncertainty(line),
    points: runs.length,
    assumptions: `Eyring: ln(k/T) against 1/T with k = k_obs/[B]^m in ${kUnit}, transmission coefficient 1, standard state c° = 1 mol dm⁻³; ΔG‡ at ${T0} K.`,
    inverseTemperature_perK: x,
    lnKOverT: y,
    warnings,
  };
}
