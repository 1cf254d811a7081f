/**
 * Absorbance from detector intensities (Beer–Lambert): the transmittance of the sample
 * against the blank, each with the detector's dark level taken off,
 *   T = (I − I_dark) / (I_blank − I_dark),   A = −log10 T,
 * and the baseline check made while the blank is read.
 */
import { ReadingFlag } from '../sources/sourceTypes';
import { studentTQuantile } from '../../kinetics/fit/studentT';
import { READABLE_RANGE_AU } from '../../kinetics/endValueBounds';

export interface CountsLimits {
  /** Detector full scale (counts); a 16-bit converter by default. */
  fullScale_counts: number;
  /** Readings at or above this fraction of full scale are flagged saturated. */
  saturationFraction: number;
  /** Past this absorbance a typical instrument is no longer reliable (stray light): about 2 AU, common practice. */
  reliableLimit_AU: number;
  /** Dark level used when a line carries no dark counts. */
  defaultDark_counts: number;
}

export const DEFAULT_COUNTS_LIMITS: Readonly<CountsLimits> = Object.freeze({
  fullScale_counts: 65535,
  saturationFraction: 0.98,
  reliableLimit_AU: 2,
  defaultDark_counts: 0,
});

/**
 * What any photometer can read, in AU (the one range, kinetics/endValueBounds.ts): below −1 (the sample passing ten times the blank's
 * light) or above 10 (one part in 10¹⁰ getting through) no instrument measures; a number
 * out there is a corrupted line or a wrong column, never an absorbance. Readings are
 * refused outside it (`absorbanceRange`), long before the fits would be wrecked.
 */
export { READABLE_RANGE_AU };

/** Why an absorbance cannot be a reading (outside READABLE_RANGE_AU), or null when it can. */
export function readableAbsorbanceProblem(absorbance_AU: number): string | null {
  const [low, high] = READABLE_RANGE_AU;
  if (absorbance_AU >= low && absorbance_AU <= high) return null;
  return `absorbance ${absorbance_AU} AU is outside what a photometer can read (${low} to ${high} AU)`;
}

/** The blank, taken at the blank step: its net intensity I_blank − I_dark. */
export interface BlankReference {
  netBlank_counts: number;
  /** Mean dark level during the blank. */
  dark_counts: number;
  points: number;
  /** Device time of the blank's last line. */
  time_s: number;
  wavelength_nm: number;
}

export interface CountsAbsorbance {
  /** Null when the counts cannot give an absorbance (see problem); then no reading is made. */
  absorbance: number | null;
  flags: number;
  problem: string | null;
}

export function absorbanceFromCounts(
  sample_counts: number,
  dark_counts: number | null,
  blank: BlankReference,
  limits: CountsLimits = DEFAULT_COUNTS_LIMITS,
): CountsAbsorbance {
  const dark = dark_counts ?? limits.defaultDark_counts;
  let flags = ReadingFlag.fromIntensity;
  if (sample_counts >= limits.saturationFraction * limits.fullScale_counts) flags |= ReadingFlag.saturated;
  if (!(blank.netBlank_counts > 0)) return { absorbance: null, flags, problem: 'the blank is at or below the dark level; take the blank again' };
  if (sample_counts < 0 || dark < 0) return { absorbance: null, flags, problem: `negative counts (sample ${sample_counts}, dark ${dark}); check the detector` };
  const net = sample_counts - dark;
  // No light above the dark: the transmittance is zero or negative, the absorbance infinite.
  if (net <= 0) return { absorbance: null, flags, problem: `sample counts ${sample_counts} at or below the dark level ${dark}; the cell is opaque or the shutter closed` };
  // + 0 turns −0 (sample equal to the blank) into 0, which prints as 0.00000.
  const absorbance = -Math.log10(net / blank.netBlank_counts) + 0;
  if (absorbance > limits.reliableLimit_AU) flags |= ReadingFlag.beyondRange;
  return { absorbance, flags, problem: null };
}

export interface BaselineRules {
  /**
   * Warn that the lamp has not warmed up when the blank drifts faster than this, in
   * absorbance units per minute. Rule of thumb (ours): a warmed-up lamp drifts well under
   * a milli-absorbance per minute; in its first quarter-hour or so it drifts more.
   */
  maxDrift_AUperMin: number;
  /** Warn about a noisy baseline when the blank's SD, in absorbance units, is above this. */
  maxNoise_AU: number;
  /** Fewest blank lines for a check. */
  minPoints: number;
}

export const DEFAULT_BASELINE_RULES: Readonly<BaselineRules> = Object.freeze({ maxDrift_AUperMin: 0.001, maxNoise_AU: 0.002, minPoints: 5 });

export interface BaselineCheck {
  points: number;
  meanNet_counts: number;
  sdNet_counts: number;
  /** Noise as absorbance: σ_A = σ_I / (I ln 10) = 0.434 σ_I / I. */
  noise_AU: number;
  /** Least-squares slope of the net blank intensity with time. */
  slope_countsPerS: number;
  /** Drift as absorbance per minute (positive: the blank reads as if absorbance were rising). */
  drift_AUperMin: number;
  driftStdErr_AUperMin: number;
  warmedUp: boolean;
  warnings: string[];
}

export interface BlankResult {
  reference: BlankReference | null;
  check: BaselineCheck | null;
  /** Why there is no reference, or null. */
  problem: string | null;
  /** Plain-language warnings (saturation, drift, noise, too short). */
  warnings: string[];
}

/**
 * The blank from the lines read while the blank cuvette was in: the mean net intensity is
 * the reference, and its scatter and trend are the baseline check.
 */
export function analyzeBlank(
  time_s: ArrayLike<number>,
  sample_counts: ArrayLike<number>,
  dark_counts: ArrayLike<number | null>,
  wavelength_nm: number,
  limits: CountsLimits = DEFAULT_COUNTS_LIMITS,
  rules: BaselineRules = DEFAULT_BASELINE_RULES,
): BlankResult {
  const n = time_s.length;
  if (n === 0) return { reference: null, check: null, problem: 'no blank lines arrived; check that the device answers the blank command', warnings: [] };
  const net = new Float64Array(n);
  let darkSum = 0;
  let saturated = 0;
  for (let i = 0; i < n; i++) {
    const d = dark_counts[i] ?? limits.defaultDark_counts;
    darkSum += d;
    net[i] = sample_counts[i]! - d;
    if (sample_counts[i]! >= limits.saturationFraction * limits.fullScale_counts) saturated++;
  }
  let mean = 0;
  for (let i = 0; i < n; i++) mean += net[i]!;
  mean /= n;
  if (!(mean > 0)) return { reference: null, check: null, problem: 'the blank reads at or below the dark level; is the lamp on and the light path clear?', warnings: [] };
  const reference: BlankReference = { netBlank_counts: mean, dark_counts: darkSum / n, points: n, time_s: time_s[n - 1]!, wavelength_nm };
  const warnings: string[] = [];
  if (saturated > 0) warnings.push(`the blank saturates the detector on ${saturated} of ${n} lines; lower the lamp or the gain, then take the blank again`);
  if (n < Math.max(3, rules.minPoints)) {
    warnings.push(`the blank was read only ${n} time(s); read it longer for a baseline check`);
    return { reference, check: null, problem: null, warnings };
  }
  // Straight line through (t, I_net) by least squares: slope, its standard error, residual SD.
  let tMean = 0;
  for (let i = 0; i < n; i++) tMean += time_s[i]!;
  tMean /= n;
  let sxx = 0, sxy = 0, syy = 0;
  for (let i = 0; i < n; i++) {
    const dt = time_s[i]! - tMean, dy = net[i]! - mean;
    sxx += dt * dt; sxy += dt * dy; syy += dy * dy;
  }
  const sd = Math.sqrt(syy / (n - 1));
  const slope = sxx > 0 ? sxy / sxx : 0;
  const rss = Math.max(0, syy - slope * sxy);
  const slopeSE = sxx > 0 ? Math.sqrt(rss / (n - 2) / sxx) : Infinity;
  // A(t) = −log10(I(t)/I_mean): dA/dt = −slope / (I ln 10); per minute × 60.
  const perMin = -60 / (mean * Math.LN10);
  const drift = slope * perMin;
  const driftSE = slopeSE * Math.abs(perMin);
  const noise = sd / (mean * Math.LN10);
  // Drift counts only when it is both past the rule and more than the noise could fake: the
  // slope differs from zero at the 95% level (two-sided t test on n − 2 degrees of freedom).
  // A short blank cannot see a slow drift, and then says nothing rather than raise a false alarm.
  const tCrit = studentTQuantile(0.975, n - 2);
  const warmedUp = !(Math.abs(drift) > rules.maxDrift_AUperMin && Math.abs(drift) > tCrit * driftSE);
  if (!warmedUp) warnings.push(`the blank drifts ${drift.toFixed(4)} AU/min (more than ${rules.maxDrift_AUperMin} AU/min): the lamp may not have warmed up; wait and take the blank again`);
  if (noise > rules.maxNoise_AU) warnings.push(`the blank is noisy (SD ${noise.toFixed(4)} AU, more than ${rules.maxNoise_AU} AU); check the cuvette for bubbles or smears`);
  return {
    reference,
    check: { points: n, meanNet_counts: mean, sdNet_counts: sd, noise_AU: noise, slope_countsPerS: slope, drift_AUperMin: drift, driftStdErr_AUperMin: driftSE, warmedUp, warnings: warnings.slice() },
    problem: null,
    warnings,
  };
}

/** %T or fractional transmittance to absorbance: A = −log10 T = 2 − log10(%T). Null when T ≤ 0. */
export function absorbanceFromTransmittance(transmittance: number): number | null {
  return transmittance > 0 && Number.isFinite(transmittance) ? -Math.log10(transmittance) : null;
}
