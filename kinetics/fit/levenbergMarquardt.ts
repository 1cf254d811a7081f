/**
 * The Levenberg–Marquardt iteration behind `fitLeastSquares`, on preallocated
 * Float64Array buffers so that an iteration allocates nothing per point.
 *
 * Each step solves (JᵀWJ + λ D) δ = JᵀW r with r = y − f(x; p), J = ∂f/∂p over the
 * free parameters, and D the Marquardt scaling: the largest diagonal of JᵀWJ seen so
 * far (Moré's variant), so the step does not depend on the parameters' units.
 * Box bounds are kept by projection with an active set: a parameter sitting on a
 * bound whose gradient points outward is left out of the step, and every trial
 * point is clamped into the box.
 *
 * A trial step is also refused when the model bends too much along it: the
 * geodesic acceleration a = −(JᵀWJ + λD)⁻¹ JᵀW f_vv (f_vv the second directional
 * derivative along the step v, by a finite difference) must satisfy
 * 2‖a‖/‖v‖ ≤ 0.75 in the scaled norm. Without it a long Gauss–Newton step from a
 * poor start can throw a rate constant so far that the exponential saturates and
 * the fit lands on a plateau where that parameter no longer matters.
 */
import { choleskyFactor, choleskySolve } from './cholesky';
import { evaluateJacobian, evaluateResiduals, normalEquations, type LmBuffers, type LmProblem } from './linearization';

export interface LmOutcome {
  chiSquare: number;
  iterations: number;
  converged: boolean;
  /** Why the iteration stopped without converging, in plain language. */
  problem: string | null;
}

/** Iterate from the current prob.p (warm start = the values given) until converged or out of iterations. */
export function runLevenbergMarquardt(prob: LmProblem, buf: LmBuffers, maxIterations: number, tolerance: number): LmOutcome {
  const m = prob.free.length;
  const { free, lower, upper, p } = prob;
  const { r, rTrial, jtj, g, a, delta, diagScale, pTrial, active } = buf;
  let chi2 = evaluateResiduals(prob, p, r);
  if (!Number.isFinite(chi2)) return { chiSquare: chi2, iterations: 0, converged: false, problem: 'the model is not finite at the starting values' };
  if (m === 0 || chi2 === 0) return { chiSquare: chi2, iterations: 0, converged: true, problem: null };
  evaluateJacobian(prob, p, buf);
  if (!normalEquations(prob, buf)) return { chiSquare: chi2, iterations: 0, converged: false, problem: 'the model derivatives are not finite at the starting values' };
  diagScale.fill(0);
  // χ² at the rounding level of the data themselves: an exact fit, nothing left to gain.
  let yScale = 0;
  for (let i = 0; i < prob.n; i++) if (prob.w[i] !== 0) yScale += prob.w[i]! * prob.y[i]! * prob.y[i]!;
  const exactFit = 1e-28 * yScale;
  let lambda = 1e-3;
  // Parameters: relative (scaled) step ≤ 100 × tolerance; large-residual problems converge
  // only linearly, so a loose step test would stop them a few digits short.
  const xTol = 100 * tolerance;
  for (let iter = 1; iter <= maxIterations; iter++) {
    let freeCount = 0;
    for (let j = 0; j < m; j++) {
      const k = free[j]!;
      const d = jtj[j * m + j]!;
      if (d > diagScale[j]!) diagScale[j] = d;
      // A parameter on a bound that the gradient pushes outward stays put this step.
      const out = (p[k]! <= lower[j]! && g[j]! <= 0) || (p[k]! >= upper[j]! && g[j]! >= 0);
      active[j] = out ? 1 : 0;
      if (!out) freeCount++;
    }
    if (freeCount === 0) return { chiSquare: chi2, iterations: iter - 1, converged: true, problem: null };
    // Stationary already: the scaled gradient is negligible next to χ².
    let gradMax = 0;
    for (let j = 0; j < m; j++) {
      if (active[j]) continue;
      const s = diagScale[j]! > 0 ? Math.abs(g[j]!) / Math.sqrt(diagScale[j]! * chi2) : 0;
      if (s > gradMax) gradMax = s;
    }
    if (gradMax <= tolerance * 1e-3) return { chiSquare: chi2, iterations: iter - 1, converged: true, problem: null };

    let accepted = false;
    let trialChi2 = Infinity;
    while (lambda <= 1e16) {
      for (let j = 0; j < m; j++) {
        for (let k = 0; k < m; k++) {
          a[j * m + k] = active[j] || active[k] ? (j === k ? 1 : 0) : jtj[j * m + k]!;
        }
        const dj = diagScale[j]! > 0 ? diagScale[j]! : 1;
        if (!active[j]) a[j * m + j] += lambda * dj;
        delta[j] = active[j] ? 0 : g[j]!;
      }
      if (!choleskyFactor(a, m)) {
        lambda *= 10;
        continue;
      }
      choleskySolve(a, m, delta);
      // A parameter on its bound that this step would push through it is held for the
      // step and the rest solved again: clamping a coupled step instead spoils its
      // direction, and the iteration then creeps along the bound by shortened steps.
      let held = false;
      for (let j = 0; j < m; j++) {
        if (active[j]) continue;
        const k = free[j]!;
        if ((p[k]! <= lower[j]! && delta[j]! < 0) || (p[k]! >= upper[j]! && delta[j]! > 0)) { active[j] = 1; held = true; }
      }
      if (held) continue;
      pTrial.set(p);
      for (let j = 0; j < m; j++) {
        const k = free[j]!;
        let v = p[k]! + delta[j]!;
        if (v < lower[j]!) v = lower[j]!;
        if (v > upper[j]!) v = upper[j]!;
        pTrial[k] = v;
      }
      if (tooCurved(prob, buf, m)) {
        lambda *= 10;
        continue;
      }
      trialChi2 = evaluateResiduals(prob, pTrial, rTrial);
      if (trialChi2 < chi2) {
        accepted = true;
        break;
      }
      // A step already below the parameter tolerance that still cannot lower χ²: the
      // start was at the minimum (a warm start), no need to shrink it further.
      if (stepIsNegligible(prob, buf, m, xTol)) return { chiSquare: chi2, iterations: iter, converged: true, problem: null };
      lambda *= 10;
    }
    if (!accepted) {
      // No step, however short, lowers χ²: a minimum to working precision.
      return { chiSquare: chi2, iterations: iter, converged: true, problem: null };
    }
    // Scaled step and parameter norms ‖Dδ‖, ‖Dp‖ for the parameter test.
    let stepNorm = 0;
    let pNorm = 0;
    for (let j = 0; j < m; j++) {
      const k = free[j]!;
      const s = Math.sqrt(diagScale[j]!);
      const dj = (pTrial[k]! - p[k]!) * s;
      const pj = pTrial[k]! * s;
      stepNorm += dj * dj;
      pNorm += pj * pj;
    }
    const relChi = (chi2 - trialChi2) / Math.max(trialChi2, Number.MIN_VALUE);
    p.set(pTrial);
    r.set(rTrial);
    chi2 = trialChi2;
    lambda = Math.max(lambda / 10, 1e-12);
    const small = relChi <= tolerance && Math.sqrt(stepNorm) <= xTol * (Math.sqrt(pNorm) + xTol);
    if (small || chi2 <= exactFit) return { chiSquare: chi2, iterations: iter, converged: true, problem: null };
    evaluateJacobian(prob, p, buf);
    if (!normalEquations(prob, buf)) return { chiSquare: chi2, iterations: iter, converged: false, problem: 'the model derivatives stopped being finite' };
  }
  return { chiSquare: chi2, iterations: maxIterations, converged: false, problem: `did not converge in ${maxIterations} iterations` };
}

/** ‖D(pTrial − p)‖ ≤ xTol (‖D p‖ + xTol), D = √diag(JᵀWJ). */
function stepIsNegligible(prob: LmProblem, buf: LmBuffers, m: number, xTol: number): boolean {
  let stepNorm = 0;
  let pNorm = 0;
  for (let j = 0; j < m; j++) {
    const k = prob.free[j]!;
    const d = buf.diagScale[j]!;
    const dv = buf.pTrial[k]! - prob.p[k]!;
    stepNorm += d * dv * dv;
    pNorm += d * prob.p[k]! * prob.p[k]!;
  }
  return Math.sqrt(stepNorm) <= xTol * (Math.sqrt(pNorm) + xTol);
}

const ACCELERATION_H = 0.1;
const ACCELERATION_RATIO = 0.75;

/**
 * The acceleration test for the trial step v = pTrial − p (already clamped, so
 * p + h v stays in the box). Uses the Cholesky factor left in buf.a.
 */
function tooCurved(prob: LmProblem, buf: LmBuffers, m: number): boolean {
  const { x, y, w, n, model, free, p } = prob;
  const { r, jac, fvv, acc, pStep, pTrial, diagScale, active } = buf;
  const h = ACCELERATION_H;
  pStep.set(p);
  let vNorm = 0;
  for (let j = 0; j < m; j++) {
    const k = free[j]!;
    const v = pTrial[k]! - p[k]!;
    pStep[k] = p[k]! + h * v;
    vNorm += diagScale[j]! * v * v;
  }
  if (!(vNorm > 0)) return false;
  for (let i = 0; i < n; i++) {
    if (w[i] === 0) {
      fvv[i] = 0;
      continue;
    }
    let jv = 0;
    for (let j = 0; j < m; j++) jv += jac[i * m + j]! * (pTrial[free[j]!]! - p[free[j]!]!);
    const f0 = y[i]! - r[i]!;
    fvv[i] = (2 / h) * ((model(x[i]!, pStep) - f0) / h - jv);
  }
  for (let j = 0; j < m; j++) {
    let s = 0;
    if (!active[j]) for (let i = 0; i < n; i++) s += jac[i * m + j]! * w[i]! * fvv[i]!;
    acc[j] = -s;
  }
  choleskySolve(buf.a, m, acc);
  let aNorm = 0;
  for (let j = 0; j < m; j++) aNorm += diagScale[j]! * acc[j]! * acc[j]!;
  const ratio = (2 * Math.sqrt(aNorm)) / Math.sqrt(vNorm);
  // A non-finite model along the step counts as too curved: shorten it.
  return !(ratio <= ACCELERATION_RATIO);
}
