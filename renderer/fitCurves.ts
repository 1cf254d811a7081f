/**
 * The fitted curves the chart draws over the readings, evaluated from the fitted
 * parameters the service sends (the screen fits nothing itself), and the linearised
 * views a chemist uses to judge the order by eye:
 *   first order:  ln(A − A∞) = ln(A0 − A∞) − k t   (a straight line)
 *   second order: 1/(A − A∞) = 1/(A0 − A∞) + k t   (a straight line)
 * Pure: no DOM.
 */
import type { AnalysisResultView } from '../main/bridge/contract';
import { trueAbsorbance } from '../kinetics/reactionModel';
import type { ChartView } from './store';

export type CurveModel = 'zero' | 'first' | 'second' | 'nth';
export const CURVE_MODELS: readonly CurveModel[] = ['zero', 'first', 'second', 'nth'];

export interface CurveParameters {
  order: number;
  k: number;
  a0: number;
  aInf: number | null;
  /** Time after mixing (s) at which the fitted signal is a0: the fit window's start, or its first reading. */
  origin_s: number;
}

/**
 * The parameters of one fitted model, or null when that fit is not available.
 * `firstInWindow_s` is the time of the first reading the fit saw, the origin of its
 * time axis when the window has no set start.
 */
export function curveParameters(result: AnalysisResultView, model: CurveModel, firstInWindow_s: number): CurveParameters | null {
  const m = result.models[model];
  if (m.k === null || m.a0 === null || !Number.isFinite(m.k) || !Number.isFinite(m.a0)) return null;
  const order = model === 'zero' ? 0 : model === 'first' ? 1 : model === 'second' ? 2 : result.models.nth.order;
  if (order === null || !Number.isFinite(order)) return null;
  return { order, k: m.k, a0: m.a0, aInf: m.aInf, origin_s: result.window.from_s ?? firstInWindow_s };
}

/**
 * Absorbance of the fitted model at time t after mixing (s): the integrated rate laws
 * with τ = t − origin, falling or rising (an absorbing product forming) alike; zero
 * order is the straight line until it meets its end value.
 */
export function curveAbsorbance(p: CurveParameters, t_s: number): number {
  return trueAbsorbance({ order: p.order, k: p.k, a0: p.a0, aInf: p.aInf ?? 0 }, t_s - p.origin_s);
}

/** A∞ the linearised view subtracts: the first-order fit's for ln, the second-order's for 1/(A − A∞). */
export function viewBaseline(result: AnalysisResultView | null, view: ChartView): number | null {
  if (!result || view === 'absorbance') return null;
  const m = view === 'ln' ? result.models.first : result.models.second;
  return m.aInf ?? result.models.first.aInf ?? null;
}

/**
 * A reading (or a curve value) as the view shows it; null where the view has no value
 * (ln of A − A∞ ≤ 0, or 1/(A − A∞) of such a point: the noise near the end of a run
 * crosses A∞, and those points cannot be drawn in a linearised view).
 */
export function viewValue(view: ChartView, absorbance: number, baseline: number | null, rising = false): number | null {
  if (view === 'absorbance') return absorbance;
  // A rising run's reacting part is A∞ − A: the views show |A − A∞| on the run's side.
  const d = (rising ? -1 : 1) * (absorbance - (baseline ?? 0));
  if (!(d > 0)) return null;
  return view === 'ln' ? Math.log(d) : 1 / d;
}

export function viewAxisLabel(view: ChartView, signal: string): string {
  if (view === 'ln') return `ln(${signal} − ${signal}∞)`;
  if (view === 'reciprocal') return `1 / (${signal} − ${signal}∞)`;
  return signal;
}
