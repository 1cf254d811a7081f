/**
 * The combined result as a notebook entry: the rate law in the excess reagent (order
 * with its 95% CI and how that was had, k with CI and unit, the isolation check and the
 * global fit beside it) or the Arrhenius and Eyring parameters (Ea, A, ΔH‡, ΔS‡, ΔG‡,
 * and k at a named temperature), then one row per run and the runs left out.
 */
import type { ConcentrationSeriesReport, TemperatureSeriesReport } from '../../../kinetics/seriesCombination';
import type { LineUncertainty } from '../../../kinetics/seriesLine';
import { formatInterval, formatWithUncertainty } from '../../../kinetics/fit/report';

export type CombineBy = 'concentration' | 'temperature';

/** One run (or summary row) that goes into the combined fit. */
export interface CombinedRun {
  label: string;
  /** Concentration in M (by concentration) or temperature in °C (by temperature). */
  x: number;
  xFrom: 'header' | 'option' | 'summary' | 'study';
  k_perSecond: number;
  kStdErr_perSecond: number | null;
}

export interface LeftOutRun {
  label: string;
  reason: string;
}

/** The study file the runs came from, if any. */
export interface StudyInfo { path: string; name: string; revision: number; safetyNote: string }

interface CommonOutput { study: StudyInfo | null; savedStudy: string | null; leftOut: LeftOutRun[] }

export type CombinedOutput =
  | (CommonOutput & ConcentrationSeriesReport & { by: 'concentration'; runs: (CombinedRun & { concentration_M: number })[] })
  | (CommonOutput & TemperatureSeriesReport & {
      by: 'temperature';
      runs: (CombinedRun & { temperature_C: number; temperature_K: number; inverseTemperature_perK: number; lnK: number })[];
    });

const g = (x: number | null, digits = 4): string => (x === null ? '—' : x !== 0 && (Math.abs(x) < 1e-3 || Math.abs(x) >= 1e5) ? x.toExponential(digits - 1) : x.toPrecision(digits));
const ci = (c: [number, number] | null, se: number | null): string => (c && se !== null ? `95% CI ${formatInterval(c, se)}` : '95% CI not available');
const from = (r: CombinedRun): string => (r.xFrom === 'header' ? 'record header' : r.xFrom === 'option' ? '--value' : r.xFrom === 'study' ? 'study file' : 'summary CSV');
const how = (u: LineUncertainty): string => {
  const stats = u.chiSquare === null ? '' : `χ² = ${u.chiSquare.toPrecision(3)} on ${u.dof} dof; `;
  return `    (${stats}${u.reason})`;
};

const capitalised = (s: string): string => s.charAt(0).toUpperCase() + s.slice(1);

function table(rows: string[][]): string[] {
  const widths = rows[0]!.map((_, j) => Math.max(...rows.map((r) => r[j]!.length)));
  return rows.map((r) => r.map((c, j) => c.padEnd(widths[j]!)).join('  ').trimEnd());
}

export function formatCombinedText(o: CombinedOutput): string {
  const out: string[] = [];
  if (o.study) out.push(`Study ${o.study.name}, version ${o.study.revision} (${o.study.path})`, `  safety note: ${o.study.safetyNote || '(none given)'}`, '');
  if (o.by === 'concentration') {
    const L = o.rateLaw;
    out.push(`Rate law in the excess reagent from ${L.points} runs: k_obs = k [B]^m (${L.weighted ? 'weighted by the runs\' own SE(k_obs)' : 'unweighted'})`);
    if (L.orderDecided) {
      out.push(`  order m = ${formatWithUncertainty(L.order, L.orderStdErr)}   ${ci(L.orderCI95, L.orderStdErr)}` +
        (L.wholeOrderConsistent === null ? '' : `; ${L.wholeOrderConsistent ? 'consistent' : 'not consistent'} with ${L.nearestWholeOrder}`));
    } else {
      out.push(`  order m undecided: ${L.orderCI95 ? `its 95% interval ${formatInterval(L.orderCI95, L.orderStdErr!)} holds the orders ${L.wholeOrdersInInterval.join(', ') || 'none'}` : 'no interval can be had'}`);
    }
    out.push(how(L.orderUncertainty));
    out.push(`  k (order ${L.orderDecided ? 'held at' : 'assumed to be'} ${L.nearestWholeOrder}) = ${formatWithUncertainty(L.k, L.kStdErr)} ${L.kUnit}   ${ci(L.kCI95, L.kStdErr)}`);
    out.push(how(L.kUncertainty));
    if (o.global.ok) {
      const G = o.global.fit;
      out.push(`Global fit of all ${G.readings} readings at once (shared k and m, each run its own A0 and A∞), as a check:`);
      out.push(`  order m = ${formatWithUncertainty(G.order.value, G.order.stdErr)}   ${ci(G.order.ci95, G.order.stdErr)}`);
      out.push(`  k (order held at ${G.heldOrder}) = ${formatWithUncertainty(G.k.value, G.k.stdErr)} ${L.kUnit}   ${ci(G.k.ci95, G.k.stdErr)}`);
      out.push(`  ${o.global.order.sentence}`, `  ${o.global.k.sentence}`);
    } else out.push(capitalised(o.global.reason));
    if (o.isolation.checks.length > 0) {
      const low = Math.min(...o.isolation.checks.map((c) => c.excessRatio));
      out.push(`Isolation: the excess reagent is at least ${low.toPrecision(3)} times the followed species (about 10 is needed)${o.isolation.checks.every((c) => c.sufficient) ? '' : '; see the warnings'}.`);
    }
    if (o.isolation.notChecked) out.push(`Isolation: ${o.isolation.notChecked}`);
    out.push('');
    const rows = [['run', '[B] (M)', 'k_obs (s^-1)', 'SE', '[B] from']];
    for (const r of o.runs) rows.push([r.label, g(r.concentration_M), g(r.k_perSecond), g(r.kStdErr_perSecond, 2), from(r)]);
    out.push(...table(rows));
  } else {
    const A = o.arrhenius;
    const what = o.rateConstant === 'k' ? `k = k_obs/[B]^${o.orderInExcess} (${o.kUnit})` : 'k_obs (s^-1; the excess reagent\'s concentration is not known for every run)';
    out.push(`Arrhenius line from ${A.points} runs: ln k = ln A − Ea/(R T), k being ${what} (${A.weighted ? 'weighted by the runs\' own SE(k)' : 'unweighted'})`);
    out.push(`  Ea = ${formatWithUncertainty(A.activationEnergy_kJPerMol, A.activationEnergyStdErr_kJPerMol)} kJ/mol   ${ci(A.activationEnergyCI95_kJPerMol, A.activationEnergyStdErr_kJPerMol)}`);
    out.push(`  A  = ${g(A.preExponential)} ${o.kUnit}   95% CI ${A.preExponentialCI95 ? `[${g(A.preExponentialCI95[0])}, ${g(A.preExponentialCI95[1])}]` : 'not available'}`);
    out.push(`  ln A = ${formatWithUncertainty(A.lnPreExponential, A.lnPreExponentialStdErr)}`);
    out.push(how(A.uncertainty));
    if (o.eyring.ok) {
      const E = o.eyring;
      out.push(`Eyring line: ${E.assumptions}`);
      out.push(`  ΔH‡ = ${formatWithUncertainty(E.activationEnthalpy_kJPerMol, E.activationEnthalpyStdErr_kJPerMol)} kJ/mol   ${ci(E.activationEnthalpyCI95_kJPerMol, E.activationEnthalpyStdErr_kJPerMol)}`);
      out.push(`  ΔS‡ = ${formatWithUncertainty(E.activationEntropy_JPerMolK, E.activationEntropyStdErr_JPerMolK)} J/(mol K)   ${ci(E.activationEntropyCI95_JPerMolK, E.activationEntropyStdErr_JPerMolK)}`);
      out.push(`  ΔG‡(${E.gibbsTemperature_K} K) = ${formatWithUncertainty(E.activationGibbs_kJPerMol, E.activationGibbsStdErr_kJPerMol)} kJ/mol   ${ci(E.activationGibbsCI95_kJPerMol, E.activationGibbsStdErr_kJPerMol)}`);
      out.push(how(E.uncertainty));
    } else out.push(capitalised(o.eyring.reason));
    if (o.prediction) {
      const P = o.prediction;
      out.push(`Predicted at ${P.temperature_C} °C: k = ${g(P.k)} ${o.kUnit}   95% CI ${P.kCI95 ? `[${g(P.kCI95[0])}, ${g(P.kCI95[1])}]` : 'not available'} (from ln A and Ea with their covariance)${P.outsideMeasuredRange ? ' — outside the measured temperatures, see the warnings' : ''}`);
    }
    out.push('');
    const rows = [['run', 'T (°C)', 'T (K)', '1/T (K^-1)', 'k_obs (s^-1)', 'SE', 'ln k_obs', 'T from']];
    for (const r of o.runs) rows.push([r.label, r.temperature_C.toFixed(2), r.temperature_K.toFixed(2), r.inverseTemperature_perK.toExponential(5), g(r.k_perSecond), g(r.kStdErr_perSecond, 2), r.lnK.toFixed(4), from(r)]);
    out.push(...table(rows));
  }
  if (o.leftOut.length > 0) {
    out.push('Left out:');
    for (const l of o.leftOut) out.push(`  - ${l.label}: ${l.reason}`);
  }
  out.push(`Warnings: ${o.warnings.length === 0 ? 'none' : ''}`);
  for (const w of o.warnings) out.push(`  - ${w}`);
  out.push('Note: the intervals cover the runs\' own standard errors and their scatter about the line, not systematic error (temperature, mixing, calibration).');
  if (o.savedStudy) out.push(`Saved the study as ${o.savedStudy}.`);
  return out.join('\n');
}
