/**
 * Cholesky factorization for the small symmetric positive-definite systems of a
 * least-squares fit (the normal matrix JᵀWJ, a handful of parameters). Row-major,
 * in place, no allocation: the caller owns the buffers.
 */

/**
 * Factor A = L Lᵀ in place (L in the lower triangle, upper triangle left as is).
 * Returns false when A is not numerically positive definite: a pivot at or below
 * `relativePivot` times the original diagonal entry, or not finite.
 */
export function choleskyFactor(a: Float64Array, m: number, relativePivot = 0): boolean {
  for (let j = 0; j < m; j++) {
    const diag = a[j * m + j]!;
    let s = diag;
    for (let k = 0; k < j; k++) s -= a[j * m + k]! * a[j * m + k]!;
    if (!(s > relativePivot * diag) || !Number.isFinite(s) || !(s > 0)) return false;
    const ljj = Math.sqrt(s);
    a[j * m + j] = ljj;
    for (let i = j + 1; i < m; i++) {
      let t = a[i * m + j]!;
      for (let k = 0; k < j; k++) t -= a[i * m + k]! * a[j * m + k]!;
      a[i * m + j] = t / ljj;
    }
  }
  return true;
}

/** Solve L Lᵀ x = b with the factor from `choleskyFactor`; b is overwritten with x. */
export function choleskySolve(l: Float64Array, m: number, b: Float64Array): void {
  for (let i = 0; i < m; i++) {
    let s = b[i]!;
    for (let k = 0; k < i; k++) s -= l[i * m + k]! * b[k]!;
    b[i] = s / l[i * m + i]!;
  }
  for (let i = m - 1; i >= 0; i--) {
    let s = b[i]!;
    for (let k = i + 1; k < m; k++) s -= l[k * m + i]! * b[k]!;
    b[i] = s / l[i * m + i]!;
  }
}

/**
 * Inverse of a symmetric positive-definite matrix, into `out` (m × m).
 * The matrix is first scaled to unit diagonal, D⁻¹ᐟ² A D⁻¹ᐟ², so that the
 * singularity test does not depend on the parameters' units (a rate constant of
 * 1e-4 s⁻¹ next to an amplitude of 200 would otherwise look ill-conditioned).
 * Returns false when A is singular to working precision (a parameter that does not
 * affect the model, or two that are indistinguishable); `out` is then undefined.
 * `work` needs m² + m entries.
 */
export function invertSymmetricPositive(a: Float64Array, m: number, out: Float64Array, work: Float64Array): boolean {
  const scale = work.subarray(m * m, m * m + m);
  for (let j = 0; j < m; j++) {
    const d = a[j * m + j]!;
    if (!(d > 0) || !Number.isFinite(d)) return false;
    scale[j] = 1 / Math.sqrt(d);
  }
  const l = work.subarray(0, m * m);
  for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) l[i * m + j] = a[i * m + j]! * scale[i]! * scale[j]!;
  // Pivot floor: a correlation within ~1e-12 of ±1 counts as singular.
  if (!choleskyFactor(l, m, 1e-12)) return false;
  const col = out; // reuse `out` row by row: solve for each unit vector
  for (let j = 0; j < m; j++) {
    const e = col.subarray(j * m, j * m + m);
    e.fill(0);
    e[j] = 1;
    choleskySolve(l, m, e);
  }
  for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) out[i * m + j] = out[i * m + j]! * scale[i]! * scale[j]!;
  // Symmetrize against rounding.
  for (let i = 0; i < m; i++) {
    for (let j = i + 1; j < m; j++) {
      const v = 0.5 * (out[i * m + j]! + out[j * m + i]!);
      out[i * m + j] = v;
      out[j * m + i] = v;
    }
  }
  return true;
}
