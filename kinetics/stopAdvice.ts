/**
 * When to stop a run: gathering → estimating → settled → farEnough.
 *  - gathering: too few readings in the fit window, or no usable fit yet;
 *  - estimating: the driving model's k is fitted but its 95% CI half-width is wider
 *    than `precision` × k, or has not stayed narrow long enough;
 *  - settled: the CI has stayed within `precision` × k over the recent stretch of data
 *    (at least HOLD_MIN_POINTS readings and HOLD_FRACTION of the readings so far, but
 *    never more than HOLD_HALF_LIVES of a half-life's readings, at least
 *    HOLD_MIN_SPARSE: a run read every 28 s must not wait 20 readings, 3 half-lives, for
 *    a CI that is already narrow). Counted in readings, never in wall time, so a replay
 *    at any speed gives the same advice;
 *  - farEnough: settled and the target fraction converted reached: stop is suggested.
 * While the order is undecided, the input is already the worst over every order still
 * plausible (analysisReport.ts): the widest CI, the least fraction converted.
 * Settled with the order decided before the target: an early stop is possible, and
 * the advice says what it costs (k's CI now against the CI predicted at the target).
 */
import type { AdviceState, ModelName, StopAdvice } from './analysisTypes';

export const MIN_POINTS_TO_ESTIMATE = 10;
export const HOLD_MIN_POINTS = 20;
export const HOLD_FRACTION = 0.1;
export const HOLD_HALF_LIVES = 0.2;
export const HOLD_MIN_SPARSE = 2;

export interface AdviceInput {
  /** Readings in the fit window so far. */
  points: number;
  /** Time of the latest reading (s, data time). */
  time_s: number;
  fitUsable: boolean;
  /** Relative 95% CI half-width of k now (driving model). */
  kRelCI95Now: number | null;
  kRelCI95AtTarget: number | null;
  fractionConverted: number | null;
  targetFraction: number;
  targetHalfLives: number;
  precision: number;
  orderDecided: boolean;
  drivingModel: string;
  predictedAt_s: number | null;
  predictedAtStdErr_s: number | null;
  /** The models the advice holds for (the verdict's, or every plausible order while undecided). */
  plausibleModels: ModelName[];
  /** Readings per half-life at the current interval, when a fit gives the half-life. */
  readingsPerHalfLife: number | null;
  /** Why no usable fit can give advice yet, when one is known (a flat run, an end value on its bound). */
  notUsableReason?: string;
}

/** Readings the CI must stay narrow over before the advice counts k as settled. */
export function holdReadings(points: number, readingsPerHalfLife: number | null): number {
  const hold = Math.max(HOLD_MIN_POINTS, Math.ceil(HOLD_FRACTION * points));
  if (readingsPerHalfLife === null || !(readingsPerHalfLife > 0)) return hold;
  return Math.min(hold, Math.max(HOLD_MIN_SPARSE, Math.ceil(HOLD_HALF_LIVES * readingsPerHalfLife)));
}

const pct = (x: number): string => `${(100 * x).toFixed(x < 0.01 ? 2 : 1)}%`;
const orderWord = (m: string): string => (m === 'nth' ? 'n-th order' : `${m} order`);

export class StopAdvisor {
  private narrowSince: number | null = null;
  private firstSuggested_s: number | null = null;

  update(a: AdviceInput): StopAdvice {
    const base = {
      predictedAt_s: a.predictedAt_s, predictedAtStdErr_s: a.predictedAtStdErr_s,
      kRelCI95Now: a.kRelCI95Now, kRelCI95AtTarget: a.kRelCI95AtTarget, plausibleModels: a.plausibleModels,
    };
    if (a.points < MIN_POINTS_TO_ESTIMATE || !a.fitUsable || a.kRelCI95Now === null) {
      this.narrowSince = null;
      const reason = a.points < MIN_POINTS_TO_ESTIMATE
        ? `gathering readings (${a.points} of at least ${MIN_POINTS_TO_ESTIMATE} in the fit window)`
        : `gathering readings: ${a.notUsableReason ?? 'no usable fit yet'}`;
      return this.finish('gathering', false, false, reason, base);
    }
    const narrow = a.kRelCI95Now <= a.precision;
    if (!narrow) this.narrowSince = null;
    else if (this.narrowSince === null) this.narrowSince = a.points;
    const hold = holdReadings(a.points, a.readingsPerHalfLife);
    const held = this.narrowSince !== null && a.points - this.narrowSince >= hold;
    const f = a.fractionConverted ?? 0;
    const reached = f >= a.targetFraction;
    const ciNow = a.plausibleModels.length > 1
      ? `k ±${pct(a.kRelCI95Now)} (95% CI, the widest of ${a.plausibleModels.map(orderWord).join(', ')}: the order is not decided)`
      : `k ±${pct(a.kRelCI95Now)} (95% CI, ${orderWord(a.drivingModel)})`;
    if (!held) {
      const why = narrow
        ? `${ciNow} is within ±${pct(a.precision)}; waiting for it to hold over ${hold} readings`
        : `${ciNow}, wider than the ±${pct(a.precision)} asked for`;
      return this.finish('estimating', false, false, `estimating: ${why}`, base);
    }
    if (reached) {
      if (this.firstSuggested_s === null) this.firstSuggested_s = a.time_s;
      return this.finish('farEnough', true, false,
        `stop: ${ciNow} has settled and ${pct(f)} is converted${a.plausibleModels.length > 1 ? ' by the least of them' : ''} (target ${a.targetHalfLives} half-lives, ${pct(a.targetFraction)})`, base);
    }
    const at = a.predictedAt_s !== null ? ` at about ${a.predictedAt_s.toFixed(0)} s` : '';
    if (a.orderDecided) {
      const cost = a.kRelCI95AtTarget !== null
        ? `stopping now gives ${ciNow}; going on to the target${at} would give about ±${pct(a.kRelCI95AtTarget)}`
        : `stopping now gives ${ciNow}`;
      return this.finish('settled', false, true, `settled, order decided: an early stop is possible (${cost})`, base);
    }
    return this.finish('settled', false, false, `settled (${ciNow}); the target ${pct(a.targetFraction)} converted is reached${at}`, base);
  }

  private finish(state: AdviceState, suggested: boolean, earlyStopPossible: boolean, reason: string,
    base: Pick<StopAdvice, 'predictedAt_s' | 'predictedAtStdErr_s' | 'kRelCI95Now' | 'kRelCI95AtTarget' | 'plausibleModels'>): StopAdvice {
    return { state, suggested, atTime_s: this.firstSuggested_s, earlyStopPossible, reason, ...base };
  }
}
