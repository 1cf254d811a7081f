/**
 * The isolation check of a pseudo-first-order series: the excess reagent B must be in
 * large excess over the followed species A, so that [B] stays near its starting value
 * while A reacts. A ratio [B]₀/(ν[A]₀) of about 10 or more is the usual rule (common
 * practice); ν is the stoichiometry, mol of B used per mol of A (1 unless the study says).
 *
 * Below that, B is used up as the run goes and k_obs is biased low. The estimate used:
 * [B] falls linearly with the conversion x of A, [B] = [B]₀ − ν[A]₀x, and the fitted
 * k_obs is taken to reflect the mean [B] over the observed conversion f,
 * [B]mean = [B]₀ − ν[A]₀ f/2, so k_obs/(k[B]₀^m) − 1 ≈ (1 − ν[A]₀ f/(2[B]₀))^m − 1.
 * This is a first approximation (the mean over conversion, not over time); it says how
 * large the bias is, not a correction to apply.
 */

/** Below this ratio [B]₀/(ν[A]₀) a warning is given (common practice: "ten-fold excess"). */
export const ISOLATION_MIN_EXCESS_RATIO = 10;

export interface IsolationInput {
  label: string;
  /** Excess reagent after mixing, mol/L. */
  excess_M: number;
  /** Followed species after mixing, mol/L. */
  followed_M: number;
  /** mol of excess reagent used per mol of followed species. */
  stoichiometry: number;
  /** Fraction of A converted by the last reading (null: unknown, full conversion assumed). */
  fractionConverted: number | null;
  /** Order in the excess reagent used for the bias (1 when not known). */
  orderInExcess: number;
}

export interface IsolationCheck {
  label: string;
  excessRatio: number;
  sufficient: boolean;
  conversionUsed: number;
  meanExcess_M: number;
  /** Relative bias of k_obs against k[B]₀^m (negative: k_obs low). */
  kObsBiasRelative: number;
  warning: string | null;
}

export function isolationCheck(r: IsolationInput): IsolationCheck {
  const ratio = r.excess_M / (r.stoichiometry * r.followed_M);
  const f = r.fractionConverted === null ? 1 : Math.min(1, Math.max(0, r.fractionConverted));
  const used = r.stoichiometry * r.followed_M * f;
  const mean = r.excess_M - used / 2;
  const bias = mean > 0 ? (mean / r.excess_M) ** r.orderInExcess - 1 : -1;
  const sufficient = ratio >= ISOLATION_MIN_EXCESS_RATIO;
  let warning: string | null = null;
  const conv = r.fractionConverted === null ? 'full conversion assumed' : `${(100 * f).toFixed(0)}% converted`;
  if (used >= r.excess_M) {
    warning = `${r.label}: the excess reagent (${r.excess_M} M) is used up before the followed species (${r.followed_M} M, ${r.stoichiometry} per mol), so the run is not pseudo-first-order; use at least ${ISOLATION_MIN_EXCESS_RATIO} times more of it.`;
  } else if (!sufficient) {
    warning = `${r.label}: the excess reagent is only ${ratio.toFixed(1)} times the followed species (about ${ISOLATION_MIN_EXCESS_RATIO} is needed), so it is used up as the run goes: with ${conv}, k_obs is about ${(100 * -bias).toFixed(1)}% low (from the mean [B] over the conversion).`;
  }
  return { label: r.label, excessRatio: ratio, sufficient, conversionUsed: f, meanExcess_M: mean, kObsBiasRelative: bias, warning };
}
