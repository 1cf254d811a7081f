/**
 * `rateline analyze FILE [--format text|json] [--half-lives N] [--precision F] [--from S] [--to S]`:
 * reads a recorded run, feeds its readings one by one to a RunAnalyzer (as they would
 * arrive at the bench) and prints the final result, in absorbance or, with a calibration,
 * in concentration (calibratedSignal.ts). Exit 0 done, 2 bad input.
 */
import { fitSettingsToApply } from '../../../acquisition/record/recordTimeZero';
import { InputError } from '../common/cliErrors';
import { parseCommandArguments } from '../common/arguments';
import { formatAnalysisText } from '../common/analyzeReport';
import { unansweredRun } from '../common/unansweredRun';
import { HALF_LIVES_WORDS, halfLivesCheck } from '../common/benchRanges';
import { LONGEST_RUN_S } from '../../../acquisition/files/runPlausibility';

const withinAnyRun = (x: number): boolean => Math.abs(x) <= LONGEST_RUN_S;
const TIME_WORDS = `a time in seconds within ±${LONGEST_RUN_S.toExponential(0)} s`;
import { loadRun } from '../../../acquisition/files/runFile';
import { RunAnalyzer } from '../../../kinetics/runAnalyzer';
import { MIN_POINTS_TO_ESTIMATE } from '../../../kinetics/stopAdvice';
import { calibratedC0, coverageWarnings, resolveCalibration, signalOptions, toConcentration } from '../common/calibratedSignal';

const HELP = `usage: rateline analyze FILE [--format text|json] [--half-lives N] [--precision F] [--from S] [--to S] [--calibration CAL]

  FILE            a run record (.jsonl, as rateline record writes it), or a CSV with a
                  header row naming time_s and absorbance (comma or semicolon separated;
                  a decimal comma is accepted with semicolons)
  --format        text (default) or json
  --half-lives N  target in half-lives, i.e. fraction converted 1 − 2^(−N) (default 3)
  --precision F   settled when the 95% CI half-width of k is within F × k (default 0.05)
  --from S, --to S  fit window in seconds (readings outside are kept but not fitted)
  --a-inf A       hold the end absorbance A∞ at A instead of fitting it (an absorbance,
                  converted to c∞ when the run is fitted in concentration)
  --weights W     noise (default: weights from the absorbance noise model,
                  σ_A = 0.434 σ_T / T) or none (unweighted least squares)
  --noise-t S     the instrument's transmittance noise σ_T for the weights (default 0.001)
  --robust R      on (default: a bubble spike is down-weighted and listed) or off
  --calibration CAL  fit in concentration: CAL is a calibration file (rateline calibrate
                  --save) or a CSV of standards (fitted now through the origin, 1.00 cm);
                  c = (A − a)/slope in the calibration's unit, so k is in unit s^-1 (zero),
                  s^-1 (first, unchanged), unit^-1 s^-1 (second). A run record whose header
                  carries a calibration is fitted in concentration unless --calibration none.
                  The noise weights carry over: σ_c = σ_A / slope.`;

export async function run(argv: string[]): Promise<number> {
  const cmd = 'analyze';
  const args = parseCommandArguments(cmd, argv, {
    format: 'value', 'half-lives': 'value', precision: 'value', from: 'value', to: 'value', 'a-inf': 'value',
    weights: 'value', 'noise-t': 'value', robust: 'value', calibration: 'value',
  });
  if (args.help) { console.log(HELP); return 0; }
  if (args.positionals.length !== 1) {
    throw new InputError(`rateline analyze: ${args.positionals.length === 0 ? 'no file given' : 'give one file only'}; usage: rateline analyze FILE [--format text|json].`);
  }
  const file = args.positionals[0]!;
  const format = args.choice('format', ['text', 'json'], 'text');
  const given = {
    targetHalfLives: args.number('half-lives', halfLivesCheck, HALF_LIVES_WORDS),
    precision: args.number('precision', (x) => x > 0 && x < 1, 'a fraction between 0 and 1 (e.g. 0.05)'),
    from_s: args.number('from', withinAnyRun, TIME_WORDS),
    to_s: args.number('to', withinAnyRun, TIME_WORDS),
  };
  const fixedAInf = args.number('a-inf', (x) => x > -1 && x < 5, 'an absorbance between -1 and 5');
  const sigmaT = args.number('noise-t', (x) => x > 0 && x < 0.5, 'a transmittance noise between 0 and 0.5 (e.g. 0.001)');
  const weights = args.choice('weights', ['noise', 'none'], 'noise');
  const robust = args.choice('robust', ['on', 'off'], 'on');
  if (given.from_s !== undefined && given.to_s !== undefined && !(given.to_s > given.from_s)) {
    throw new InputError(`rateline analyze: the fit window --from ${given.from_s} --to ${given.to_s} is empty; --to must be later than --from.`);
  }
  const loaded = await loadRun(file);
  // A record says which window, target and precision its run stopped with; the command line overrides them.
  const { targetHalfLives, precision, from_s, to_s } = fitSettingsToApply(loaded.fitSettings ?? null, given);
  const { time_s, absorbance } = loaded;
  const calibration = await resolveCalibration(args.value('calibration'), loaded);
  // A record that was cut off (a crash, a pulled plug) is analysed as recovered; say so
  // on stderr so that JSON on stdout stays clean.
  if (loaded.notice) console.error(loaded.notice);
  let inWindow = 0;
  for (let i = 0; i < time_s.length; i++) {
    if ((from_s === undefined || time_s[i] >= from_s) && (to_s === undefined || time_s[i] <= to_s)) inWindow++;
  }
  if (inWindow < MIN_POINTS_TO_ESTIMATE) {
    const where = from_s !== undefined || to_s !== undefined ? ' in the fit window' : '';
    throw new InputError(`${file}: only ${inWindow} reading(s)${where}; a fit needs at least ${MIN_POINTS_TO_ESTIMATE}. Record a longer run${where ? ' or widen --from/--to' : ''}.`);
  }
  const analyzer = new RunAnalyzer({
    targetHalfLives, precision, from_s, to_s, sigmaT, weighted: weights === 'noise', robust: robust === 'on',
    fixedAInf: calibration && fixedAInf !== undefined ? (fixedAInf - calibration.intercept) / calibration.slope : fixedAInf,
    ...(calibration ? { signal: signalOptions(calibration) } : {}),
  });
  const signal = calibration ? toConcentration(calibration, absorbance) : absorbance;
  for (let i = 0; i < time_s.length; i++) analyzer.add(time_s[i], signal[i]);
  const result = analyzer.flush();
  // No answer (a flat run, no rate law fitted) is a sentence and exit 2, not a table of dashes.
  const unanswered = unansweredRun(file, result);
  if (unanswered) throw new InputError(unanswered);
  const calibrationUsed = calibration
    ? {
        source: calibration.source,
        label: calibration.label,
        signal: { name: 'concentration', unit: calibration.unit },
        slope_AUperUnit: calibration.slope,
        intercept_AU: calibration.intercept,
        epsilon_perMperCm: calibration.file?.epsilon_perMperCm ?? null,
        pathLength_cm: calibration.file?.pathLength_cm ?? null,
        c0: calibratedC0(calibration, result),
        warnings: coverageWarnings(calibration, time_s, absorbance, { from_s, to_s }),
      }
    : null;
  if (format === 'json') console.log(JSON.stringify({ file, ...result, calibration: calibrationUsed }, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v), 2));
  else console.log(formatAnalysisText(file, result, calibrationUsed));
  return 0;
}
