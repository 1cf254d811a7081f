/**
 * A run as JCAMP-DX 5.01 text (the IUPAC open exchange format for spectra and other
 * x–y data), absorbance against time, so that any JCAMP-DX reader can take our runs.
 *
 * Evenly spaced readings (the usual case: an instrument reading at a fixed interval)
 * are written as ##XYDATA=(X++(Y..Y)) in free-format decimals (AFFN), a line holding the
 * X of its first value and up to ten Y values; Y is stored as integers times
 * YFACTOR = 1e-6 (absorbance to a micro-AU, finer than any instrument's noise). Readings
 * with gaps or uneven spacing are written as ##XYPOINTS=(XY..XY), one pair a line.
 * Labels of our own start with ##$ as the standard asks of user-defined labels.
 * There is no registered data type for a time course, so ##DATA TYPE says what it is.
 */

export interface JcampRun {
  title: string;
  /** Where the data came from (instrument, or the simulator: then demo is true). */
  origin: string;
  owner: string;
  /** Wall-clock start, ISO 8601 with offset. */
  started: string | null;
  wavelength_nm: number | null;
  path_cm: number | null;
  temperature_C: number | null;
  demo: boolean;
  time_s: Float64Array;
  absorbance: Float64Array;
  /** Free text lines (the fit, the verdict), written as ##$RATELINE NOTE lines. */
  notes: string[];
}

const Y_FACTOR = 1e-6;
const VALUES_PER_LINE = 10;

/** A label value on one line: JCAMP-DX label values end at the line break. */
function one(s: string): string {
  return s.replace(/[\r\n]+/g, ' ').trim();
}

/** True when x[i] = x[0] + i·Δ for every i, to a part in 10⁹ of the span. */
export function evenlySpaced(x: Float64Array): boolean {
  const n = x.length;
  if (n < 2) return true;
  const delta = (x[n - 1]! - x[0]!) / (n - 1);
  if (!(delta > 0)) return false;
  const tol = 1e-9 * (x[n - 1]! - x[0]!);
  for (let i = 1; i < n; i++) if (Math.abs(x[i]! - (x[0]! + i * delta)) > tol) return false;
  return true;
}

/** "##LONGDATE=YYYY/MM/DD HH:MM:SS" from an ISO 8601 time (its own clock time kept). */
function longDate(iso: string): string | null {
  const m = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}:\d{2}:\d{2})/.exec(iso);
  return m ? `${m[1]}/${m[2]}/${m[3]} ${m[4]}` : null;
}

export function runJcamp(run: JcampRun): { ok: true; text: string } | { ok: false; error: string } {
  const n = run.time_s.length;
  if (n === 0 || run.absorbance.length !== n) return { ok: false, error: 'JCAMP-DX export: the run has no readings to write.' };
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(run.time_s[i]!) || !Number.isFinite(run.absorbance[i]!)) {
      return { ok: false, error: `JCAMP-DX export: reading ${i + 1} is not a finite number; it cannot be written.` };
    }
  }
  const lines: string[] = [
    `##TITLE=${one(run.title)}${run.demo && !/\bdemo\b/i.test(run.title) ? ' (demo data)' : ''}`,
    '##JCAMP-DX=5.01',
    '##DATA TYPE=ABSORBANCE AGAINST TIME',
    `##ORIGIN=${one(run.origin)}`,
    `##OWNER=${one(run.owner) || 'not given'}`,
  ];
  const date = run.started ? longDate(run.started) : null;
  if (date) lines.push(`##LONGDATE=${date}`);
  if (run.started) lines.push(`##$RATELINE STARTED=${one(run.started)}`);
  if (run.wavelength_nm !== null) lines.push(`##$RATELINE WAVELENGTH NM=${run.wavelength_nm}`);
  if (run.path_cm !== null) lines.push(`##PATH LENGTH=${run.path_cm}`);
  if (run.temperature_C !== null) lines.push(`##TEMPERATURE=${run.temperature_C}`);
  lines.push(`##$RATELINE DEMO=${run.demo ? 'YES' : 'NO'}`);
  for (const note of run.notes) lines.push(`##$RATELINE NOTE=${one(note)}`);
  const x0 = run.time_s[0]!, x1 = run.time_s[n - 1]!;
  let minY = Infinity, maxY = -Infinity;
  for (let i = 0; i < n; i++) { minY = Math.min(minY, run.absorbance[i]!); maxY = Math.max(maxY, run.absorbance[i]!); }
  lines.push('##XUNITS=SECONDS', '##YUNITS=ABSORBANCE', '##XFACTOR=1', `##YFACTOR=${Y_FACTOR}`);
  const yInt = (i: number) => Math.round(run.absorbance[i]! / Y_FACTOR);
  // FIRSTY, MINY and MAXY are actual values: the stored integers times YFACTOR, so that a
  // reader's check of the first value against FIRSTY holds.
  const actual = (y: number) => Number((Math.round(y / Y_FACTOR) * Y_FACTOR).toFixed(6));
  lines.push(`##FIRSTX=${x0}`, `##LASTX=${x1}`, `##NPOINTS=${n}`, `##FIRSTY=${actual(run.absorbance[0]!)}`);
  lines.push(`##MINY=${actual(minY)}`, `##MAXY=${actual(maxY)}`);
  if (evenlySpaced(run.time_s)) {
    const delta = n > 1 ? (x1 - x0) / (n - 1) : 0;
    lines.push(`##DELTAX=${delta}`, '##XYDATA=(X++(Y..Y))');
    for (let i = 0; i < n; i += VALUES_PER_LINE) {
      const ys: number[] = [];
      for (let j = i; j < Math.min(n, i + VALUES_PER_LINE); j++) ys.push(yInt(j));
      // The X of a line is the abscissa of its first value; written from FIRSTX and Δ so
      // that a reader's check of X against its own count holds exactly.
      lines.push(`${Number((x0 + i * delta).toPrecision(12))} ${ys.join(' ')}`);
    }
  } else {
    lines.push('##XYPOINTS=(XY..XY)');
    for (let i = 0; i < n; i++) lines.push(`${run.time_s[i]!}, ${yInt(i)}`);
  }
  lines.push('##END=');
  return { ok: true, text: lines.join('\n') + '\n' };
}
