/**
 * A run analysed in concentration: which calibration applies (`--calibration CAL.json`,
 * `--calibration STANDARDS.csv` fitted on the spot, or the one in a run record's header;
 * `--calibration none` for absorbance), the readings converted, c = (A − a)/slope, the
 * readings the calibration does not cover, and c0 with the calibration's own uncertainty.
 *
 * Why the rate constants come out as they do (a linear map c = (A − a)/m, so
 * A − A∞ = m (c − c∞)):
 *   zero order   A = A0 − k_A t          → k_c = k_A / m       (unit per s)
 *   first order  A − A∞ = (A0 − A∞) e^(−kt) → k unchanged       (s⁻¹)
 *   second order 1/(A − A∞) = 1/(A0 − A∞) + k_A t → k_c = m · k_A (unit⁻¹ s⁻¹)
 * with m = ε b in AU per concentration unit. Zero order ends on the blank, which in
 * concentration is c∞ = 0, i.e. A∞ = a: with a blank offset it is the absorbance fit
 * with A∞ held at a, not at 0.
 */
import type { AnalysisResult, AnalyzerOptions } from '../../../kinetics/analysisTypes';
import { absorbanceToConcentration } from '../../../kinetics/calibration';
import {
  CalibrationFileError, calibrationFile, readCalibrationFile, recordCalibration, type CalibrationFile,
} from '../../../acquisition/files/calibrationFile';
import { isoWithLocalOffset } from '../../../acquisition/record/runRecordFormat';
import type { LoadedRun } from '../../../acquisition/files/runFile';
import { InputError } from './cliErrors';
import { fitStandardsFile } from './standardsFile';

/** Above this a reading is beyond the usual linear range when the calibration does not say (common practice: about 1 AU). */
const DEFAULT_LINEAR_LIMIT_AU = 1;

export interface SignalCalibration {
  /** Where it came from, as the report says it. */
  source: string;
  label: string;
  unit: string;
  /** AU per signal unit, and the blank offset in AU: c = (A − intercept) / slope. */
  slope: number;
  intercept: number;
  /** The whole calibration when known (a saved file, standards fitted now, a full header). */
  file: CalibrationFile | null;
}

function fromError<T>(fn: () => T): T {
  try {
    return fn();
  } catch (err) {
    if (err instanceof CalibrationFileError) throw new InputError(err.message);
    throw err;
  }
}

/** The calibration to use for a run, or null for absorbance. */
export async function resolveCalibration(option: string | undefined, run: LoadedRun): Promise<SignalCalibration | null> {
  if (option === 'none') return null;
  if (option === undefined) {
    if (run.source.format !== 'runRecord' || run.source.calibration === null) return null;
    const header = run.source.calibration;
    const where = `${run.source.path} (header calibration)`;
    const { line, file } = fromError(() => recordCalibration(header, where));
    return { source: `the run record's header`, label: line.label, unit: line.signal.unit, slope: line.slope, intercept: line.intercept, file };
  }
  if (/\.(csv|txt|tsv)$/i.test(option)) {
    // Standards fitted now with the defaults of rateline calibrate (1.00 cm, through the origin).
    const { cal, unit } = await fitStandardsFile(option, { pathLength_cm: 1, intercept: false });
    const file = calibrationFile(cal, unit.unit, option, isoWithLocalOffset(new Date()));
    return { source: `${option} (standards, fitted now through the origin, 1.00 cm)`, label: file.label, unit: file.signal.unit, slope: file.slope, intercept: file.intercept, file };
  }
  const file = fromError(() => readCalibrationFile(option));
  return { source: option, label: file.label, unit: file.signal.unit, slope: file.slope, intercept: file.intercept, file };
}

/** The analyzer's signal options for a calibration: name, unit, and the line back to absorbance for the weights. */
export function signalOptions(cal: SignalCalibration): NonNullable<AnalyzerOptions['signal']> {
  return { name: 'concentration', unit: cal.unit, absorbance: { slope: cal.slope, intercept: cal.intercept } };
}

/** Each absorbance as a concentration in the calibration's unit. */
export function toConcentration(cal: SignalCalibration, absorbance: Float64Array): Float64Array {
  // absorbanceToConcentration computes (A − a)/slope; with the slope per signal unit the result is in that unit.
  return absorbanceToConcentration({ slope_perM: cal.slope, intercept_AU: cal.intercept }, absorbance);
}

/**
 * Readings the calibration does not vouch for: outside the standards' absorbances
 * (extrapolated; a line through the origin counts the blank, 0 AU, as its lowest point)
 * and above the linear limit. A reading within 3 residual SDs of the calibration of an
 * end is not counted: that is the line's own scatter, not an extrapolation.
 */
export function coverageWarnings(cal: SignalCalibration, time_s: Float64Array, absorbance: Float64Array, window: { from_s?: number; to_s?: number }): string[] {
  const warnings: string[] = [];
  const f = cal.file;
  const limit = f?.linearLimit_AU ?? DEFAULT_LINEAR_LIMIT_AU;
  const range = f ? f.standards.absorbanceRange_AU : null;
  const lo = range ? (f!.hasIntercept ? range[0] : Math.min(0, range[0])) : -Infinity;
  const hi = range ? range[1] : Infinity;
  const tol = 3 * (f?.standards.residualSd_AU ?? 0);
  let outside = 0, above = 0, total = 0, min = Infinity, max = -Infinity;
  for (let i = 0; i < absorbance.length; i++) {
    const t = time_s[i]!;
    if ((window.from_s !== undefined && t < window.from_s) || (window.to_s !== undefined && t > window.to_s)) continue;
    const a = absorbance[i]!;
    if (!Number.isFinite(a)) continue;
    total++;
    if (a < lo - tol || a > hi + tol) {
      outside++;
      min = Math.min(min, a);
      max = Math.max(max, a);
    }
    if (a > limit) above++;
  }
  if (!range) {
    warnings.push(`the calibration (${cal.source}) carries no range of standards, so extrapolation cannot be checked; save it with rateline calibrate --save to keep its range.`);
  } else if (outside > 0) {
    warnings.push(
      `${outside} of ${total} reading(s) lie outside the calibrated range (${lo.toFixed(3)}–${hi.toFixed(3)} AU; outside readings from ${min.toFixed(3)} to ${max.toFixed(3)} AU): ` +
        `their concentrations are extrapolated; add standards that cover the run${f!.hasIntercept ? ' (or a blank, with a line through the origin)' : ''}.`,
    );
  }
  if (above > 0) warnings.push(`${above} reading(s) above ${limit} AU, beyond the linear range of the calibration: the concentrations there are not to be trusted; dilute the run or fit a window below it.`);
  return warnings;
}

export interface CalibratedC0 {
  model: string;
  value: number;
  stdErr: number;
  ci95: [number, number] | null;
  /** What the interval covers. */
  covers: string;
}

/**
 * c0 of the driving model with the calibration's uncertainty added, by the handbook
 * calibration-curve formula with the unknown's own reading term replaced by the fit's
 * variance of A0 (σ_A0 = m · SE(c0) from the fit):
 *   s_c0² = SE_fit(c0)² + (s_y/m)² (1/n + (A0 − Ā)² / (m² Σ(c − c̄)²))   with a blank offset,
 *   s_c0² = SE_fit(c0)² + (s_y/m)² A0² / (m² Σc²)                          through the origin.
 * The 95% interval takes Student t on the calibration's dof (the scarcer of the two, so the
 * interval errs wide).
 */
export function calibratedC0(cal: SignalCalibration, r: AnalysisResult): CalibratedC0 | null {
  const m = r.models[r.drivingModel];
  if (m.a0 === null || m.a0StdErr === null) return null;
  const f = cal.file;
  const s = f?.standards;
  if (!f || !s || s.residualSd_AU === null || s.t95 === null) {
    return { model: r.drivingModel, value: m.a0, stdErr: m.a0StdErr, ci95: null, covers: 'fit noise only (the calibration carries no uncertainty)' };
  }
  const slope = cal.slope;
  const a0_AU = slope * m.a0 + cal.intercept;
  const term = f.hasIntercept ? 1 / s.n + (a0_AU - s.meanAbsorbance_AU) ** 2 / (slope * slope * s.sxx) : (a0_AU * a0_AU) / (slope * slope * s.sxx);
  const calVar = (s.residualSd_AU / slope) ** 2 * term;
  const se = Math.sqrt(m.a0StdErr ** 2 + calVar);
  return { model: r.drivingModel, value: m.a0, stdErr: se, ci95: [m.a0 - s.t95 * se, m.a0 + s.t95 * se], covers: 'fit noise and the calibration line' };
}
