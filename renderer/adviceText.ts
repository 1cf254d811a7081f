/**
 * The stop advice in words. The screen never says "stop" by colour alone: each state
 * has a headline a person can read across the room and a sentence that says why,
 * and what an early stop would cost in the precision of k. Pure: no DOM.
 */
import type { AnalysisResultView } from '../main/bridge/contract';
import { formatDuration, formatPercent } from './numberFormat';

export type AdviceTone = 'wait' | 'progress' | 'ready';

export interface AdviceWords {
  headline: string;
  detail: string;
  /** What stopping now would cost, when an early stop is the user's choice; else null. */
  earlyStop: string | null;
  tone: AdviceTone;
}

export function adviceWords(result: AnalysisResultView | null, running: boolean): AdviceWords {
  if (!result) {
    return {
      headline: running ? 'Waiting for readings' : 'Not running',
      detail: running ? 'The first readings start the fit.' : 'Choose a source, connect, then start the run.',
      earlyStop: null,
      tone: 'wait',
    };
  }
  const s = result.stop;
  // Once the run is over, advice in the present tense ("stop now", "keep going") would be read
  // as current: say where the run ended instead.
  if (!running) return endedWords(result);
  let earlyStop: string | null = null;
  if (s.earlyStopPossible && !s.suggested && s.kRelCI95Now !== null) {
    const then = s.kRelCI95AtTarget !== null ? `, against ±${formatPercent(s.kRelCI95AtTarget, 1).replace(' ', '')} at the target` : '';
    earlyStop = `Stopping early is possible: k is known to ±${formatPercent(s.kRelCI95Now, 1).replace(' ', '')} now${then}.`;
  }
  switch (s.state) {
    case 'gathering':
      return { headline: 'Gathering points', detail: s.reason || 'Too few readings for a fit yet.', earlyStop, tone: 'wait' };
    case 'estimating':
      return { headline: 'Estimating: keep going', detail: s.reason || 'The rate constant is still moving.', earlyStop, tone: 'progress' };
    case 'settled':
      return {
        headline: s.suggested ? 'Far enough: stop now' : 'Settled: not yet at the target',
        // With the early-stop line below, the engine's long reason would say the same twice.
        detail: earlyStop !== null
          ? `k has settled and the order is decided; the target (${formatPercent(1 - 2 ** -result.targetHalfLives, 1).replace(' ', '')} converted) is not reached yet.`
          : s.reason || 'The rate constant has settled; the run has not reached its target yet.',
        earlyStop,
        tone: s.suggested ? 'ready' : 'progress',
      };
    case 'farEnough':
      return {
        headline: s.suggested ? 'Far enough: stop now' : 'Far enough, but not settled',
        detail: s.reason || 'The target is reached.',
        earlyStop,
        tone: s.suggested ? 'ready' : 'progress',
      };
  }
}

/** Where a run that is no longer going ended, against its target, in the past tense. */
function endedWords(result: AnalysisResultView): AdviceWords {
  const s = result.stop;
  const done = result.halfLivesElapsed;
  const reached = s.state === 'farEnough' || (done !== null && done >= result.targetHalfLives);
  const where = done === null ? 'The run is over' : `The run ended at ${done.toFixed(done < 10 ? 2 : 1)} half-lives`;
  const precision = s.kRelCI95Now !== null ? `; k is known to ±${formatPercent(s.kRelCI95Now, 1).replace(' ', '')} (95 % CI)` : '';
  return {
    headline: reached ? 'Stopped: target reached' : 'Stopped before the target',
    detail: `${where} (target ${result.targetHalfLives})${precision}. The results are the final fit of the readings kept.`,
    earlyStop: null,
    tone: 'wait',
  };
}

/** "Target reached at t ≈ 612 ± 35 s (95 %), about 4 min 10 s from now.", or why it cannot be said yet. */
export function finishWords(result: AnalysisResultView | null, now_s: number | null, runPerWall: number | null, running = true): string {
  if (!running) return result ? 'The run has stopped: no finishing time to predict.' : '';
  const s = result?.stop;
  if (!s || s.predictedAt_s === null) return 'Finishing time: not predictable yet.';
  // ±1.96 standard errors: a 95 % interval under the usual normal approximation.
  const err = s.predictedAtStdErr_s !== null ? ` ± ${Math.round(1.96 * s.predictedAtStdErr_s)} s (95 %)` : ' s';
  const at = `Target reached at t ≈ ${Math.round(s.predictedAt_s)}${err}`;
  if (now_s === null) return `${at}.`;
  const left_s = s.predictedAt_s - now_s;
  if (left_s <= 0) return `Target reached at t ≈ ${Math.round(s.predictedAt_s)} s.`;
  // The run clock can run faster than the wall clock (a fast simulation, a replay).
  const wall = runPerWall && runPerWall > 0 ? left_s / runPerWall : left_s;
  return `${at}, about ${formatDuration(wall)} from now.`;
}
