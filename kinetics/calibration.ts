/**
 * Beer–Lambert calibration from standards: A = ε b c + a, with ε the molar
 * absorptivity (M⁻¹ cm⁻¹), b the path length (cm), c the concentration (M) and a the
 * blank offset (fitted, or held at 0 for a line through the origin).
 *
 * The line is an ordinary (unweighted) least-squares fit of absorbance on
 * concentration, the usual practice for a calibration curve. ε = slope / b with the
 * same relative uncertainty (the path length is taken as exact). An unknown is read
 * back by inverse prediction, c₀ = (A₀ − a)/slope, with the standard error of the
 * handbook calibration-curve formula
 *   s_c = (s_y / slope) · √(1/m + 1/n + (A₀ − Ā)² / (slope² Σ(c − c̄)²))
 * (m readings of the unknown averaged, n standards points), or, through the origin,
 *   s_c = (s_y / slope) · √(1/m + A₀² / (slope² Σc²)).
 *
 * Linear-range check (common practice): a standard above about 1 AU is flagged,
 * since stray light and instrument non-linearity bend the curve there; and a
 * quadratic term is tested on the residuals (Student t on n − 3 dof, flagged at
 * p < 0.01) to catch a curve the eye might miss.
 */
import { fitLeastSquares } from './fit/leastSquares';
import { linearFit, type LinearFitResult } from './fit/linearFit';
import { studentTCdf } from './fit/studentT';
import { absorbanceSigma } from './reactionModel';
import {
  detectionLimits, interceptTestP, INTERCEPT_TEST_ALPHA, lackOfFit, LACK_OF_FIT_ALPHA, noiseGrows, studentisedResiduals,
  type DetectionLimits, type LackOfFit, type StudentisedResidual,
} from './calibrationChecks';

/** Below this a standard's absorbance is a wrong blank or a mix-up, not noise. */
const NEGATIVE_LIMIT_AU = -0.05;

export interface CalibrationStandard {
  concentration_M: number;
  absorbance: number;
  /** Which reading of that standard this is (1, 2, 3 …); informational. */
  replicate?: number;
}

export interface CalibrationOptions {
  /** Cuvette path length; 1.00 cm when omitted. */
  pathLength_cm?: number;
  /**
   * Fit a blank offset (true), force A = ε b c (false), or let the data say (default
   * 'auto': both are fitted and the intercept kept when its t-test rejects a = 0).
   */
  intercept?: boolean | 'auto';
  /** Weights from the absorbance noise model: on, off, or (default 'auto') when the replicates show the noise growing with A. */
  weighted?: boolean | 'auto';
  /** Transmittance noise σ_T for the weights (default 0.001, as for the runs). */
  sigmaT?: number;
  /** Replicate readings of the blank, AU: σ for LOD/LOQ (else the line's residual SD). */
  blankAbsorbances?: readonly number[];
  confidence?: number;
  /** Upper end of the trusted linear range; 1.0 AU when omitted. */
  linearLimit_AU?: number;
}

export interface Calibration {
  /** Slope of A against c, AU M⁻¹ (= ε b). */
  slope_perM: number;
  slopeStdErr_perM: number | null;
  slopeCI_perM: [number, number] | null;
  /** Blank offset, AU (0 when forced through the origin). */
  intercept_AU: number;
  interceptStdErr_AU: number | null;
  interceptCI_AU: [number, number] | null;
  hasIntercept: boolean;
  epsilon_perMperCm: number;
  epsilonStdErr_perMperCm: number | null;
  epsilonCI_perMperCm: [number, number] | null;
  pathLength_cm: number;
  residualSd_AU: number | null;
  rSquared: number | null;
  n: number;
  dof: number;
  distinctConcentrations: number;
  /** Range of the standards, for the extrapolation warning. */
  concentrationRange_M: [number, number];
  absorbanceRange_AU: [number, number];
  /** p-value of a quadratic term in the residuals; null when there are too few standards. */
  curvatureP: number | null;
  confidence: number;
  warnings: string[];
  /** Which line is used and why (origin or intercept, from the t-test of a = 0). */
  modelChoice: { used: 'intercept' | 'origin'; interceptP: number | null; reason: string };
  /** Whether the line is weighted by the absorbance noise model, and why. */
  weighting: { weighted: boolean; reason: string };
  /** LOD = 3.3 σ/S, LOQ = 10 σ/S (ICH Q2(R1)); null without a σ. */
  detection: DetectionLimits | null;
  /** σ_T of the noise model behind the weights. */
  sigmaT: number;
  /** Standards whose externally studentised residual lies beyond the Bonferroni limit. */
  outlyingStandards: StudentisedResidual[];
  /** The Bonferroni limit those residuals were held to; null when too few readings to test. */
  outlierLimit: number | null;
  /** Lack-of-fit F test when standards are replicated. */
  lackOfFit: LackOfFit | null;
  /** The underlying straight-line fit (for the report). */
  fit: LinearFitResult;
}

export type CalibrationOutcome = { ok: true; calibration: Calibration } | { ok: false; error: string };

export function calibrate(standards: readonly CalibrationStandard[], options: CalibrationOptions = {}): CalibrationOutcome {
  const pathLength_cm = options.pathLength_cm ?? 1;
  const limit = options.linearLimit_AU ?? 1;
  const confidence = options.confidence ?? 0.95;
  if (!(pathLength_cm > 0) || !Number.isFinite(pathLength_cm)) {
    return { ok: false, error: `path length ${pathLength_cm} cm is not a positive number; give the cuvette path length in cm (usually 1.00).` };
  }
  if (!(confidence > 0 && confidence < 1)) return { ok: false, error: `confidence level ${confidence} is not between 0 and 1; use e.g. 0.95.` };
  for (let i = 0; i < standards.length; i++) {
    const s = standards[i]!;
    const where = `standard ${i + 1} (concentration ${s.concentration_M} M, absorbance ${s.absorbance})`;
    if (!Number.isFinite(s.concentration_M) || !Number.isFinite(s.absorbance)) {
      return { ok: false, error: `${where}: a value is missing or not a number; correct it or remove the standard.` };
    }
    if (s.concentration_M < 0) return { ok: false, error: `${where}: the concentration is negative; correct it or remove the standard.` };
    // Blank noise can leave a low standard a few mAU below zero, never tenths of an AU.
    if (s.absorbance < NEGATIVE_LIMIT_AU) {
      return { ok: false, error: `${where}: the absorbance is negative, far below the blank; re-measure the blank or remove the standard.` };
    }
  }
  const distinct = new Set(standards.map((s) => s.concentration_M)).size;
  if (distinct < 2) {
    return { ok: false, error: `${distinct} distinct concentration(s) among ${standards.length} standard(s); a calibration line needs at least 2 different concentrations (better 5 or more).` };
  }
  const x = Float64Array.from(standards, (s) => s.concentration_M);
  const y = Float64Array.from(standards, (s) => s.absorbance);
  if (y.every((a) => a === y[0])) {
    return { ok: false, error: `all ${standards.length} standards read ${y[0]} AU whatever their concentration, so there is no line to fit; check the wavelength and that the absorbance column is the one read.` };
  }
  // Weights: the runs' own noise model, where the replicates show the noise growing with A.
  const grows = noiseGrows(x, y);
  const weighted = options.weighted === 'auto' || options.weighted === undefined ? grows?.grows === true : options.weighted;
  const weighting = {
    weighted,
    reason: options.weighted === true ? 'weighted by the absorbance noise model, as asked'
      : options.weighted === false ? 'unweighted, as asked'
        : grows === null ? 'unweighted: no replicated standards to show how the noise grows with absorbance'
          : grows.grows ? `weighted by the absorbance noise model (σ_A = 0.434 σ_T/T): the replicates' SD grows from ${grows.sdLow.toPrecision(2)} to ${grows.sdHigh.toPrecision(2)} AU`
            : `unweighted: the replicates' SD stays within a factor of 2 (${grows.sdLow.toPrecision(2)} to ${grows.sdHigh.toPrecision(2)} AU)`,
  };
  const sigmaT = options.sigmaT ?? 0.001;
  const w = Float64Array.from(y, (a) => (weighted ? 1 / absorbanceSigma(Math.max(0, a), sigmaT) ** 2 : 1));
  const lineOf = (intercept: boolean): LinearFitResult => linearFit({ x, y, weights: weighted ? w : undefined, intercept, confidence });
  // Origin or intercept: both fitted, the intercept kept when the t-test rejects a = 0.
  const withIntercept = lineOf(true);
  const interceptP = withIntercept.ok ? interceptTestP(withIntercept.intercept, withIntercept.byName.intercept!.stdErr, withIntercept.dof) : null;
  // Judged on the line with an intercept: forced through the origin, standards that fall
  // with concentration can still give a positive slope.
  if (withIntercept.ok && withIntercept.slope <= 0) {
    return { ok: false, error: `the absorbance falls as the concentration rises (slope ${withIntercept.slope.toPrecision(3)} AU per M with an intercept), which no Beer–Lambert line does; check that the columns are not swapped and that the standards are listed with their own concentrations.` };
  }
  let hasIntercept: boolean;
  let reason: string;
  if (options.intercept === true || options.intercept === false) {
    hasIntercept = options.intercept;
    reason = `${hasIntercept ? 'with an intercept' : 'through the origin'}, as asked` + (interceptP === null ? '' : ` (t-test of a = 0: p = ${interceptP.toPrecision(2)})`);
  } else if (interceptP === null) {
    hasIntercept = true;
    reason = 'with an intercept: too few standards to test it against zero, so the blank offset is not assumed away';
  } else {
    hasIntercept = interceptP < INTERCEPT_TEST_ALPHA;
    reason = hasIntercept
      ? `with an intercept: a = 0 is rejected (t-test p = ${interceptP.toPrecision(2)} < ${INTERCEPT_TEST_ALPHA}), so the blank is off`
      : `through the origin: the intercept does not differ from zero (t-test p = ${interceptP.toPrecision(2)} ≥ ${INTERCEPT_TEST_ALPHA})`;
  }
  const fit = hasIntercept ? withIntercept : lineOf(false);
  if (!fit.ok) return { ok: false, error: `calibration fit failed: ${fit.warnings[0]}` };
  if (!Number.isFinite(fit.slope) || !Number.isFinite(fit.intercept) || (fit.residualSd !== null && !Number.isFinite(fit.residualSd))) {
    return { ok: false, error: `the calibration line is not finite (slope ${fit.slope}); an absorbance or concentration is far too large; correct the standards and calibrate again.` };
  }
  const warnings: string[] = [];
  if (fit.dof <= 0) warnings.push(`only ${fit.n} standard(s): the line has no degrees of freedom left, so no uncertainty can be given; measure at least ${fit.n + 1}.`);
  if (fit.slope <= 0) warnings.push('the absorbance does not rise with concentration (slope ≤ 0); check the standards and the wavelength.');

  let minC = Infinity, maxC = -Infinity, minA = Infinity, maxA = -Infinity;
  for (let i = 0; i < x.length; i++) {
    minC = Math.min(minC, x[i]!);
    maxC = Math.max(maxC, x[i]!);
    minA = Math.min(minA, y[i]!);
    maxA = Math.max(maxA, y[i]!);
  }
  const high = standards.map((s, i) => ({ s, i })).filter(({ s }) => s.absorbance > limit);
  if (high.length > 0) {
    warnings.push(
      `${high.length} standard(s) read above ${limit} AU (highest ${maxA.toFixed(3)} AU), beyond the usual linear range; dilute them or drop them from the line.`,
    );
  }
  if (minA < -0.01) warnings.push(`a standard reads ${minA.toFixed(3)} AU, below the blank; check the blank and that standard.`);

  const curvatureP = curvatureTest(x, y, distinct);
  if (curvatureP !== null && curvatureP < 0.01) {
    warnings.push(`the residuals curve (quadratic term p = ${curvatureP.toExponential(2)}): the standards are not on a straight line; narrow the range or check for saturation.`);
  }

  const data = { x, y, w };
  const studentised = studentisedResiduals(data, fit.slope, fit.intercept, hasIntercept);
  for (const o of studentised.flagged) {
    const st = standards[o.index]!;
    warnings.push(`standard ${o.index + 1} (${st.concentration_M} M, ${st.absorbance} AU) does not belong to the line (studentised residual ${o.t.toFixed(1)}, beyond ±${studentised.limit!.toFixed(1)}): re-measure it or leave it out.`);
  }
  const lof = lackOfFit(data, fit.slope, fit.intercept, hasIntercept);
  if (lof && lof.p < LACK_OF_FIT_ALPHA) warnings.push(`lack of fit: the replicated standards scatter less about their own means than the line misses them (F = ${lof.f.toPrecision(3)}, p = ${lof.p.toPrecision(2)}); the response is not a straight line over this range.`);
  const zeroDof = fit.dof <= 0;
  const slope = fit.byName.slope!;
  const inter = fit.byName.intercept;
  const toEps = (v: number): number => v / pathLength_cm;
  return {
    ok: true,
    calibration: {
      slope_perM: fit.slope,
      slopeStdErr_perM: zeroDof ? null : slope.stdErr,
      slopeCI_perM: slope.ci,
      intercept_AU: fit.intercept,
      interceptStdErr_AU: inter ? inter.stdErr : null,
      interceptCI_AU: inter ? inter.ci : null,
      hasIntercept,
      epsilon_perMperCm: toEps(fit.slope),
      epsilonStdErr_perMperCm: slope.stdErr === null || zeroDof ? null : toEps(slope.stdErr),
      epsilonCI_perMperCm: slope.ci ? [toEps(slope.ci[0]), toEps(slope.ci[1])] : null,
      pathLength_cm,
      residualSd_AU: zeroDof ? null : fit.residualSd,
      rSquared: fit.rSquared,
      n: fit.n,
      dof: fit.dof,
      distinctConcentrations: distinct,
      concentrationRange_M: [minC, maxC],
      absorbanceRange_AU: [minA, maxA],
      curvatureP,
      confidence,
      warnings: [...fit.warnings, ...warnings],
      modelChoice: { used: hasIntercept ? 'intercept' : 'origin', interceptP, reason },
      weighting,
      sigmaT,
      // weighted, the residual SD is a scale on the noise model: σ at the blank is s·σ_A(0)
      detection: detectionLimits(fit.slope, zeroDof || fit.residualSd === null ? null : fit.residualSd * (weighted ? absorbanceSigma(0, sigmaT) : 1), options.blankAbsorbances),
      outlyingStandards: studentised.flagged,
      outlierLimit: studentised.limit,
      lackOfFit: lof,
      fit,
    },
  };
}

/** Two-sided p of the quadratic coefficient in A = a + b c + q c²; null with too few standards. */
function curvatureTest(x: Float64Array, y: Float64Array, distinct: number): number | null {
  if (distinct < 3 || x.length < 4) return null;
  // Centre and scale c so the quadratic fit is well conditioned.
  let mean = 0;
  for (const v of x) mean += v;
  mean /= x.length;
  let spread = 0;
  for (const v of x) spread = Math.max(spread, Math.abs(v - mean));
  const u = Float64Array.from(x, (v) => (v - mean) / spread);
  const quad = fitLeastSquares({
    parameters: [{ name: 'a', value: 0 }, { name: 'b', value: 0 }, { name: 'q', value: 0 }],
    x: u,
    y,
    model: (t, p) => p[0]! + p[1]! * t + p[2]! * t * t,
    jacobian: (t, _p, out) => {
      out[0] = 1;
      out[1] = t;
      out[2] = t * t;
    },
  });
  const q = quad.byName.q!;
  if (!quad.ok || q.stdErr === null) return null;
  if (q.stdErr === 0) return q.value === 0 ? 1 : 0;
  const t = Math.abs(q.value / q.stdErr);
  return 2 * (1 - studentTCdf(t, quad.dof));
}

export interface ConcentrationEstimate {
  concentration_M: number;
  stdErr_M: number | null;
  ci_M: [number, number] | null;
  warnings: string[];
}

/**
 * Inverse prediction of an unknown from its absorbance (the mean of `readings`
 * replicate readings), with the handbook calibration-curve standard error.
 */
export function predictConcentration(cal: Calibration, absorbance: number, readings = 1): ConcentrationEstimate {
  const warnings: string[] = [];
  const b = cal.slope_perM;
  const c = (absorbance - cal.intercept_AU) / b;
  const fit = cal.fit;
  let se: number | null = null;
  if (cal.residualSd_AU !== null && Number.isFinite(c) && readings >= 1) {
    // Weighted (w = 1/σ_A²): s is the reduced-χ² scale, the unknown's own noise is s·σ_A(A0)
    // and the line's part uses Σw and the weighted Sxx; unweighted, w = 1 and this is the
    // handbook formula above.
    const sy = cal.residualSd_AU;
    const own = cal.weighting.weighted ? absorbanceSigma(Math.max(0, absorbance), cal.sigmaT) ** 2 : 1;
    const term = cal.hasIntercept
      ? own / readings + 1 / fit.sumWeights + (absorbance - fit.meanY) ** 2 / (b * b * fit.sxx)
      : own / readings + (absorbance * absorbance) / (b * b * fit.sxx);
    se = Math.abs(sy / b) * Math.sqrt(term);
  }
  const tq = fit.tQuantile;
  const ci: [number, number] | null = se !== null && tq !== null ? [c - tq * se, c + tq * se] : null;
  if (!Number.isFinite(c)) warnings.push('the calibration slope is zero: no concentration can be read back.');
  const [lo, hi] = cal.absorbanceRange_AU;
  if (absorbance > hi || absorbance < lo) {
    warnings.push(`absorbance ${absorbance} lies outside the standards (${lo.toFixed(3)}–${hi.toFixed(3)} AU): the concentration is extrapolated.`);
  }
  return { concentration_M: c, stdErr_M: se, ci_M: ci, warnings };
}

/** An absorbance series converted to concentration, c = (A − a)/slope, point by point. */
export function absorbanceToConcentration(cal: Pick<Calibration, 'slope_perM' | 'intercept_AU'>, absorbance: Float64Array, count: number = absorbance.length): Float64Array {
  const n = Math.min(count, absorbance.length);
  const out = new Float64Array(n);
  const a = cal.intercept_AU;
  const inv = 1 / cal.slope_perM;
  for (let i = 0; i < n; i++) out[i] = (absorbance[i]! - a) * inv;
  return out;
}
