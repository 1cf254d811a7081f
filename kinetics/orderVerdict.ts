/**
 * Which rate law the data support. The evidence is the nonlinear fits to the raw
 * signal, never R² of the linearised plots:
 *  - Akaike weights from AICc over the integer orders: w_i = exp(−Δ_i/2) / Σ exp(−Δ_j/2),
 *    Δ_i = AICc_i − min AICc (Burnham & Anderson, model selection by information criteria);
 *  - a runs test on the signs of each model's residuals (a wrong curve leaves long runs
 *    of one sign);
 *  - the n-th order fit, with n and its standard error.
 * Nothing is decided before one half-life (50% converted) is covered by the account of
 * every integer order's fit (the least of their fractions), since orders look alike at
 * low conversion (common practice). Then, in this order:
 *  - `fractional`: the n-th order fit is clearly better than every integer order
 *    (ΔAICc ≥ FRACTIONAL_MIN_DELTA_AICC: Burnham & Anderson's "essentially no support"
 *    for the others), its residuals are random, n's 95% interval excludes the nearest
 *    integer and |n − integer| ≥ FRACTIONAL_MIN_DISTANCE: "order about 1.5";
 *  - `noSimpleLaw`: neither the best integer order nor the n-th order leaves random
 *    residuals: the readings bend in a way no simple rate law does, and the verdict names
 *    what usually causes that and what it does to k;
 *  - an integer order: Akaike weight ≥ 0.95 and random residuals (runs test p ≥ 0.05);
 *  - otherwise `undecided`, with the reason.
 */
import type { IntegerOrder, Verdict } from './analysisTypes';
import { t95 } from './modelSummary';

export const VERDICT_MIN_WEIGHT = 0.95;
export const VERDICT_MIN_RUNS_P = 0.05;
export const VERDICT_MIN_FRACTION = 0.5;
export const FRACTIONAL_MIN_DELTA_AICC = 10;
export const FRACTIONAL_MIN_DISTANCE = 0.1;

export interface OrderEvidence {
  aicc: number | null;
  runsTestP: number | null;
  /** Fraction converted so far under this order's own fit. */
  fractionConverted: number | null;
}

export interface NthEvidence extends OrderEvidence {
  order: number | null;
  orderStdErr: number | null;
  dof: number | null;
}

export type EvidenceByOrder = Record<IntegerOrder, OrderEvidence> & { nth?: NthEvidence; highestAbsorbance_AU?: number };

const ORDERS: IntegerOrder[] = ['zero', 'first', 'second'];

export function akaikeWeights(aicc: (number | null)[]): (number | null)[] {
  const finite = aicc.filter((a): a is number => a !== null && Number.isFinite(a));
  if (finite.length === 0) return aicc.map(() => null);
  const min = Math.min(...finite);
  const rel = aicc.map((a) => (a !== null && Number.isFinite(a) ? Math.exp(-(a - min) / 2) : 0));
  const sum = rel.reduce((s, x) => s + x, 0);
  return aicc.map((a, i) => (a === null ? null : rel[i] / sum));
}

/** What usually bends a run away from every simple rate law, most likely first. */
export function likelyCauses(highestAbsorbance_AU: number | undefined): string[] {
  const stray = 'stray light or a photometer that is not linear at high absorbance (the early, high readings sit low)';
  const rest = [
    'the temperature drifting during the run (k itself changes as the cell warms or cools)',
    'a second process: a slower reaction, an intermediate or product that absorbs too, the lamp bleaching the sample, or something settling in the cell',
  ];
  return highestAbsorbance_AU !== undefined && highestAbsorbance_AU > 1 ? [stray, ...rest] : [...rest, stray];
}

export const NO_SIMPLE_LAW_EFFECT_ON_K =
  'k from these fits describes the curve, not a rate constant: its interval covers the noise only, and the misfit can move k by more than the interval (stray light makes it low, warming makes the late part fast). Dilute below about 1 AU, thermostat the cell, and repeat before quoting k.';

const undecided = (weights: Verdict['weights'], reason: string): Verdict =>
  ({ order: 'undecided', weights, fractionalOrder: null, reason, likelyCauses: [], effectOnK: null });

export function orderVerdict(e: EvidenceByOrder): Verdict {
  const w = akaikeWeights(ORDERS.map((o) => e[o].aicc));
  const weights = { zero: w[0], first: w[1], second: w[2] };
  if (w.some((x) => x === null)) return undecided(weights, 'not every order could be fitted yet');
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
    return undecided(weights, `only ${f === null ? 'an unknown part' : pct(f)} converted (by the least of the three fits); orders cannot be told apart before one half-life (50%)`);
  }
  const p = e[order].runsTestP;
  const nth = e.nth;
  const nthP = nth && nth.aicc !== null ? nth.runsTestP : null;
  if (nth && nth.aicc !== null && nth.order !== null && nth.orderStdErr !== null && nth.dof !== null && nthP !== null) {
    const minInteger = Math.min(...ORDERS.map((o) => e[o].aicc as number));
    const nearest = Math.round(nth.order);
    const half = t95(nth.dof) * nth.orderStdErr;
    const excludes = Math.abs(nth.order - nearest) > half;
    if (minInteger - nth.aicc >= FRACTIONAL_MIN_DELTA_AICC && nthP >= VERDICT_MIN_RUNS_P && excludes
      && Math.abs(nth.order - nearest) >= FRACTIONAL_MIN_DISTANCE) {
      return {
        order: 'fractional', weights, fractionalOrder: nth.order, likelyCauses: [], effectOnK: null,
        reason: `order about ${nth.order.toFixed(1)}, not an integer order: the n-th order fit (n = ${nth.order.toFixed(3)} ± ${nth.orderStdErr.toPrecision(2)}) is better than every integer order by ΔAICc ${(minInteger - nth.aicc).toFixed(0)}, its residuals are random (runs test p = ${nthP.toPrecision(2)}) and n's 95% interval excludes ${nearest}`,
      };
    }
  }
  if (p !== null && p < VERDICT_MIN_RUNS_P && nthP !== null && nthP < VERDICT_MIN_RUNS_P) {
    return {
      order: 'noSimpleLaw', weights, fractionalOrder: null,
      reason: `the readings do not follow a simple rate law: every fit, the n-th order one included (n = ${nth!.order === null ? 'not fitted' : nth!.order.toFixed(2)}), misses in long stretches of one sign (runs test p = ${p.toPrecision(2)} for ${order} order, ${nthP.toPrecision(2)} for n-th order)`,
      likelyCauses: likelyCauses(e.highestAbsorbance_AU),
      effectOnK: NO_SIMPLE_LAW_EFFECT_ON_K,
    };
  }
  if (wBest < VERDICT_MIN_WEIGHT) {
    return undecided(weights, `${order} order leads with Akaike weight ${wBest.toFixed(3)}, below the ${VERDICT_MIN_WEIGHT} needed`);
  }
  if (p === null) return undecided(weights, `${order} order leads but its residuals could not be checked for runs`);
  if (p < VERDICT_MIN_RUNS_P) {
    return undecided(weights, `${order} order leads (weight ${wBest.toFixed(3)}) but its residuals run in long stretches of one sign (runs test p = ${p.toPrecision(2)}): no integer order fits well`);
  }
  return {
    order, weights, fractionalOrder: null, likelyCauses: [], effectOnK: null,
    reason: `${order} order: Akaike weight ${wBest.toFixed(3)} ≥ ${VERDICT_MIN_WEIGHT}, residuals random (runs test p = ${p.toPrecision(2)}), at least ${pct(f)} converted by every order's fit`,
  };
}
