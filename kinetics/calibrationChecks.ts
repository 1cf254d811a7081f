/**
 * A calibration line that tests itself (the checks a validation report asks for):
 *  - through the origin or with an intercept: both are fitted, and the intercept is kept
 *    when a two-sided t-test rejects a = 0 (p < 0.05, t on n − 2 dof);
 *  - limits of detection and quantitation, LOD = 3.3 σ/S and LOQ = 10 σ/S (ICH Q2(R1),
 *    validation of analytical procedures, §6 and §7), σ the residual SD of the line, or the
 *    blank's SD when blank replicates are given, S the slope;
 *  - externally studentised residuals t_i = r_i / (s_(i) √(1 − h_ii)), with
 *    s_(i)² = ((n − p) s² − r_i²/(1 − h_ii)) / (n − p − 1), flagged beyond the Bonferroni
 *    t quantile t(1 − 0.025/n, n − p − 1) (handbook regression diagnostics);
 *  - lack of fit when standards are replicated: F = (SS_lof/(m − p)) / (SS_pe/(n − m)),
 *    with SS_pe the scatter of replicates about their own means and m the levels
 *    (NIST/SEMATECH e-Handbook, lack-of-fit test);
 *  - weights from the absorbance noise model (σ_A = 0.434 σ_T / T, as for the runs) when
 *    the replicates show the noise growing with absorbance (the SD at the highest
 *    replicated level more than twice that at the lowest).
 */
import { incompleteBeta } from './fit/specialFunctions';
import { studentTCdf, studentTQuantile } from './fit/studentT';

export const INTERCEPT_TEST_ALPHA = 0.05;
export const LACK_OF_FIT_ALPHA = 0.05;

export interface LineData { x: Float64Array; y: Float64Array; w: Float64Array }

/** Two-sided p of the t-test a = 0 for the intercept; null without dof. */
export function interceptTestP(intercept: number, stdErr: number | null, dof: number): number | null {
  if (stdErr === null || !(dof > 0)) return null;
  if (stdErr === 0) return intercept === 0 ? 1 : 0;
  return 2 * (1 - studentTCdf(Math.abs(intercept / stdErr), dof));
}

/** Upper tail P(F > f) of the F distribution with (d1, d2) dof, from the regularised incomplete beta. */
export function fUpperTail(f: number, d1: number, d2: number): number {
  if (!(f > 0)) return 1;
  return incompleteBeta(d2 / (d2 + d1 * f), d2 / 2, d1 / 2);
}

/** Replicate groups: indices by distinct concentration. */
export function levels(x: Float64Array): number[][] {
  const by = new Map<number, number[]>();
  x.forEach((v, i) => { const g = by.get(v); if (g) g.push(i); else by.set(v, [i]); });
  return [...by.values()];
}

/** Whether the replicates' scatter grows with absorbance enough to weight the line (and the two SDs compared). */
export function noiseGrows(x: Float64Array, y: Float64Array): { grows: boolean; sdLow: number; sdHigh: number } | null {
  const reps = levels(x).filter((g) => g.length >= 2);
  if (reps.length < 2) return null;
  const sd = (g: number[]): number => {
    const m = g.reduce((s, i) => s + y[i], 0) / g.length;
    return Math.sqrt(g.reduce((s, i) => s + (y[i] - m) ** 2, 0) / (g.length - 1));
  };
  const meanY = (g: number[]): number => g.reduce((s, i) => s + y[i], 0) / g.length;
  reps.sort((a, b) => meanY(a) - meanY(b));
  const sdLow = sd(reps[0]), sdHigh = sd(reps[reps.length - 1]);
  return { grows: sdHigh > 2 * sdLow, sdLow, sdHigh };
}

export interface StudentisedResidual { index: number; t: number }

/** Externally studentised residuals of a weighted line (intercept or through the origin) and those beyond the Bonferroni limit. */
export function studentisedResiduals(d: LineData, slope: number, intercept: number, hasIntercept: boolean): { all: StudentisedResidual[]; flagged: StudentisedResidual[]; limit: number | null } {
  const n = d.x.length, p = hasIntercept ? 2 : 1;
  const dof = n - p;
  if (dof - 1 <= 0) return { all: [], flagged: [], limit: null };
  let sw = 0, swx = 0;
  for (let i = 0; i < n; i++) { sw += d.w[i]; swx += d.w[i] * d.x[i]; }
  const xm = swx / sw;
  let sxx = 0;
  for (let i = 0; i < n; i++) sxx += d.w[i] * (hasIntercept ? (d.x[i] - xm) ** 2 : d.x[i] ** 2);
  let chi = 0;
  const r = new Float64Array(n);
  for (let i = 0; i < n; i++) { r[i] = (d.y[i] - intercept - slope * d.x[i]) * Math.sqrt(d.w[i]); chi += r[i] * r[i]; }
  const s2 = chi / dof;
  const all: StudentisedResidual[] = [];
  for (let i = 0; i < n; i++) {
    const h = d.w[i] * (hasIntercept ? 1 / sw + (d.x[i] - xm) ** 2 / sxx : d.x[i] ** 2 / sxx);
    const s2i = (dof * s2 - (r[i] * r[i]) / (1 - h)) / (dof - 1);
    const t = s2i > 0 && h < 1 ? r[i] / Math.sqrt(s2i * (1 - h)) : 0;
    all.push({ index: i, t });
  }
  const limit = studentTQuantile(1 - 0.025 / n, dof - 1);
  return { all, flagged: all.filter((x) => Math.abs(x.t) > limit), limit };
}

export interface LackOfFit { f: number; dofLack: number; dofPure: number; p: number }

/** Lack-of-fit F test; null unless some standards are replicated and there are more levels than parameters. */
export function lackOfFit(d: LineData, slope: number, intercept: number, hasIntercept: boolean): LackOfFit | null {
  const groups = levels(d.x);
  const n = d.x.length, m = groups.length, p = hasIntercept ? 2 : 1;
  if (n - m <= 0 || m - p <= 0) return null;
  let ssRes = 0, ssPure = 0;
  for (let i = 0; i < n; i++) ssRes += d.w[i] * (d.y[i] - intercept - slope * d.x[i]) ** 2;
  for (const g of groups) {
    let sw = 0, swy = 0;
    for (const i of g) { sw += d.w[i]; swy += d.w[i] * d.y[i]; }
    for (const i of g) ssPure += d.w[i] * (d.y[i] - swy / sw) ** 2;
  }
  const dofLack = m - p, dofPure = n - m;
  if (!(ssPure > 0)) return null;
  const f = Math.max(0, (ssRes - ssPure) / dofLack) / (ssPure / dofPure);
  return { f, dofLack, dofPure, p: fUpperTail(f, dofLack, dofPure) };
}

export interface DetectionLimits {
  lod_M: number;
  loq_M: number;
  sigma_AU: number;
  /** Which σ: the line's residual SD, or the SD of the blank replicates. */
  sigmaFrom: 'residual SD of the line' | 'SD of the blank replicates';
  basis: string;
}

/** LOD = 3.3 σ/S, LOQ = 10 σ/S (ICH Q2(R1)); null without a σ. */
export function detectionLimits(slope_perM: number, residualSd_AU: number | null, blank_AU?: readonly number[]): DetectionLimits | null {
  let sigma = residualSd_AU;
  let from: DetectionLimits['sigmaFrom'] = 'residual SD of the line';
  if (blank_AU && blank_AU.length >= 2) {
    const m = blank_AU.reduce((s, v) => s + v, 0) / blank_AU.length;
    sigma = Math.sqrt(blank_AU.reduce((s, v) => s + (v - m) ** 2, 0) / (blank_AU.length - 1));
    from = 'SD of the blank replicates';
  }
  if (sigma === null || !(slope_perM > 0) || !Number.isFinite(sigma)) return null;
  return {
    lod_M: (3.3 * sigma) / slope_perM, loq_M: (10 * sigma) / slope_perM, sigma_AU: sigma, sigmaFrom: from,
    basis: `ICH Q2(R1): LOD = 3.3 σ/S, LOQ = 10 σ/S, σ = ${from} (${sigma.toPrecision(3)} AU), S = slope`,
  };
}
