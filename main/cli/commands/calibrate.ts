/**
 * `rateline calibrate FILE [--path-cm L] [--intercept | --origin] [--format text|json] [--predict A ...]`:
 * the Beer–Lambert line from a CSV of standards (kinetics/calibration.ts), with the
 * slope and ε and their 95% intervals, the residual of every standard, R², the
 * linear-range warnings, and unknowns read back with their standard errors. The line's
 * self-tests (kinetics/calibrationChecks.ts) are said in sentences: which line (origin or
 * intercept) and why, the weighting and why, LOD/LOQ and their σ, standards that do not
 * belong to the line, lack of fit.
 * Concentrations come in the unit of the file's column (M, mM or µM) and results that
 * are concentrations are given in that unit; ε is always M⁻¹ cm⁻¹. `--save CAL.json` keeps
 * the line as a calibration file (acquisition/files/calibrationFile.ts). Exit 0 done, 2 bad input.
 */
import { existsSync, statSync } from 'node:fs';
import { PLAUSIBLE_WORDS, plausible } from '../common/benchRanges';
import { InputError } from '../common/cliErrors';
import { parseCommandArguments } from '../common/arguments';
import { CalibrationFileError, calibrationFile, saveCalibrationFile } from '../../../acquisition/files/calibrationFile';
import { isoWithLocalOffset } from '../../../acquisition/record/runRecordFormat';
import { predictConcentration, type Calibration } from '../../../kinetics/calibration';
import { fitStandardsFile } from '../common/standardsFile';
import { formatInterval, formatWithUncertainty } from '../../../kinetics/fit/report';

const HELP = `usage: rateline calibrate FILE [--path-cm L] [--intercept | --origin] [--format text|json] [--predict A ...] [--save CAL.json]

  FILE           a CSV of standards: a header naming one concentration column
                 (concentration_M, concentration_mM or concentration_uM) and absorbance,
                 then one reading a line (replicates of a standard on lines of their own);
                 comma or semicolon separated, a decimal comma accepted with semicolons,
                 lines starting with # are comments
  --path-cm L    cuvette path length in cm (default 1.00); ε = slope / L
  --intercept    fit a blank offset a (A = ε L c + a)
  --origin       force the line through the origin (A = ε L c), as for standards read
                 against their blank; with neither, both lines are fitted and the
                 intercept kept when its t-test rejects a = 0 (p < 0.05)
  --format       text (default) or json
  --predict A …  absorbances of unknowns (the values after --predict, up to the next
                 option; put FILE before it): each is read back as a concentration, in
                 the unit of the file's concentration column, with its standard error
  --save CAL.json  keep the line in a calibration file (never overwritten) for
                 rateline analyze RUN --calibration CAL.json and rateline record
                 --calibration CAL.json; concentrations in the unit of the file's column`;

export async function run(argv: string[]): Promise<number> {
  const cmd = 'calibrate';
  const args = parseCommandArguments(cmd, argv, { 'path-cm': 'value', intercept: 'flag', origin: 'flag', format: 'value', predict: 'values', save: 'value' });
  if (args.help) { console.log(HELP); return 0; }
  if (args.positionals.length !== 1) {
    throw new InputError(`rateline calibrate: ${args.positionals.length === 0 ? 'no file given' : `give one file only (got ${args.positionals.join(', ')})`}; usage: rateline calibrate FILE [--intercept] [--predict A ...].`);
  }
  const file = args.positionals[0]!;
  const format = args.choice('format', ['text', 'json'], 'text');
  const pathLength_cm = args.number('path-cm', plausible.path_cm, PLAUSIBLE_WORDS.path_cm) ?? 1;
  const predict = args.numbers('predict', (x) => x > -1 && x < 10, 'an absorbance (put FILE before --predict)');
  if (args.flag('intercept') && args.flag('origin')) {
    throw new InputError('rateline calibrate: --intercept and --origin ask for two different lines; give one of them, or neither to let the t-test of the intercept decide.');
  }
  const intercept = args.flag('intercept') ? true : args.flag('origin') ? false : 'auto';

  const save = args.value('save');
  if (save !== undefined && existsSync(save)) {
    throw new InputError(`rateline calibrate: ${save} is already ${statSync(save).isDirectory() ? 'a folder' : 'a file'}, and a calibration file is never overwritten; choose another --save name.`);
  }
  const { cal, unit, rows, standards } = await fitStandardsFile(file, { pathLength_cm, intercept });
  const f = unit.toMolar; // slope per file unit = slope per M × (M per file unit)
  const residuals = rows.map((r, i) => {
    const fitted = cal.slope_perM * standards[i]!.concentration_M + cal.intercept_AU;
    return { line: r.line, concentration: r.values[0]!, absorbance: r.values[1]!, fitted_AU: fitted, residual_AU: r.values[1]! - fitted };
  });
  const predictions = predict.map((a) => {
    const p = predictConcentration(cal, a);
    return {
      absorbance: a,
      concentration: p.concentration_M / f,
      stdErr: p.stdErr_M === null ? null : p.stdErr_M / f,
      ci95: p.ci_M ? ([p.ci_M[0] / f, p.ci_M[1] / f] as [number, number]) : null,
      warnings: p.warnings,
    };
  });
  const scale = (ci: [number, number] | null): [number, number] | null => (ci ? [ci[0] * f, ci[1] * f] : null);
  const result = {
    file,
    concentrationUnit: unit.unit,
    model: cal.hasIntercept ? 'A = epsilon*L*c + a' : 'A = epsilon*L*c',
    pathLength_cm: cal.pathLength_cm,
    n: cal.n,
    distinctConcentrations: cal.distinctConcentrations,
    dof: cal.dof,
    slope_AUperUnit: cal.slope_perM * f,
    slopeStdErr_AUperUnit: cal.slopeStdErr_perM === null ? null : cal.slopeStdErr_perM * f,
    slopeCI95_AUperUnit: scale(cal.slopeCI_perM),
    epsilon_perMperCm: cal.epsilon_perMperCm,
    epsilonStdErr_perMperCm: cal.epsilonStdErr_perMperCm,
    epsilonCI95_perMperCm: cal.epsilonCI_perMperCm,
    intercept_AU: cal.hasIntercept ? cal.intercept_AU : null,
    interceptStdErr_AU: cal.interceptStdErr_AU,
    interceptCI95_AU: cal.interceptCI_AU,
    residualSd_AU: cal.residualSd_AU,
    rSquared: cal.rSquared,
    modelChoice: cal.modelChoice,
    weighting: cal.weighting,
    detection: cal.detection === null ? null : {
      lod: cal.detection.lod_M / f, loq: cal.detection.loq_M / f, sigma_AU: cal.detection.sigma_AU, sigmaFrom: cal.detection.sigmaFrom, basis: cal.detection.basis,
    },
    outlyingStandards: cal.outlyingStandards.map((o) => ({ line: rows[o.index]!.line, studentisedResidual: o.t })),
    lackOfFit: cal.lackOfFit,
    residuals,
    predictions,
    warnings: cal.warnings,
  };
  if (save !== undefined) {
    try {
      saveCalibrationFile(save, calibrationFile(cal, unit.unit, file, isoWithLocalOffset(new Date())));
    } catch (err) {
      if (err instanceof CalibrationFileError) throw new InputError(`rateline calibrate: ${err.message}`);
      throw err;
    }
  }
  if (format === 'json') console.log(JSON.stringify(save === undefined ? result : { ...result, saved: save }, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v), 2));
  else console.log(calibrationText(result, cal) + (save === undefined ? '' : `\nSaved to ${save} (rateline analyze RUN --calibration ${save} fits the run in ${unit.unit}).`));
  return 0;
}

const pm = (v: number, se: number | null): string => formatWithUncertainty(v, se);
const ci = (c: [number, number] | null, se: number | null): string => (c && se !== null ? `   95% CI ${formatInterval(c, se)}` : '   95% CI not available');
const g = (x: number, digits = 4): string => (x !== 0 && (Math.abs(x) < 1e-3 || Math.abs(x) >= 1e5) ? x.toExponential(digits - 1) : x.toPrecision(digits));

function calibrationText(r: {
  file: string; concentrationUnit: string; pathLength_cm: number; n: number; distinctConcentrations: number; dof: number;
  slope_AUperUnit: number; slopeStdErr_AUperUnit: number | null; slopeCI95_AUperUnit: [number, number] | null;
  epsilon_perMperCm: number; epsilonStdErr_perMperCm: number | null; epsilonCI95_perMperCm: [number, number] | null;
  intercept_AU: number | null; interceptStdErr_AU: number | null; interceptCI95_AU: [number, number] | null;
  residualSd_AU: number | null; rSquared: number | null;
  detection: { lod: number; loq: number; sigma_AU: number; sigmaFrom: string } | null;
  outlyingStandards: { line: number; studentisedResidual: number }[];
  residuals: { line: number; concentration: number; absorbance: number; fitted_AU: number; residual_AU: number }[];
  predictions: { absorbance: number; concentration: number; stdErr: number | null; ci95: [number, number] | null; warnings: string[] }[];
  warnings: string[];
}, cal: Calibration): string {
  const u = r.concentrationUnit;
  const out: string[] = [];
  out.push(`Beer–Lambert calibration, ${r.file}: ${r.n} reading(s) at ${r.distinctConcentrations} concentration(s); concentrations in ${u} (the file's column), path length ${r.pathLength_cm} cm`);
  const squares = cal.weighting.weighted ? 'weighted least squares' : 'ordinary least squares';
  out.push(cal.hasIntercept ? `Model: A = ε L c + a (a = blank offset), ${squares}` : `Model: A = ε L c (through the origin), ${squares}`);
  out.push(`  slope = ${pm(r.slope_AUperUnit, r.slopeStdErr_AUperUnit)} AU per ${u}${ci(r.slopeCI95_AUperUnit, r.slopeStdErr_AUperUnit)}`);
  out.push(`  ε     = ${pm(r.epsilon_perMperCm, r.epsilonStdErr_perMperCm)} M⁻¹ cm⁻¹${ci(r.epsilonCI95_perMperCm, r.epsilonStdErr_perMperCm)}`);
  if (r.intercept_AU !== null) out.push(`  a     = ${pm(r.intercept_AU, r.interceptStdErr_AU)} AU${ci(r.interceptCI95_AU, r.interceptStdErr_AU)}`);
  out.push(`  residual SD ${r.residualSd_AU === null ? 'not available' : `${g(r.residualSd_AU, 3)} AU`}, R² ${r.rSquared === null ? 'not available' : r.rSquared.toFixed(6)}, ${r.dof} dof`);
  out.push('');
  out.push('Self-tests of the line:');
  for (const sentence of selfTestSentences(r, cal)) out.push(`  - ${sentence}`);
  out.push('');
  const rows = [['line', `c (${u})`, 'A', 'fitted A', 'residual (AU)']];
  for (const s of r.residuals) rows.push([String(s.line), g(s.concentration), s.absorbance.toFixed(4), s.fitted_AU.toFixed(4), (s.residual_AU >= 0 ? '+' : '') + s.residual_AU.toFixed(4)]);
  out.push(...table(rows));
  if (r.predictions.length > 0) {
    out.push('');
    out.push(`Unknowns (concentration in ${u}, standard error from the calibration-curve formula):`);
    for (const p of r.predictions) {
      out.push(`  A = ${p.absorbance}: c = ${pm(p.concentration, p.stdErr)} ${u}${ci(p.ci95, p.stdErr)}`);
      for (const w of p.warnings) out.push(`    - ${w}`);
    }
  }
  out.push(`Warnings: ${r.warnings.length === 0 ? 'none' : ''}`);
  for (const w of r.warnings) out.push(`  - ${w}`);
  return out.join('\n');
}

/** The self-tests of kinetics/calibrationChecks.ts, one sentence each. */
function selfTestSentences(r: {
  concentrationUnit: string; dof: number; detection: { lod: number; loq: number; sigma_AU: number; sigmaFrom: string } | null;
  outlyingStandards: { line: number; studentisedResidual: number }[];
}, cal: Calibration): string[] {
  const u = r.concentrationUnit;
  const cap = (x: string): string => x.charAt(0).toUpperCase() + x.slice(1);
  const out: string[] = [];
  out.push(`Line: ${cal.modelChoice.reason}.`);
  out.push(`Weighting: ${cal.weighting.reason}.`);
  if (r.dof <= 0) out.push(`No degrees of freedom are left (${cal.n} reading(s) for ${cal.hasIntercept ? 2 : 1} parameter(s)), so no uncertainty, LOD or outlier test can be given; measure more standards.`);
  const d = r.detection;
  if (d) {
    out.push(`Limits (ICH Q2(R1), LOD = 3.3 σ/S, LOQ = 10 σ/S, σ = the ${d.sigmaFrom}, ${g(d.sigma_AU, 3)} AU): LOD ${g(d.lod, 3)} ${u}, LOQ ${g(d.loq, 3)} ${u}.`);
  } else if (r.dof > 0) {
    out.push('Limits of detection and quantitation: not available (no σ to base them on).');
  }
  const t = cal.outlierLimit;
  if (t === null) out.push('Outlying standards: too few readings to test (externally studentised residuals need at least 2 dof).');
  else if (r.outlyingStandards.length === 0) out.push(`Outlying standards: none (every externally studentised residual within ±${t.toFixed(2)}, the Bonferroni limit at 95%).`);
  else for (const o of r.outlyingStandards) out.push(`Outlying standard: line ${o.line} (studentised residual ${o.studentisedResidual.toFixed(2)}, beyond ±${t.toFixed(2)}); re-measure it or leave it out.`);
  const lof = cal.lackOfFit;
  if (lof === null) out.push('Lack of fit: not tested (it needs replicated standards and more concentrations than parameters).');
  else out.push(`${cap(lof.p < 0.05 ? 'lack of fit: found' : 'lack of fit: none found')} (F = ${lof.f.toPrecision(3)} on ${lof.dofLack} and ${lof.dofPure} dof, p = ${lof.p.toPrecision(2)}${lof.p < 0.05 ? ' < 0.05: the response is not a straight line over this range' : ' ≥ 0.05'}).`);
  return out;
}

function table(rows: string[][]): string[] {
  const widths = rows[0]!.map((_, j) => Math.max(...rows.map((r) => r[j]!.length)));
  return rows.map((r) => r.map((c, j) => c.padStart(widths[j]!)).join('  ').trimEnd());
}
