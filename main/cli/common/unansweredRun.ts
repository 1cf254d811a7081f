/**
 * When the analysis of a whole file has no answer to give, the command says so in one
 * sentence and exits 2 instead of printing a table of dashes and nonsense numbers. The
 * words come from the analyzer (kinetics/ decides what a flat run or a failed fit is);
 * this only turns its report into the command's refusal.
 */
import type { AnalysisResult } from '../../../kinetics/analysisTypes';

/** The analyzer's warning for a run whose signal does not change (the start of its sentence). */
const NOTHING_REACTS = 'nothing seems to be reacting';

/** The sentence for a run the analysis has no answer for, naming `file`; null when it has one. */
export function unansweredRun(file: string, r: AnalysisResult): string | null {
  const all = [...r.warnings, ...(['zero', 'first', 'second', 'nth'] as const).flatMap((m) => r.models[m].warnings)];
  const flat = all.find((w) => w.startsWith(NOTHING_REACTS));
  if (flat !== undefined) return `${file}: ${flat.replace(/\.$/, '')}.`;
  const driving = r.models[r.drivingModel];
  if (driving.k === null || driving.kCI95 === null) {
    return `${file}: no rate law could be fitted to these readings (${r.stop.reason.replace(/\.$/, '')}); check that the file holds one run's times and absorbances, or record a longer run.`;
  }
  return null;
}
