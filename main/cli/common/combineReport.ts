/**
 * The combined result as a notebook entry: the rate law in the excess reagent (order
 * with its 95% CI, k with CI and unit) or the Arrhenius parameters (Ea in kJ/mol, A),
 * then one row per run and the runs left out.
 */
import type { ArrheniusResult } from '../../../kinetics/arrhenius';
import type { RateLawResult } from '../../../kinetics/rateLawSeries';
import { formatInterval, formatWithUncertainty } from '../../../kinetics/fit/report';

export type CombineBy = 'concentration' | 'temperature';

/** One run (or summary row) that goes into the combined fit. */
export interface CombinedRun {
  label: string;
  /** Concentration in M (by concentration) or temperature in °C (by temperature). */
  x: number;
  xFrom: 'header' | 'option' | 'summary';
  k_perSecond: number;
  kStdErr_perSecond: number | null;
}

export interface LeftOutRun {
  label: string;
  reason: string;
}

export type CombinedOutput =
  | { by: 'concentration'; runs: (CombinedRun & { concentration_M: number })[]; leftOut: LeftOutRun[]; rateLaw: RateLawResult }
  | {
      by: 'temperature';
      runs: (CombinedRun & { temperature_C: number; temperature_K: number; inverseTemperature_perK: number; lnK: number })[];
      leftOut: LeftOutRun[];
      arrhenius: ArrheniusResult;
    };

const g = (x: number | null, digits = 4): string => (x === null ? '—' : x !== 0 && (Math.abs(x) < 1e-3 || Math.abs(x) >= 1e5) ? x.toExponential(digits - 1) : x.toPrecision(digits));
const ci = (c: [number, number] | null, se: number | null): string => (c && se !== null ? `95% CI ${formatInterval(c, se)}` : '95% CI not available');
const from = (r: CombinedRun): string => (r.xFrom === 'header' ? 'record header' : r.xFrom === 'option' ? '--value' : 'summary CSV');

function table(rows: string[][]): string[] {
  const widths = rows[0]!.map((_, j) => Math.max(...rows.map((r) => r[j]!.length)));
  return rows.map((r) => r.map((c, j) => c.padEnd(widths[j]!)).join('  ').trimEnd());
}

export function formatCombinedText(o: CombinedOutput): string {
  const out: string[] = [];
  let warnings: string[];
  if (o.by === 'concentration') {
    const L = o.rateLaw;
    out.push(`Rate law in the excess reagent from ${L.points} runs: k_obs = k [B]^m (${L.weighted ? 'weighted by 1/SE(k_obs)²' : 'unweighted'})`);
    out.push(`  order m = ${formatWithUncertainty(L.order, L.orderStdErr)}   ${ci(L.orderCI95, L.orderStdErr)}` +
      (L.wholeOrderConsistent === null ? '' : `; ${L.wholeOrderConsistent ? 'consistent' : 'not consistent'} with ${L.nearestWholeOrder}`));
    out.push(`  k (order held at ${L.nearestWholeOrder}) = ${formatWithUncertainty(L.k, L.kStdErr)} ${L.kUnit}   ${ci(L.kCI95, L.kStdErr)}`);
    out.push('');
    const rows = [['run', '[B] (M)', 'k_obs (s^-1)', 'SE', '[B] from']];
    for (const r of o.runs) rows.push([r.label, g(r.concentration_M), g(r.k_perSecond), g(r.kStdErr_perSecond, 2), from(r)]);
    out.push(...table(rows));
    warnings = L.warnings;
  } else {
    const A = o.arrhenius;
    out.push(`Arrhenius line from ${A.points} runs: ln k = ln A − Ea/(R T) (${A.weighted ? 'weighted by (k/SE(k))²' : 'unweighted'}), ${A.dof} dof`);
    out.push(`  Ea = ${formatWithUncertainty(A.activationEnergy_kJPerMol, A.activationEnergyStdErr_kJPerMol)} kJ/mol   ${ci(A.activationEnergyCI95_kJPerMol, A.activationEnergyStdErr_kJPerMol)}`);
    out.push(`  A  = ${g(A.preExponential)} in the unit of k (s^-1 for k_obs)   95% CI ${A.preExponentialCI95 ? `[${g(A.preExponentialCI95[0])}, ${g(A.preExponentialCI95[1])}]` : 'not available'}`);
    out.push(`  ln A = ${formatWithUncertainty(A.lnPreExponential, A.lnPreExponentialStdErr)}`);
    out.push('');
    const rows = [['run', 'T (°C)', 'T (K)', '1/T (K^-1)', 'k (s^-1)', 'SE', 'ln k', 'T from']];
    for (const r of o.runs) rows.push([r.label, r.temperature_C.toFixed(2), r.temperature_K.toFixed(2), r.inverseTemperature_perK.toExponential(5), g(r.k_perSecond), g(r.kStdErr_perSecond, 2), r.lnK.toFixed(4), from(r)]);
    out.push(...table(rows));
    warnings = A.warnings;
  }
  if (o.leftOut.length > 0) {
    out.push('Left out:');
    for (const l of o.leftOut) out.push(`  - ${l.label}: ${l.reason}`);
  }
  out.push(`Warnings: ${warnings.length === 0 ? 'none' : ''}`);
  for (const w of warnings) out.push(`  - ${w}`);
  out.push('Note: the intervals cover the scatter of the runs about the line, not systematic error (temperature, mixing, calibration).');
  return out.join('\n');
}
