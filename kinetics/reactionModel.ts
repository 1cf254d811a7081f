/**
 * The physical model the simulator plays: a reactant whose absorbance decays by an
 * integrated rate law (or an absorbing product that forms as it goes: aInf above a0),
 * read through an instrument with transmittance noise.
 * Rate = −d[A]/dt = k[A]^n (no stoichiometric factor), with [A] the reacting part of the
 * signal, |A − A∞|. Pure: used by the `rateline simulate` command and by the simulated
 * instrument in acquisition/.
 */
import { seededRandom, type RandomSource } from './random';

export type SimulatedOrder = 'zero' | 'first' | 'second' | number;

export interface ReactionParameters {
  order: SimulatedOrder;
  /** Rate constant in signal units: AU s⁻¹ (zero), s⁻¹ (first), AU⁻¹ s⁻¹ (second), AU^(1−n) s⁻¹. */
  k: number;
  /** Absorbance at time zero (mixing). */
  a0: number;
  /** End absorbance, colour left when the reaction is over; above a0 for a product-forming run. */
  aInf: number;
}

/** Numeric reaction order. */
export function orderValue(order: SimulatedOrder): number {
  return order === 'zero' ? 0 : order === 'first' ? 1 : order === 'second' ? 2 : order;
}

/** Noise-free absorbance at time t (s) after mixing. */
export function trueAbsorbance(p: ReactionParameters, time_s: number): number {
  const t = Math.max(0, time_s);
  const sign = p.a0 >= p.aInf ? 1 : -1; // falling (reactant used up) or rising (product formed)
  const c0 = sign * (p.a0 - p.aInf); // the part of the signal that reacts
  const n = orderValue(p.order);
  if (c0 <= 0) return p.a0;
  let c: number;
  if (n === 1) {
    c = c0 * Math.exp(-p.k * t);
  } else if (n === 0) {
    c = Math.max(0, c0 - p.k * t);
  } else {
    // [A]^(1−n) = [A]0^(1−n) + (n − 1) k t
    const base = Math.pow(c0, 1 - n) + (n - 1) * p.k * t;
    c = base <= 0 ? 0 : Math.pow(base, 1 / (1 - n));
  }
  return p.aInf + sign * c;
}

export interface InstrumentNoise {
  /** Standard deviation of the transmittance reading (dimensionless). Demo: 0.001. */
  sigmaT: number;
}

/**
 * One noisy absorbance reading of a true absorbance, as the instrument sees it:
 * T = 10^(−A) + N(0, σ_T), A = −log10 T, so σ_A ≈ 0.434 σ_T / T grows with absorbance.
 */
export function noisyAbsorbance(trueA: number, noise: InstrumentNoise, rng: RandomSource): number {
  const t = Math.pow(10, -trueA) + noise.sigmaT * rng.normal();
  // A transmittance at or below zero cannot be read; the instrument reports its floor.
  return -Math.log10(Math.max(t, 1e-6));
}

/** σ_A from σ_T at absorbance A: σ_A = σ_T / (T ln 10) = 0.434 σ_T / T. */
export function absorbanceSigma(absorbance: number, sigmaT: number): number {
  return sigmaT / (Math.pow(10, -absorbance) * Math.LN10);
}

export interface SimulatedRunSpec extends ReactionParameters, InstrumentNoise {
  dt_s: number;
  duration_s: number;
  seed: number;
  /** Number of bubble spikes (a brief jump up in absorbance) placed at random points. */
  spikes?: number;
}

export interface SimulatedRun {
  time_s: Float64Array;
  absorbance: Float64Array;
  /** Indices of the points that carry a spike. */
  spikeIndices: number[];
}

/** A whole synthetic run, from t = 0 to duration in steps of dt. */
export function simulateRun(spec: SimulatedRunSpec): SimulatedRun {
  const rng = seededRandom(spec.seed);
  const n = Math.floor(spec.duration_s / spec.dt_s + 1e-9) + 1;
  const time_s = new Float64Array(n);
  const absorbance = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const t = i * spec.dt_s;
    time_s[i] = t;
    absorbance[i] = noisyAbsorbance(trueAbsorbance(spec, t), spec, rng);
  }
  const spikeIndices: number[] = [];
  const spikes = Math.min(spec.spikes ?? 0, n);
  while (spikeIndices.length < spikes) {
    const i = Math.floor(rng.uniform() * n);
    if (spikeIndices.includes(i)) continue;
    // A bubble scatters light: the reading jumps up by a few tenths of an AU.
    absorbance[i] += 0.1 + 0.2 * rng.uniform();
    spikeIndices.push(i);
  }
  spikeIndices.sort((a, b) => a - b);
  return { time_s, absorbance, spikeIndices };
}

/**
 * The demo scenario (invented demo data): brilliant blue FCF bleached by excess
 * hypochlorite, 5.0 µM dye (ε ≈ 1.30 × 10⁵ M⁻¹ cm⁻¹, 1.00 cm) so A0 ≈ 0.65,
 * 0.010 M hypochlorite and k₂ = 0.35 M⁻¹ s⁻¹ at 25.0 °C, so k_obs = 3.5 × 10⁻³ s⁻¹.
 */
export const DEMO_RUN: Readonly<SimulatedRunSpec> = Object.freeze({
  order: 'first',
  k: 3.5e-3,
  a0: 0.65,
  aInf: 0.005,
  sigmaT: 0.001,
  dt_s: 1,
  duration_s: 900,
  seed: 1,
  spikes: 0,
});
