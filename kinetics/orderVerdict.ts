/**
 * Which integer order the data support. The evidence is the nonlinear fits to the
 * raw signal, never R² of the linearised plots:
 *  - Akaike weights from AICc: w_i = exp(−Δ_i/2) / Σ exp(−Δ_j/2), Δ_i = AICc_i − min AICc
 *    (Burnham & Anderson, model selection by information criteria);
 *  - a runs test on the signs of the best model's residuals (a wrong curve leaves long
 *    runs of one sign).
 * The verdict stays `undecided` until one half-life (50% converted) is covered by the
 * account of every integer order's fit (the least of their fractions converted), since orders look alike at low conversion (common practice), and
 * then until its Akaike weight is at least 0.95 and the runs test does not reject it
 * (p ≥ 0.05).
 */
import type { IntegerOrder, Verdict } from './analysisTypes';

export const VERDICT_MIN_WEIGHT = 0.95;
export const VERDICT_MIN_RUNS_P = 0.05;
export const VERDICT_MIN_FRACTION = 0.5;

export interface OrderEvidence {
  aicc: number | null;
  runsTestP: number | null;
  /** Fraction converted so far under this order's own fit. */
  fractionConverted: number | null;
}

export type EvidenceByOrder = Record<IntegerOrder, OrderEvidence>;

const ORDERS: IntegerOrder[] = ['zero', 'first', 'second'];

export function akaikeWeights(aicc: (number | null)[]): (number | null)[] {
  const finite = aicc.filter((a): a is number => a !== null && Number.isFinite(a));
  if (finite.length === 0) return aicc.map(() => null);
  const min = Math.min(...finite);
  const rel = aicc.map((a) => (a !== null && Number.isFinite(a) ? Math.exp(-(a - min) / 2) : 0));
  const sum = rel.reduce((s, x) => s + x, 0);
  return aicc.map((a, i) => (a === null ? null : rel[i] / sum));
}

export function orderVerdict(e: EvidenceByOrder): Verdict {
  const w = akaikeWeights(ORDERS.map((o) => e[o].aicc));
  const weights = { zero: w[0], first: w[1], second: w[2] };
  if (w.some((x) => x === null)) {
    return { order: 'undecided', weights, reason: 'not every order could be fitted yet' };
  }
  let best = 0;
  for (let i = 1; i < 3; i++) if ((w[i] as number) > (w[best] as number)) best = i;
  const order = ORDERS[best];
  const wBest = w[best] as number;
  // Covered only when every order agrees: a wrong curve can misplace A∞ and so overstate
  // the conversion (first order fitted to early second-order data puts A∞ too high).
  const fs = ORDERS.map((o) => e[o].fractionConverted);
  const f = fs.some((x) => x === null) ? null : Math.min(...(fs as number[]));
  const pct = (x: number): string => `${(100 * x).toFixed(0)}%`;
  if (f === null || f < VERDICT_MIN_FRACTION) {
    return {
      order: 'undecided', weights,
      reason: `only ${f === null ? 'an unknown part' : pct(f)} converted (by the least of the three fits); orders cannot be told apart before one half-life (50%)`,
    };
  }
  if (wBest < VERDICT_MIN_WEIGHT) {
    return { order: 'undecided', weights, reason: `${order} order leads with Akaike weight ${wBest.toFixed(3)}, below the ${VERDICT_MIN_WEIGHT} needed` };
  }
  const p = e[order].runsTestP;
  if (p === null) {
    return { order: 'undecided', weights, reason: `${order} order leads but its residuals could not be checked for runs` };
  }
  if (p < VERDICT_MIN_RUNS_P) {
    return {
      order: 'undecided', weights,
      reason: `${order} order leads (weight ${wBest.toFixed(3)}) but its residuals run in long stretches of one sign (runs test p = ${p.toPrecision(2)}): no integer order fits well`,
    };
  }
  return {
    order, weights,
    reason: `${order} order: Akaike weight ${wBest.toFixed(3)} ≥ ${VERDICT_MIN_WEIGHT}, residuals random (runs test p = ${p.toPrecision(2)}), at least ${pct(f)} converted by every order's fit`,
  };
}
