/**
 * General weighted, bounded, optionally robust nonlinear least squares:
 * y = f(x; p), minimize χ² = Σ w_i (y_i − f(x_i; p))², w_i = 1/σ_i².
 *
 * The core knows nothing of chemistry. It runs Levenberg–Marquardt from the given
 * starting values (a warm start is simply passing the last answer), optionally
 * wrapped in iteratively reweighted least squares for a robust loss, then reports
 * the covariance (JᵀWJ)⁻¹ · χ²/(n − nFree) — scaled by the reduced chi-square, as
 * the usual fitting libraries do, so the standard errors reflect the scatter actually
 * seen rather than the σ_i assumed — with Student-t intervals.
 */
import type { FitProblem, FitResult, RobustLoss } from './fitTypes';
import { runLevenbergMarquardt } from './levenbergMarquardt';
import { allocateLmBuffers, evaluateResiduals, type LmProblem } from './linearization';
import { defaultTuning, updateRobustWeights } from './robustWeights';
import { assembleFitResult, failedFit } from './leastSquaresResult';

const DEFAULT_MAX_ITERATIONS = 200;
const DEFAULT_TOLERANCE = 1e-10;
/** IRLS rounds: enough for the weights to settle on a clean spike, bounded so a fit stays fast. */
const MAX_ROBUST_ROUNDS = 12;
const ROBUST_WEIGHT_CHANGE = 1e-3;

export function fitLeastSquares(problem: FitProblem): FitResult {
  const warnings: string[] = [];
  const specs = problem.parameters;
  const np = specs.length;
  const opts = problem.options ?? {};
  const confidence = opts.confidence ?? 0.95;
  if (!(confidence > 0 && confidence < 1)) {
    return failedFit(problem, `confidence level ${confidence} is not between 0 and 1; use e.g. 0.95.`);
  }
  const names = new Set<string>();
  for (const s of specs) {
    if (names.has(s.name)) return failedFit(problem, `parameter "${s.name}" is named twice; give each parameter its own name.`);
    names.add(s.name);
    if (!Number.isFinite(s.value)) return failedFit(problem, `parameter "${s.name}" starts at ${s.value}; give a finite starting value.`);
    const lo = s.min ?? -Infinity;
    const hi = s.max ?? Infinity;
    if (Number.isNaN(lo) || Number.isNaN(hi) || lo > hi) {
      return failedFit(problem, `parameter "${s.name}" has bounds [${s.min}, ${s.max}] that admit no value; fix the bounds.`);
    }
  }

  // Points: a prefix of possibly over-allocated arrays.
  let n = problem.count ?? problem.x.length;
  const available = Math.min(problem.x.length, problem.y.length, problem.weights ? problem.weights.length : Infinity);
  if (!Number.isInteger(n) || n < 0) return failedFit(problem, `count ${problem.count} is not a whole number of points.`);
  if (n > available) {
    warnings.push(
      problem.count === undefined
        ? `x, y and the weights differ in length; used the first ${available} points.`
        : `count ${n} is more than the ${available} points supplied; used ${available}.`,
    );
    n = available;
  }
  const baseW = new Float64Array(n);
  let used = 0;
  let leftOut = 0;
  for (let i = 0; i < n; i++) {
    const w = problem.weights ? problem.weights[i]! : 1;
    const ok = Number.isFinite(problem.x[i]!) && Number.isFinite(problem.y[i]!) && Number.isFinite(w) && w > 0;
    baseW[i] = ok ? w : 0;
    if (ok) used++;
    else leftOut++;
  }
  if (leftOut > 0) warnings.push(`${leftOut} point(s) with a non-finite value or a weight that is not positive were left out of the fit.`);

  // Parameters: all in p (fixed ones hold their value), the free ones listed.
  const p = new Float64Array(np);
  const freeList: number[] = [];
  for (let k = 0; k < np; k++) {
    const s = specs[k]!;
    p[k] = s.value;
    if (!s.fixed) freeList.push(k);
  }
  const m = freeList.length;
  const free = Int32Array.from(freeList);
  const lower = new Float64Array(m);
  const upper = new Float64Array(m);
  const typical = new Float64Array(m);
  for (let j = 0; j < m; j++) {
    const s = specs[free[j]!]!;
    lower[j] = s.min ?? -Infinity;
    upper[j] = s.max ?? Infinity;
    typical[j] = s.value !== 0 ? Math.abs(s.value) : 1;
    const v = p[free[j]!]!;
    const clamped = Math.min(upper[j]!, Math.max(lower[j]!, v));
    if (clamped !== v) {
      warnings.push(`parameter "${s.name}" started outside its bounds at ${v}; started at ${clamped} instead.`);
      p[free[j]!] = clamped;
    }
  }
  if (used < m) {
    return failedFit(problem, `too few points: ${used} usable point(s) for ${m} free parameter(s); at least ${m + 1} are needed.`, warnings);
  }

  const w = Float64Array.from(baseW);
  const lm: LmProblem = { model: problem.model, x: problem.x, y: problem.y, n, w, p, free, lower, upper, typical };
  if (problem.jacobian) lm.jacobian = problem.jacobian;
  const buf = allocateLmBuffers(n, m, np);
  const maxIterations = opts.maxIterations ?? DEFAULT_MAX_ITERATIONS;
  const tolerance = opts.tolerance ?? DEFAULT_TOLERANCE;

  let outcome;
  try {
    outcome = runLevenbergMarquardt(lm, buf, maxIterations, tolerance);
  } catch (e) {
    return failedFit(problem, `the model function failed: ${e instanceof Error ? e.message : String(e)}.`, warnings);
  }
  if (!Number.isFinite(outcome.chiSquare)) {
    return failedFit(problem, `${outcome.problem ?? 'the fit failed'}; choose other starting values.`, warnings);
  }
  let iterations = outcome.iterations;
  let converged = outcome.converged;
  let problemNote = outcome.problem;

  const loss: RobustLoss = opts.robust ?? 'none';
  let robustW: Float64Array | null = null;
  if (loss !== 'none' && m > 0) {
    const c = opts.robustTuning ?? defaultTuning(loss);
    robustW = new Float64Array(n).fill(1);
    const scratch = new Float64Array(n);
    // Residuals of every usable point, including those a redescending loss gave weight 0
    // (the fit itself skips them), so that a point can regain weight.
    const allPoints: LmProblem = { ...lm, w: baseW };
    let settled = false;
    for (let round = 0; round < MAX_ROBUST_ROUNDS; round++) {
      evaluateResiduals(allPoints, p, buf.r);
      const change = updateRobustWeights(buf.r, baseW, n, loss, c, robustW, scratch);
      if (round > 0 && change < ROBUST_WEIGHT_CHANGE) {
        settled = true;
        break;
      }
      for (let i = 0; i < n; i++) w[i] = baseW[i]! * robustW[i]!;
      try {
        outcome = runLevenbergMarquardt(lm, buf, maxIterations, tolerance);
      } catch (e) {
        return failedFit(problem, `the model function failed: ${e instanceof Error ? e.message : String(e)}.`, warnings);
      }
      iterations += outcome.iterations;
      converged = outcome.converged;
      problemNote = outcome.problem;
    }
    // The last fit used w: report the weights it used, not the candidate update.
    if (settled) for (let i = 0; i < n; i++) robustW[i] = baseW[i]! > 0 ? w[i]! / baseW[i]! : 0;
    if (!settled) warnings.push(`the robust weights had not settled after ${MAX_ROBUST_ROUNDS} rounds; the result may still move.`);
  }
  if (!converged) warnings.push(`did not converge: ${problemNote ?? 'stopped early'}; try better starting values or more iterations.`);

  try {
    return assembleFitResult({ problem, lm, buf, baseW, robustW, used, iterations, converged, confidence, warnings });
  } catch (e) {
    return failedFit(problem, `the model function failed: ${e instanceof Error ? e.message : String(e)}.`, warnings);
  }
}
