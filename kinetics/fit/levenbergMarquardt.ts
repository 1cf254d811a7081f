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

export interface LmProblem {
  model: (x: number, p: Float64Array) => number;
  jacobian?: (x: number, p: Float64Array, out: Float64Array) => void;
  x: Float64Array;
  y: Float64Array;
  n: number;
  /** Effective weights; a point with weight 0 is skipped entirely (not evaluated). */
  w: Float64Array;
  /** All parameters, fixed ones included; the free ones are updated in place. */
  p: Float64Array;
  free: Int32Array;
  lower: Float64Array;
  upper: Float64Array;
  /** Scale of each free parameter for finite-difference steps (|start| or 1). */
  typical: Float64Array;
}

export interface LmBuffers {
  r: Float64Array;
  rTrial: Float64Array;
  /** Second directional derivative of the model along the step, for the acceleration test. */
  fvv: Float64Array;
  acc: Float64Array;
  jac: Float64Array;
  jtj: Float64Array;
  g: Float64Array;
  a: Float64Array;
  delta: Float64Array;
  diagScale: Float64Array;
  pTrial: Float64Array;
  pStep: Float64Array;
  jrow: Float64Array;
  active: Uint8Array;
}

export function allocateLmBuffers(n: number, m: number, np: number): LmBuffers {
  return {
    r: new Float64Array(n),
    rTrial: new Float64Array(n),
    fvv: new Float64Array(n),
    acc: new Float64Array(m),
    jac: new Float64Array(n * m),
    jtj: new Float64Array(m * m),
    g: new Float64Array(m),
    a: new Float64Array(m * m),
    delta: new Float64Array(m),
    diagScale: new Float64Array(m),
    pTrial: new Float64Array(np),
    pStep: new Float64Array(np),
    jrow: new Float64Array(np),
    active: new Uint8Array(m),
  };
}

/** r = y − f(x; p) at the given parameters; returns χ² = Σ w r² (∞ when the model is not finite). */
export function evaluateResiduals(prob: LmProblem, p: Float64Array, r: Float64Array): number {
  const { x, y, w, n, model } = prob;
  let chi2 = 0;
  for (let i = 0; i < n; i++) {
    const wi = w[i]!;
    if (wi === 0) {
      r[i] = 0;
      continue;
    }
    const ri = y[i]! - model(x[i]!, p);
    r[i] = ri;
    chi2 += wi * ri * ri;
  }
  return Number.isFinite(chi2) ? chi2 : Infinity;
}

// ∛ε: the step that balances truncation and rounding error of a central difference.
const CBRT_EPS = 6.055454452393343e-6;

/** J[i, j] = ∂f(x_i; p)/∂p_free[j], analytic when given, central differences otherwise. */
export function evaluateJacobian(prob: LmProblem, p: Float64Array, buf: LmBuffers): void {
  const { x, w, n, model, free } = prob;
  const m = free.length;
  const jac = buf.jac;
  if (prob.jacobian) {
    const jrow = buf.jrow;
    for (let i = 0; i < n; i++) {
      if (w[i] === 0) {
        for (let j = 0; j < m; j++) jac[i * m + j] = 0;
        continue;
      }
      jrow.fill(0);
      prob.jacobian(x[i]!, p, jrow);
      for (let j = 0; j < m; j++) jac[i * m + j] = jrow[free[j]!]!;
    }
    return;
  }
  const ps = buf.pStep;
  ps.set(p);
  for (let j = 0; j < m; j++) {
    const k = free[j]!;
    const pj = p[k]!;
    let h = CBRT_EPS * (pj !== 0 ? Math.abs(pj) : prob.typical[j]!);
    // Stay inside the bounds: one-sided differences next to a bound.
    let hiStep = h;
    let loStep = h;
    const lo = prob.lower[j]!;
    const up = prob.upper[j]!;
    if (pj + h > up) hiStep = Math.max(0, up - pj);
    if (pj - h < lo) loStep = Math.max(0, pj - lo);
    if (hiStep === 0 && loStep === 0) {
      // Bounds closer than the step: use what room there is.
      h = 0.5 * (up - lo);
      hiStep = up - pj;
      loStep = pj - lo;
    }
    if (hiStep > 0 && loStep > 0 && hiStep !== loStep) hiStep = loStep = Math.min(hiStep, loStep);
    const plus = pj + hiStep;
    const minus = pj - loStep;
    const span = plus - minus;
    ps[k] = plus;
    for (let i = 0; i < n; i++) jac[i * m + j] = w[i] === 0 ? 0 : model(x[i]!, ps);
    ps[k] = minus;
    for (let i = 0; i < n; i++) {
      if (w[i] === 0) continue;
      jac[i * m + j] = span > 0 ? (jac[i * m + j]! - model(x[i]!, ps)) / span : 0;
    }
    ps[k] = pj;
  }
}

/** JᵀWJ into buf.jtj and JᵀW r into buf.g; false when anything is not finite. */
export function normalEquations(prob: LmProblem, buf: LmBuffers): boolean {
  const m = prob.free.length;
  const { jac, jtj, g, r } = buf;
  const { w, n } = prob;
  jtj.fill(0);
  g.fill(0);
  for (let i = 0; i < n; i++) {
    const wi = w[i]!;
    if (wi === 0) continue;
    const base = i * m;
    const wr = wi * r[i]!;
    for (let j = 0; j < m; j++) {
      const wj = wi * jac[base + j]!;
      g[j] += jac[base + j]! * wr;
      for (let k = 0; k <= j; k++) jtj[j * m + k] += wj * jac[base + k]!;
    }
  }
  for (let j = 0; j < m; j++) {
    for (let k = 0; k < j; k++) jtj[k * m + j] = jtj[j * m + k]!;
    if (!Number.isFinite(g[j]!)) return false;
    for (let k = 0; k < m; k++) if (!Number.isFinite(jtj[j * m + k]!)) return false;
  }
  return true;
}

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
