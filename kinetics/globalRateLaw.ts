/**
 * The rate law fitted to all runs of a concentration series at once, from their
 * readings: each run j follows A_j(t) = A∞_j + (A0_j − A∞_j) exp(−k [B]_j^m t), with
 * k and the order m in B shared by every run and A0, A∞ each run's own. It checks the
 * two-step result (k_obs per run, then the line in ln [B]): the two use the same data
 * differently, so a disagreement points at a run the two-step line weighs wrongly or
 * at a rate law that is not k [B]^m.
 *
 * Readings are weighted alike (one photometer, one noise level: common practice), and
 * the core's covariance is scaled by the reduced χ² (kinetics/fit/leastSquares.ts).
 * The fit is done twice: with m free (the order), and with m held at a whole order
 * (k in M^(−m) s⁻¹, comparable with the two-step k through the origin).
 */
import { fitLeastSquares } from './fit/leastSquares';
import type { ParameterSpec } from './fit/fitTypes';

export interface GlobalRun {
  label: string;
  concentration_M: number;
  time_s: ArrayLike<number>;
  absorbance: ArrayLike<number>;
  /** Starting values from the run's own fit. */
  kObsStart: number;
  a0Start: number;
  aInfStart: number;
}

export interface GlobalParameter {
  value: number;
  stdErr: number | null;
  ci95: [number, number] | null;
}

export interface GlobalRateLawResult {
  ok: true;
  /** m free. */
  order: GlobalParameter;
  /** k with m held at `heldOrder`. */
  k: GlobalParameter;
  heldOrder: number;
  readings: number;
  runs: number;
  dof: number;
  residualSd_AU: number | null;
  warnings: string[];
}

export type GlobalRateLawOutcome = GlobalRateLawResult | { ok: false; error: string };

/** Stacks the runs (time from each run's first reading) and fits; `order` null: m free. */
function stackedFit(runs: GlobalRun[], order: number | null, kStart: number, mStart: number) {
  let n = 0;
  for (const r of runs) n += r.time_s.length;
  const x = new Float64Array(n), y = new Float64Array(n);
  const tau = new Float64Array(n), lnB = new Float64Array(n), runOf = new Int32Array(n);
  let i = 0;
  runs.forEach((r, j) => {
    const t0 = r.time_s[0]!;
    for (let q = 0; q < r.time_s.length; q++, i++) {
      x[i] = i; y[i] = r.absorbance[q]!; tau[i] = r.time_s[q]! - t0; lnB[i] = Math.log(r.concentration_M); runOf[i] = j;
    }
  });
  const params: ParameterSpec[] = [
    { name: 'k', value: kStart, min: 0 },
    { name: 'm', value: order ?? mStart, fixed: order !== null, min: -1, max: 4 },
  ];
  runs.forEach((r, j) => { params.push({ name: `a0_${j}`, value: r.a0Start }, { name: `aInf_${j}`, value: r.aInfStart }); });
  // k [B]^m = exp(ln k + m ln B); A = A∞ + (A0 − A∞) e^(−k_obs τ).
  const model = (xi: number, p: Float64Array): number => {
    const idx = xi | 0, j = runOf[idx]!;
    const kObs = p[0]! * Math.exp(p[1]! * lnB[idx]!);
    const a0 = p[2 + 2 * j]!, aInf = p[3 + 2 * j]!;
    return aInf + (a0 - aInf) * Math.exp(-kObs * tau[idx]!);
  };
  const jacobian = (xi: number, p: Float64Array, out: Float64Array): void => {
    out.fill(0);
    const idx = xi | 0, j = runOf[idx]!;
    const bm = Math.exp(p[1]! * lnB[idx]!);
    const kObs = p[0]! * bm;
    const a0 = p[2 + 2 * j]!, aInf = p[3 + 2 * j]!;
    const e = Math.exp(-kObs * tau[idx]!);
    const dKobs = -(a0 - aInf) * e * tau[idx]!; // ∂A/∂k_obs
    out[0] = dKobs * bm;
    out[1] = dKobs * kObs * lnB[idx]!;
    out[2 + 2 * j] = e;
    out[3 + 2 * j] = 1 - e;
  };
  return fitLeastSquares({ parameters: params, x, y, model, jacobian, options: { maxIterations: 300 } });
}

/**
 * `heldOrder`: the whole order for the k comparison (the two-step's nearest whole order).
 * The start values come from the two-step result (k, m) and each run's own fit.
 */
export function globalRateLawFit(runs: GlobalRun[], start: { k: number; order: number; heldOrder: number }): GlobalRateLawOutcome {
  if (runs.length < 2) return { ok: false, error: `a global fit needs two or more runs with readings; ${runs.length} given.` };
  if (new Set(runs.map((r) => r.concentration_M)).size < 2) return { ok: false, error: 'a global fit needs runs at two or more concentrations.' };
  for (const r of runs) {
    if (r.time_s.length < 5 || r.time_s.length !== r.absorbance.length) return { ok: false, error: `${r.label}: too few readings for a global fit; record the run longer.` };
  }
  // Starting k for m free from ln k = ln k_obs − m ln [B], averaged over the runs.
  const mStart = Number.isFinite(start.order) ? start.order : start.heldOrder;
  const kFree = Math.exp(runs.reduce((s, r) => s + Math.log(r.kObsStart) - mStart * Math.log(r.concentration_M), 0) / runs.length);
  const free = stackedFit(runs, null, kFree, mStart);
  const held = stackedFit(runs, start.heldOrder, start.k, start.heldOrder);
  if (!free.ok || !free.converged) return { ok: false, error: `the global fit with the order free did not converge (${free.warnings.join(' ') || 'no reason given'}); rely on the two-step result.` };
  if (!held.ok || !held.converged) return { ok: false, error: `the global fit with the order held at ${start.heldOrder} did not converge (${held.warnings.join(' ') || 'no reason given'}); rely on the two-step result.` };
  const param = (f: typeof free, name: string): GlobalParameter => ({ value: f.byName[name]!.value, stdErr: f.byName[name]!.stdErr, ci95: f.byName[name]!.ci });
  return {
    ok: true,
    order: param(free, 'm'),
    k: param(held, 'k'),
    heldOrder: start.heldOrder,
    readings: free.n,
    runs: runs.length,
    dof: free.dof,
    residualSd_AU: free.residualSd,
    warnings: [...new Set([...free.warnings, ...held.warnings])],
  };
}

export interface Agreement {
  agree: boolean | null;
  /** One sentence for the report. */
  sentence: string;
}

/** Two estimates agree when their 95% intervals overlap (null when either has none). */
export function intervalsAgree(what: string, twoStep: [number, number] | null, global: [number, number] | null): Agreement {
  if (!twoStep || !global) return { agree: null, sentence: `${what}: no interval for one of the two, so their agreement cannot be judged.` };
  const agree = twoStep[0] <= global[1] && global[0] <= twoStep[1];
  return { agree, sentence: `${what}: the two-step and the global 95% intervals ${agree ? 'overlap: they agree' : 'do not overlap: they disagree; look for a run that does not follow k [B]^m'}.` };
}
