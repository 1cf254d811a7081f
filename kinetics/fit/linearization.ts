/**
 * The linearization of a least-squares problem at given parameters, on
 * preallocated Float64Array buffers: residuals r = y − f(x; p), the Jacobian
 * J = ∂f/∂p over the free parameters (analytic, or central differences that stay
 * inside the bounds), and the normal equations JᵀWJ, JᵀW r. Points with weight 0
 * are skipped entirely, never evaluated.
 */
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
