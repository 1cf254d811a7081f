/**
 * The analysis as a chemist reads it in a terminal: a notebook entry with the verdict,
 * one row per rate law (k with its 95% CI and unit, A0, A∞, half-life, AICc, Akaike
 * weight, runs test), progress toward the target, the stop advice and the warnings.
 */
import type { AnalysisResult, ModelSummary } from '../../../kinetics/analysisTypes';
import type { CalibratedC0 } from './calibratedSignal';

/** The calibration a run was fitted with, as the command reports it. */
export interface CalibrationUsed {
  source: string;
  label: string;
  signal: { name: string; unit: string };
  slope_AUperUnit: number;
  intercept_AU: number;
  epsilon_perMperCm: number | null;
  pathLength_cm: number | null;
  c0: CalibratedC0 | null;
  warnings: string[];
}

const g = (x: number | null, digits = 4): string => (x === null ? '—' : Math.abs(x) >= 1e5 || (Math.abs(x) < 1e-3 && x !== 0) ? x.toExponential(digits - 1) : x.toPrecision(digits));
const pm = (x: number | null, se: number | null, digits = 4): string => (x === null ? '—' : se === null ? g(x, digits) : `${g(x, digits)} ± ${g(se, 2)}`);

function row(name: string, m: ModelSummary, unit: string, weight: number | null): string[] {
  const ci = m.kCI95 ? `[${g(m.kCI95[0])}, ${g(m.kCI95[1])}]` : '—';
  return [
    name, g(m.k), ci, unit, pm(m.a0, m.a0StdErr), m.aInfFixed ? `${g(m.aInf)} (${name === "zero" ? "blank" : "on bound"})` : pm(m.aInf, m.aInfStdErr),
    pm(m.halfLife_s, m.halfLifeStdErr_s), m.aicc === null ? '—' : m.aicc.toFixed(1),
    weight === null ? '' : weight.toFixed(3), m.runsTestP === null ? '—' : m.runsTestP.toPrecision(2),
  ];
}

function table(rows: string[][]): string[] {
  const widths = rows[0].map((_, j) => Math.max(...rows.map((r) => r[j].length)));
  return rows.map((r) => r.map((c, j) => c.padEnd(widths[j])).join('  ').trimEnd());
}

export function formatAnalysisText(file: string, r: AnalysisResult, cal: CalibrationUsed | null = null): string {
  const out: string[] = [];
  const win = r.window.from_s === null && r.window.to_s === null
    ? 'all readings'
    : `${r.window.from_s ?? 'start'} s to ${r.window.to_s ?? 'end'} s (${r.pointsInWindow} readings)`;
  out.push(`Run ${file}: ${r.points} readings over ${g(r.duration_s)} s; fit window: ${win}`);
  out.push(`Signal: ${r.units.signal}${cal ? `, by the calibration ${cal.label} (from ${cal.source})` : ''}`);
  out.push(`Order: ${r.verdict.order === 'undecided' ? 'undecided' : `${r.verdict.order} order`} (${r.verdict.reason})`);
  out.push('');
  const w = r.verdict.weights;
  const nth = r.models.nth;
  const rows = [
    ['model', 'k', 'k 95% CI', 'unit', cal ? `c0 (${cal.signal.unit})` : 'A0', cal ? `c∞ (${cal.signal.unit})` : 'A∞', 't½ (s)', 'AICc', 'weight', 'runs p'],
    row('zero', r.models.zero, r.units.k.zero, w.zero),
    row('first', r.models.first, r.units.k.first, w.first),
    row('second', r.models.second, r.units.k.second, w.second),
    row(`n = ${pm(nth.order, nth.orderStdErr, 3)}`, nth, r.units.k.nth, null),
  ];
  out.push(...table(rows));
  out.push('');
  const f = r.fractionConverted;
  out.push(`Progress (${r.drivingModel} order): ${g(r.halfLivesElapsed, 3)} half-lives elapsed, ${f === null ? '—' : (100 * f).toFixed(1) + '%'} converted; target ${r.targetHalfLives} half-lives (${(100 * (1 - 2 ** -r.targetHalfLives)).toFixed(1)}%) at ${pm(r.stop.predictedAt_s, r.stop.predictedAtStdErr_s)} s`);
  out.push(`Advice: ${ADVICE_WORDS[r.stop.state]}: ${r.stop.reason}`);
  out.push(`Stop suggested: ${r.stop.suggested ? 'yes' : 'no'}${r.stop.atTime_s !== null ? ` (first at ${g(r.stop.atTime_s)} s during the feed)` : ''}`);
  out.push(`Outliers left out: ${r.outliers.length === 0 ? 'none' : `${r.outliers.length} (readings ${r.outliers.slice(0, 20).join(', ')}${r.outliers.length > 20 ? ', …' : ''}; 0-based)`}`);
  if (cal) {
    const c = cal.c0;
    const ci = c?.ci95 ? `, 95% CI [${g(c.ci95[0])}, ${g(c.ci95[1])}]` : '';
    out.push(`Calibration: c = (A − ${g(cal.intercept_AU)} AU) / ${g(cal.slope_AUperUnit, 5)} AU per ${cal.signal.unit}` +
      (cal.epsilon_perMperCm !== null && cal.pathLength_cm !== null ? ` (ε = ${g(cal.epsilon_perMperCm, 5)} M⁻¹ cm⁻¹, ${cal.pathLength_cm} cm)` : ''));
    if (c) out.push(`  c0 (${c.model} order) = ${pm(c.value, c.stdErr)} ${cal.signal.unit}${ci}; covers ${c.covers}`);
  }
  const warn = [...(cal?.warnings ?? []), ...r.warnings, ...(['zero', 'first', 'second', 'nth'] as const).flatMap((m) => r.models[m].warnings)];
  out.push(`Warnings: ${warn.length === 0 ? 'none' : ''}`);
  for (const x of warn) out.push(`  - ${x}`);
  out.push(`Note: ${r.uncertaintyNote}`);
  return out.join('\n');
}

/** The advice states in words, as the screen says them. */
const ADVICE_WORDS: Record<AnalysisResult['stop']['state'], string> = {
  gathering: 'gathering readings',
  estimating: 'estimating',
  settled: 'settled, target not yet reached',
  farEnough: 'far enough, stop now',
};
