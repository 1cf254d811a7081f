/**
 * The live progress line of `rateline record`, as text for a person and as JSON for a
 * script (the crash test reads it: the count and device time handed to the journal).
 */
import type { AnalysisResult } from '../../../kinetics/analysisTypes';
import type { RunSessionProgress } from '../../../acquisition/record/runSession';

export interface ProgressJson {
  phase: RunSessionProgress['phase'];
  /** Readings handed to the journal, and the device time of the last. */
  journalled: number;
  deviceTime_s: number | null;
  /** Readings known to be fsynced. */
  synced: number;
  points: number;
  runTime_s: number | null;
  halfLivesElapsed: number | null;
  model: string;
  k: number | null;
  kCI95: [number, number] | null;
  kUnit: string;
  verdict: string;
  advice: string;
  stopSuggested: boolean;
  rejected: number;
  gaps: number;
  warnings: number;
}

export function progressJson(p: RunSessionProgress, r: AnalysisResult): ProgressJson {
  const m = r.models[r.drivingModel];
  return {
    phase: p.phase,
    journalled: p.journalled,
    deviceTime_s: p.lastDeviceTime_s,
    synced: p.synced,
    points: r.points,
    runTime_s: p.runTime_s,
    halfLivesElapsed: r.halfLivesElapsed,
    model: r.drivingModel,
    k: m.k,
    kCI95: m.kCI95,
    kUnit: r.units.k[r.drivingModel],
    verdict: r.verdict.order,
    advice: r.stop.state,
    stopSuggested: r.stop.suggested,
    rejected: Object.values(p.rejected).reduce((a, b) => a + b, 0),
    gaps: p.gaps,
    warnings: p.warnings,
  };
}

/** One line: points, run time, half-lives elapsed, k ± its 95% CI half-width, and the advice in words. */
export function formatProgress(p: RunSessionProgress, r: AnalysisResult): string {
  if (p.phase === 'opening') return 'opening the instrument…';
  if (p.phase === 'blank') return 'taking the blank (keep the blank cuvette in)…';
  if (p.phase === 'waitingForTimeZero') return `${p.journalled} readings before mixing`;
  const m = r.models[r.drivingModel];
  const parts = [`${String(r.points).padStart(6)} points`];
  parts.push(p.runTime_s === null ? 't = –' : `t = ${p.runTime_s.toFixed(0)} s`);
  parts.push(r.halfLivesElapsed === null ? 'half-lives –' : `${r.halfLivesElapsed.toFixed(2)} half-lives`);
  if (m.k !== null && m.kCI95 !== null) {
    const half = (m.kCI95[1] - m.kCI95[0]) / 2;
    parts.push(`k = ${m.k.toPrecision(4)} ± ${half.toPrecision(2)} ${r.units.k[r.drivingModel]} (${r.drivingModel}, 95% CI)`);
  } else {
    parts.push('k –');
  }
  parts.push(`advice: ${r.stop.reason}`);
  const total = Object.values(p.rejected).reduce((a, b) => a + b, 0);
  if (total > 0) parts.push(`${total} lines rejected`);
  if (p.gaps > 0) parts.push(`${p.gaps} gaps`);
  if (p.lastWarning) parts.push(`warning: ${p.lastWarning}`);
  return parts.join(' | ');
}
