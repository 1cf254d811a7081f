/**
 * A calibration as a lab-notebook entry: ε with its interval, the line, the range
 * of the standards and every warning, in the trade's units.
 */
import type { Calibration } from './calibration';
import { formatInterval, formatWithUncertainty } from './fit/report';

export function calibrationReport(cal: Calibration, title = 'Beer–Lambert calibration'): string {
  const level = Math.round(cal.confidence * 1000) / 10;
  const lines: string[] = [title];
  lines.push(
    `Standards: ${cal.n} reading(s) at ${cal.distinctConcentrations} concentration(s), ` +
      `${(cal.concentrationRange_M[0] * 1e6).toPrecision(3)}–${(cal.concentrationRange_M[1] * 1e6).toPrecision(3)} µM, ` +
      `${cal.absorbanceRange_AU[0].toFixed(3)}–${cal.absorbanceRange_AU[1].toFixed(3)} AU; path length ${cal.pathLength_cm.toFixed(2)} cm.`,
  );
  lines.push(cal.hasIntercept ? 'Model: A = ε b c + a (a = blank offset), ordinary least squares.' : 'Model: A = ε b c (through the origin), ordinary least squares.');
  const eps = formatWithUncertainty(cal.epsilon_perMperCm, cal.epsilonStdErr_perMperCm);
  const epsCi = cal.epsilonCI_perMperCm && cal.epsilonStdErr_perMperCm !== null ? `   ${level}% CI ${formatInterval(cal.epsilonCI_perMperCm, cal.epsilonStdErr_perMperCm)}` : '';
  lines.push(`  ε = ${eps} M⁻¹ cm⁻¹${epsCi}`);
  if (cal.hasIntercept) {
    const ci = cal.interceptCI_AU && cal.interceptStdErr_AU !== null ? `   ${level}% CI ${formatInterval(cal.interceptCI_AU, cal.interceptStdErr_AU)}` : '';
    lines.push(`  a = ${formatWithUncertainty(cal.intercept_AU, cal.interceptStdErr_AU)} AU${ci}`);
  }
  const sd = cal.residualSd_AU === null ? 'not available' : `${cal.residualSd_AU.toPrecision(3)} AU`;
  lines.push(`  residual SD ${sd}, R² ${cal.rSquared === null ? 'not available' : cal.rSquared.toFixed(6)}, ${cal.dof} dof` +
    (cal.curvatureP === null ? '' : `, curvature test p = ${cal.curvatureP.toPrecision(2)}`));
  if (cal.warnings.length > 0) {
    lines.push('Warnings:');
    for (const w of cal.warnings) lines.push(`  - ${w}`);
  }
  return lines.join('\n') + '\n';
}
