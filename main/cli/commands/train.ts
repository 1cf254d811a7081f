/**
 * `rateline train RECORD --stop-at S [--order zero|first|second] [--trainee NAME] [--format text|json]`:
 * scores a trainee's stop on a recorded run (kinetics/trainingScore.ts) and keeps the
 * attempt beside the record (RUN.attempts.jsonl); `--attempts` lists the attempts kept.
 * The run is fitted as `rateline analyze` fits it with its defaults (in concentration when
 * the header carries a calibration). Exit 0 done, 2 bad input.
 */
import { basename } from 'node:path';
import { InputError } from '../common/cliErrors';
import { parseCommandArguments } from '../common/arguments';
import { loadRun } from '../../../acquisition/files/runFile';
import { appendAttempt, readAttempts, type TrainingAttempt } from '../../../acquisition/record/trainingAttempts';
import { scoreTrainingAttempt, type TrainingScore } from '../../../kinetics/trainingScore';
import type { IntegerOrder } from '../../../kinetics/analysisTypes';
import { MIN_POINTS_TO_ESTIMATE } from '../../../kinetics/stopAdvice';
import { resolveCalibration, signalOptions, toConcentration } from '../common/calibratedSignal';
import { LONGEST_RUN_S } from '../../../acquisition/files/runPlausibility';

const HELP = `usage: rateline train RECORD --stop-at S [--order zero|first|second] [--trainee NAME] [--format text|json]
       rateline train RECORD --attempts [--format text|json]

  RECORD       a run record (.jsonl, as rateline record writes it)
  --stop-at S  where the trainee said stop, in seconds of the run; "end" when they let it run out
  --order O    the order the trainee thinks it is: zero, first or second
  --trainee N  the trainee's name, kept with the attempt
  --attempts   list the attempts kept beside the record (RECORD with .attempts.jsonl)
  --format     text (default) or json`;

/** Numbers in the command's own lines; one place, so a shared rounding module can take over. */
const g = (x: number | null, digits = 4): string => (x === null ? '—' : Math.abs(x) >= 1e5 || (Math.abs(x) < 1e-3 && x !== 0) ? x.toExponential(digits - 1) : x.toPrecision(digits));

function scoreText(s: TrainingScore): string {
  const unit = s.whole.kUnit;
  const ci = (c: [number, number] | null): string => (c ? `[${g(c[0])}, ${g(c[1])}]` : '—');
  return [
    s.summary,
    `  at the stop (${g(s.trainee.time_s)} s): k = ${g(s.trainee.k)} ± ${g(s.trainee.kStdErr, 2)} ${unit} (${s.trainee.model} order), 95% CI ${ci(s.trainee.kCI95)}; order ${s.trainee.verdictOrder}`,
    `  whole run (${g(s.whole.time_s)} s): k = ${g(s.whole.k)} ± ${g(s.whole.kStdErr, 2)} ${unit}, 95% CI ${ci(s.whole.kCI95)}; order ${s.whole.verdictOrder}`,
    `  k off by ${g(s.kOffInStdErr, 2)} standard errors of k at the stop; advice said stop at ${s.adviceStop_s === null ? 'no point' : `${g(s.adviceStop_s)} s`}${s.minutesFromAdvice === null ? '' : ` (the trainee stopped ${g(Math.abs(s.minutesFromAdvice), 2)} min ${s.minutesFromAdvice < 0 ? 'before' : 'after'} it)`}`,
  ].join('\n');
}

function attemptsText(record: string, attempts: TrainingAttempt[], damaged: number[], path: string): string {
  const out = [`${attempts.length} attempt(s) on ${basename(record)}${damaged.length ? `; ${damaged.length} damaged line(s) in ${path} skipped (line ${damaged.join(', ')})` : ''}`];
  for (const a of attempts) {
    out.push(`${a.wall}  ${a.trainee ?? '(no name)'}  stop ${a.stopAt_s === null ? 'end' : `${g(a.stopAt_s)} s`}  order ${a.statedOrder ?? '—'}: ${a.score.summary}`);
  }
  return out.join('\n');
}

export async function run(argv: string[]): Promise<number> {
  const cmd = 'train';
  const args = parseCommandArguments(cmd, argv, { 'stop-at': 'value', order: 'value', trainee: 'value', attempts: 'flag', format: 'value' });
  if (args.help) { console.log(HELP); return 0; }
  if (args.positionals.length !== 1) {
    throw new InputError(`rateline train: ${args.positionals.length === 0 ? 'no run record given' : 'give one run record only'}; usage: rateline train RECORD --stop-at S.`);
  }
  const record = args.positionals[0]!;
  const format = args.choice('format', ['text', 'json'], 'text');
  if (args.flag('attempts')) {
    if (args.value('stop-at') !== undefined || args.value('order') !== undefined || args.value('trainee') !== undefined) {
      throw new InputError('rateline train: --attempts lists the attempts and takes no --stop-at, --order or --trainee; give one or the other.');
    }
    const read = readAttempts(record);
    if (format === 'json') console.log(JSON.stringify({ record, ...read }, null, 2));
    else console.log(attemptsText(record, read.attempts, read.damagedLines, read.path));
    return 0;
  }
  const stopRaw = args.value('stop-at');
  if (stopRaw === undefined) throw new InputError('rateline train: no --stop-at given; say where the trainee stopped, in seconds of the run (or "end").');
  let stopAt_s: number | null = null;
  if (stopRaw !== 'end') {
    stopAt_s = args.number('stop-at', (x) => x >= 0 && x <= LONGEST_RUN_S, `a time in seconds from 0 to ${LONGEST_RUN_S.toExponential(0)}, or "end"`) ?? null;
  }
  const orderRaw = args.value('order');
  const statedOrder = orderRaw === undefined ? null : (args.choice('order', ['zero', 'first', 'second'], 'first') as IntegerOrder);
  const trainee = args.value('trainee') ?? null;
  if (trainee !== null && (trainee.trim() === '' || trainee.length > 200)) {
    throw new InputError('rateline train: --trainee is empty or longer than 200 characters; give the trainee\'s name.');
  }
  const loaded = await loadRun(record);
  if (loaded.source.format !== 'runRecord') {
    throw new InputError(`rateline train: ${record} is a CSV, and attempts are kept only beside a run record; record the run with rateline record.`);
  }
  if (loaded.notice) console.error(loaded.notice);
  const { time_s, absorbance } = loaded;
  const ends = time_s.length ? time_s[time_s.length - 1] : 0;
  if (stopAt_s !== null) {
    let before = 0;
    for (let i = 0; i < time_s.length && time_s[i] <= stopAt_s; i++) before++;
    if (before < MIN_POINTS_TO_ESTIMATE) {
      throw new InputError(`rateline train: --stop-at ${stopAt_s} leaves ${before} reading(s) in ${record}; a fit needs at least ${MIN_POINTS_TO_ESTIMATE}, so stop later.`);
    }
  }
  const calibration = await resolveCalibration(undefined, loaded);
  const signal = calibration ? toConcentration(calibration, absorbance) : absorbance;
  const score = scoreTrainingAttempt({ time_s, signal }, { stopAt_s, statedOrder },
    calibration ? { signal: signalOptions(calibration) } : {});
  if (score.whole.k === null) {
    throw new InputError(`rateline train: ${record} gives no rate constant over its ${g(ends)} s, so no stop can be scored; choose a run that reacted.`);
  }
  const attempt = appendAttempt(record, { trainee, stopAt_s, statedOrder, score });
  if (format === 'json') console.log(JSON.stringify(attempt, null, 2));
  else console.log(scoreText(score));
  return 0;
}
