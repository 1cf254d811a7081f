/**
 * A plain-text report of a fit that a scientist can paste into a notebook: the
 * parameters with ± standard error and confidence interval, the correlations,
 * χ², dof, residual SD, AICc, the robust down-weighting and every warning.
 *
 * Numbers follow the usual rule for stating a result with its uncertainty: the
 * standard error to two significant figures, the value to the same decimal place;
 * very small or large values share one power of ten, "(3.5027 ± 0.0018)e-3".
 */
import type { FitResult } from './fitTypes';

export interface ReportOptions {
  /** First line, e.g. "First-order decay, run 3 (demo)". */
  title?: string;
  /** Unit of each parameter by name, e.g. { k: 's⁻¹', a0: 'AU' }. */
  units?: Record<string, string>;
}

/** Decimal places that show `se` to two significant figures. */
function decimalsFor(se: number): number {
  if (!(se > 0) || !Number.isFinite(se)) return 6;
  return Math.max(0, 1 - Math.floor(Math.log10(se)));
}

/** A power of ten to pull out when the value is very small or large (0 when none). */
function exponentFor(value: number): number {
  const a = Math.abs(value);
  if (a === 0 || !Number.isFinite(a)) return 0;
  const e = Math.floor(Math.log10(a));
  return e < -2 || e >= 5 ? e : 0;
}

/** "value ± se" with the two-significant-figure rule; "value" alone when se is null. */
export function formatWithUncertainty(value: number, se: number | null): string {
  const e = exponentFor(value);
  const f = Math.pow(10, -e);
  const v = value * f;
  const wrap = (s: string): string => (e === 0 ? s : `(${s})e${e}`);
  if (se === null || !Number.isFinite(se)) return e === 0 ? formatPlain(v) : `${formatPlain(v)}e${e}`;
  const d = Math.min(20, decimalsFor(se * f));
  return wrap(`${v.toFixed(d)} ± ${(se * f).toFixed(d)}`);
}

/** An interval to the same decimal place as its standard error. */
export function formatInterval(ci: [number, number], se: number): string {
  const e = exponentFor(0.5 * (ci[0] + ci[1]));
  const f = Math.pow(10, -e);
  const d = Math.min(20, decimalsFor(se * f));
  const body = `[${(ci[0] * f).toFixed(d)}, ${(ci[1] * f).toFixed(d)}]`;
  return e === 0 ? body : `${body}e${e}`;
}

function formatPlain(v: number): string {
  if (!Number.isFinite(v)) return String(v);
  return Number(v.toPrecision(6)).toString();
}

function formatStat(v: number | null): string {
  if (v === null) return 'not available';
  if (!Number.isFinite(v)) return String(v);
  const a = Math.abs(v);
  return a !== 0 && (a < 1e-3 || a >= 1e6) ? v.toExponential(5) : Number(v.toPrecision(6)).toString();
}

export function fitReport(fit: FitResult, options: ReportOptions = {}): string {
  const units = options.units ?? {};
  const level = Math.round((fit.confidence ?? 0.95) * 1000) / 10;
  const lines: string[] = [];
  if (options.title) lines.push(options.title);
  if (!fit.ok) {
    lines.push('Fit not available.');
  } else {
    lines.push(
      `Points n = ${fit.n}, free parameters ${fit.freeNames.length}, degrees of freedom ${fit.dof}; ` +
        (fit.converged && fit.iterations === 0 ? 'solved directly (no iteration needed).' : fit.converged ? `converged after ${fit.iterations} iteration(s).` : `NOT converged (stopped after ${fit.iterations} iterations).`),
    );
  }
  lines.push('');
  lines.push(`Parameters (± standard error, ${level}% confidence interval, Student t on ${fit.dof} dof):`);
  const width = Math.max(...fit.parameters.map((p) => p.name.length));
  for (const p of fit.parameters) {
    const unit = units[p.name] ? ` ${units[p.name]}` : '';
    let line = `  ${p.name.padEnd(width)} = `;
    if (p.fixed) line += `${formatPlain(p.value)}${unit} (fixed)`;
    else {
      line += `${formatWithUncertainty(p.value, p.stdErr)}${unit}`;
      line += p.ci && p.stdErr !== null ? `   ${level}% CI ${formatInterval(p.ci, p.stdErr)}` : '   (no standard error)';
      if (p.atBound) line += '   at a bound';
    }
    lines.push(line);
  }
  const m = fit.freeNames.length;
  if (fit.correlation && m > 1) {
    lines.push('');
    lines.push('Correlations:');
    for (let i = 0; i < m; i++) {
      for (let j = i + 1; j < m; j++) {
        const r = fit.correlation[i * m + j]!;
        lines.push(`  ${fit.freeNames[i]} – ${fit.freeNames[j]}: ${r.toFixed(3)}${Math.abs(r) > 0.95 ? '   (strong: the two are hard to tell apart)' : ''}`);
      }
    }
  }
  if (fit.ok) {
    lines.push('');
    lines.push('Goodness of fit:');
    lines.push(`  χ² = ${formatStat(fit.chiSquare)}   reduced χ² = ${formatStat(fit.dof > 0 ? fit.chiSquare / fit.dof : null)}`);
    lines.push(`  residual SD = ${formatStat(fit.residualSd)}   RSS (unweighted) = ${formatStat(fit.rss)}`);
    lines.push(`  AICc = ${formatStat(fit.aicc)}   (K = free parameters + 1; compare only fits of the same points)`);
    lines.push('  Standard errors scale the covariance by the reduced χ²: they reflect the scatter seen.');
  }
  if (fit.robustWeights) {
    const list = fit.outliers.length > 12 ? `${fit.outliers.slice(0, 12).join(', ')}, …` : fit.outliers.join(', ');
    lines.push('');
    lines.push(
      fit.outliers.length === 0
        ? 'Robust fit: no point was down-weighted below half weight.'
        : `Robust fit: ${fit.outliers.length} point(s) down-weighted below half weight (index ${list}).`,
    );
  }
  if (fit.warnings.length > 0) {
    lines.push('');
    lines.push('Warnings:');
    for (const w of fit.warnings) lines.push(`  - ${w}`);
  }
  return lines.join('\n') + '\n';
}
