/**
 * The training score of a replayed run: a trainee watched a recorded run and said "stop"
 * at some time, perhaps with the order they think it is. The readings are replayed through
 * a RunAnalyzer twice: once whole (the reference k, the verdict, and the time the stop
 * advice first held) and once with the fit window ending at the trainee's stop (what they
 * would have had). Both are the same computation `rateline analyze` does (with --to S for
 * the second), so a score never disagrees with the analysis a trainee can run themselves.
 */
import { RunAnalyzer } from './runAnalyzer';
import type { AnalysisResult, AnalyzerOptions, IntegerOrder, ModelName } from './analysisTypes';

export interface TrainingReadings {
  time_s: ArrayLike<number>;
  signal: ArrayLike<number>;
}

export interface TrainingAttemptInput {
  /** The trainee's stop, s of data time; null when they let the run play out to its end. */
  stopAt_s: number | null;
  /** The order the trainee thinks it is, if they said. */
  statedOrder?: IntegerOrder | null;
}

export interface StopPointSummary {
  time_s: number;
  /** The model k is compared in: the whole run's driving model (its verdict, or first order while undecided). */
  model: ModelName;
  k: number | null;
  /** k's unit as the analysis names it. */
  kUnit: string;
  kStdErr: number | null;
  kCI95: [number, number] | null;
  halfLivesElapsed: number | null;
  verdictOrder: AnalysisResult['verdict']['order'];
  /** The order could be told at this point (an integer or fractional verdict, not undecided). */
  orderDecided: boolean;
}

export interface TrainingScore {
  /** The trainee stopped before the last reading (false: "did not stop"). */
  stopped: boolean;
  trainee: StopPointSummary;
  whole: StopPointSummary;
  /** When the advice first said stop during the replay, s; null when it never did. */
  adviceStop_s: number | null;
  /** Trainee's stop minus the advice's, in minutes (negative: earlier); null without advice to stop. */
  minutesFromAdvice: number | null;
  /** (k at the stop − k of the whole run) / SE of k at the stop; null when either is missing. */
  kOffInStdErr: number | null;
  /** (k at the stop − k of the whole run) / k of the whole run. */
  kRelativeOff: number | null;
  statedOrder: IntegerOrder | null;
  /** Stated order against the whole run's verdict; null when nothing was stated or the whole run cannot tell. */
  orderRight: boolean | null;
  summary: string;
}

const INTEGER_ORDERS: readonly string[] = ['zero', 'first', 'second'];

function summarise(r: AnalysisResult, model: ModelName, time_s: number): StopPointSummary {
  const m = r.models[model];
  return {
    time_s, model, k: m.k, kUnit: r.units.k[model], kStdErr: m.kStdErr, kCI95: m.kCI95, halfLivesElapsed: r.halfLivesElapsed,
    verdictOrder: r.verdict.order, orderDecided: r.verdict.order !== 'undecided',
  };
}

function replay(readings: TrainingReadings, options: AnalyzerOptions): AnalysisResult {
  const analyzer = new RunAnalyzer(options);
  for (let i = 0; i < readings.time_s.length; i++) analyzer.add(readings.time_s[i], readings.signal[i]);
  return analyzer.flush();
}

/** Number words for the summary; kept here so a shared rounding module can replace them in one place. */
const fmt = {
  halfLives: (x: number): string => x.toFixed(1),
  percent: (x: number): string => `${(100 * Math.abs(x)).toFixed(Math.abs(x) < 0.1 ? 1 : 0)}%`,
  minutes: (x: number): string => (Math.abs(x) < 10 ? Math.abs(x).toFixed(1) : Math.abs(x).toFixed(0)),
  sigmas: (x: number): string => Math.abs(x).toFixed(1),
};
export const trainingFormat = fmt;

/**
 * Scores one attempt. `options` are the analyzer's (the same as the whole analysis uses);
 * the trainee's fit adds only the window's end at their stop.
 */
export function scoreTrainingAttempt(readings: TrainingReadings, attempt: TrainingAttemptInput, options: AnalyzerOptions = {}): TrainingScore {
  const n = readings.time_s.length;
  const last_s = n > 0 ? readings.time_s[n - 1] : 0;
  const stopped = attempt.stopAt_s !== null && attempt.stopAt_s < last_s;
  const stop_s = stopped ? (attempt.stopAt_s as number) : last_s;
  const wholeResult = replay(readings, options);
  const traineeResult = stopped ? replay(readings, { ...options, to_s: stop_s }) : wholeResult;
  const model = wholeResult.drivingModel;
  const whole = summarise(wholeResult, model, last_s);
  const trainee = summarise(traineeResult, model, stop_s);
  const adviceStop_s = wholeResult.stop.atTime_s;
  const minutesFromAdvice = adviceStop_s === null ? null : (stop_s - adviceStop_s) / 60;
  const dk = trainee.k !== null && whole.k !== null ? trainee.k - whole.k : null;
  const kOffInStdErr = dk !== null && trainee.kStdErr !== null && trainee.kStdErr > 0 ? dk / trainee.kStdErr : null;
  const kRelativeOff = dk !== null && whole.k !== null && whole.k !== 0 ? dk / whole.k : null;
  const statedOrder = attempt.statedOrder ?? null;
  const orderRight = statedOrder === null || !INTEGER_ORDERS.includes(wholeResult.verdict.order) ? null : statedOrder === wholeResult.verdict.order;
  const score: Omit<TrainingScore, 'summary'> = {
    stopped, trainee, whole, adviceStop_s, minutesFromAdvice, kOffInStdErr, kRelativeOff, statedOrder, orderRight,
  };
  return { ...score, summary: trainingSummary(score, wholeResult) };
}

/** One plain sentence: where they stopped, what k and the order were then, and what the advice would have done. */
function trainingSummary(s: Omit<TrainingScore, 'summary'>, whole: AnalysisResult): string {
  const hl = s.trainee.halfLivesElapsed;
  const where = !s.stopped
    ? `did not stop (the run played out to ${s.trainee.time_s.toFixed(0)} s${hl === null ? '' : `, ${fmt.halfLives(hl)} half-lives`})`
    : `stopped at ${hl === null ? `${s.trainee.time_s.toFixed(0)} s` : `${fmt.halfLives(hl)} half-lives`}`;
  const parts: string[] = [];
  if (s.trainee.k === null || s.kRelativeOff === null) parts.push('no k could be fitted at that point');
  else if (s.stopped) {
    const side = s.kRelativeOff >= 0 ? 'high' : 'low';
    parts.push(`k is ${fmt.percent(s.kRelativeOff)} ${side}${s.kOffInStdErr === null ? '' : ` (${fmt.sigmas(s.kOffInStdErr)} standard errors)`}`);
  }
  if (s.stopped) parts.push(s.trainee.orderDecided ? `the order could be told (${orderWords(s.trainee.verdictOrder)})` : 'the order could not yet be told');
  if (s.orderRight !== null) parts.push(`${orderWords(s.statedOrder!)} was ${s.orderRight ? 'right' : `wrong (the whole run says ${orderWords(whole.verdict.order)})`}`);
  else if (s.statedOrder !== null) parts.push(`the whole run cannot tell whether ${orderWords(s.statedOrder)} is right`);
  let advice: string;
  if (s.adviceStop_s === null || s.minutesFromAdvice === null) advice = 'the advice never said stop in this run';
  else if (Math.abs(s.minutesFromAdvice) < 0.05) advice = 'that is when the advice said stop';
  else if (s.minutesFromAdvice < 0) advice = `wait about ${fmt.minutes(s.minutesFromAdvice)} min more, until the advice says stop (${s.adviceStop_s.toFixed(0)} s, about ${whole.targetHalfLives} half-lives)`;
  else advice = `the advice said stop ${fmt.minutes(s.minutesFromAdvice)} min earlier, at ${s.adviceStop_s.toFixed(0)} s`;
  return `${where}${parts.length ? ': ' + parts.join(' and ') : ''}; ${advice}.`;
}

function orderWords(order: string): string {
  return INTEGER_ORDERS.includes(order) ? `${order} order` : order === 'fractional' ? 'a fractional order' : order === 'noSimpleLaw' ? 'no simple rate law' : 'undecided';
}
