/**
 * A run exported as CSV (RFC 4180): comment lines starting with '#' carry the run's
 * details and the fit, then one row per reading. Written to a temporary file and
 * renamed, so an export is never left half-written.
 */
import { mkdir, rename, writeFile } from 'node:fs/promises';
import { dirname } from 'node:path';
import type { AnalysisResult } from '../../kinetics/analysisTypes';

/** What the export says of the sample (the bench service's sample details fit this shape). */
export interface ExportedSampleDetails {
  sample?: string;
  operator?: string;
  temperature_C?: number | null;
  concentrations?: { name: string; value: number; unit: string }[];
}

/** A run's readings as flat columns; the first `length` entries are the run. */
export interface ExportedReadings {
  readonly length: number;
  readonly time_s: ArrayLike<number>;
  readonly absorbance: ArrayLike<number>;
  readonly flags: ArrayLike<number>;
}

export interface ExportInput {
  runId: string;
  demo: boolean;
  sourceLabel: string;
  details: ExportedSampleDetails;
  wavelength_nm: number | null;
  timeZero_s: number;
  readings: ExportedReadings;
  result: AnalysisResult | null;
}

/** A CSV field: quoted when it holds a comma, a quote or a line break (RFC 4180). */
function field(s: string): string {
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** A comment line stays one line whatever the user typed into a note. */
function comment(s: string): string {
  return `# ${s.replace(/[\r\n]+/g, ' ')}`;
}

export function runCsv(input: ExportInput): string {
  const d = input.details;
  const lines = [
    comment(`Rateline run ${input.runId}${input.demo ? ' (demo data from the simulated instrument)' : ''}`),
    comment(`source: ${input.sourceLabel}`),
  ];
  if (d.sample) lines.push(comment(`sample: ${d.sample}`));
  if (d.operator) lines.push(comment(`operator: ${d.operator}`));
  if (d.temperature_C !== undefined && d.temperature_C !== null) lines.push(comment(`temperature_C: ${d.temperature_C}`));
  for (const c of d.concentrations ?? []) lines.push(comment(`concentration: ${c.name} = ${c.value} ${c.unit}`));
  if (input.wavelength_nm !== null) lines.push(comment(`wavelength_nm: ${input.wavelength_nm}`));
  lines.push(comment(`time zero (mixing) at run time ${input.timeZero_s} s`));
  const r = input.result;
  if (r) {
    const m = r.models[r.drivingModel];
    lines.push(comment(`order verdict: ${r.verdict.order} (${r.verdict.reason})`));
    if (m.k !== null) {
      const ci = m.kCI95 ? ` (95% CI ${m.kCI95[0]} to ${m.kCI95[1]})` : '';
      lines.push(comment(`k (${r.drivingModel} order): ${m.k} ${r.units.k[r.drivingModel]}${ci}`));
    }
    if (m.halfLife_s !== null) lines.push(comment(`half-life: ${m.halfLife_s} s`));
    lines.push(comment(r.uncertaintyNote));
  }
  lines.push(['time_s', 'time_after_mixing_s', 'absorbance', 'flags'].map(field).join(','));
  const s = input.readings;
  for (let i = 0; i < s.length; i++) {
    const t = s.time_s[i]!;
    lines.push(`${t},${t - input.timeZero_s},${s.absorbance[i]!},${s.flags[i]!}`);
  }
  return lines.join('\r\n') + '\r\n';
}

export async function exportCsv(path: string, input: ExportInput): Promise<void> {
  await mkdir(dirname(path), { recursive: true });
  const tmp = `${path}.part`;
  await writeFile(tmp, runCsv(input), 'utf8');
  await rename(tmp, path);
}
