/**
 * `rateline combine FILE... --by concentration|temperature [--reagent NAME] [--value FILE=X]
 * [--format text|json]`: several runs, one result. Each run file (a run record or a run
 * CSV) is fitted by a RunAnalyzer as `rateline analyze` does; its first-order k_obs with
 * SE goes into the rate law in the excess reagent (kinetics/rateLawSeries.ts) or into the
 * Arrhenius line (kinetics/arrhenius.ts). A run whose data decide for another order than
 * first, or whose k has not settled, is left out with a warning on stderr. A summary CSV (one row
 * per run analysed elsewhere: concentration or temperature, k, k_se) may stand in for run
 * files. Exit 0 done, 2 bad input.
 */
import { fitSettingsToApply, recordFitSettings, type RecordedFitSettings } from '../../../acquisition/record/recordTimeZero';
import { readUserText } from '../../../acquisition/files/runFile';
import { extname, resolve } from 'node:path';
import { PLAUSIBLE_WORDS, plausible } from '../common/benchRanges';
import { InputError } from '../common/cliErrors';
import { numberValue, parseCommandArguments } from '../common/arguments';
import { CONCENTRATION_COLUMNS, parseNumericTable, readHeader } from '../../../acquisition/files/numericTable';
import { shownNames } from '../../../acquisition/files/csvReader';
import { runProblem } from '../../../acquisition/files/runPlausibility';
import { formatCombinedText, type CombineBy, type CombinedRun, type LeftOutRun } from '../common/combineReport';
import { parseRunCsv } from '../../../acquisition/files/runCsv';
import { analysisReadings, parseRunRecord, type RunRecord } from '../../../acquisition/record/journalReader';
import { looksLikeRunRecordLine } from '../../../acquisition/record/runRecordFormat';
import { RunAnalyzer } from '../../../kinetics/runAnalyzer';
import { MIN_POINTS_TO_ESTIMATE } from '../../../kinetics/stopAdvice';
import { rateLawFromSeries } from '../../../kinetics/rateLawSeries';
import { arrheniusFit } from '../../../kinetics/arrhenius';
import { celsiusToKelvin } from '../../../kinetics/temperature';

const HELP = `usage: rateline combine FILE... --by concentration|temperature [--reagent NAME] [--value FILE=X ...] [--format text|json]

  FILE...          two or more runs: run records (.jsonl, as rateline record writes them)
                   or run CSVs (time_s, absorbance); each is fitted as rateline analyze
                   does, and its first-order k_obs (with SE) is used. A run whose data
                   decide for another order, or whose k has not settled, is left out
                   with a warning; an undecided run that first order fits best is kept.
                   A FILE may instead be a summary CSV of runs analysed elsewhere, one run
                   a line: concentration_M (or _mM, _uM) or temperature_C, k (s^-1), and
                   optionally k_se (the fit is weighted by 1/k_se^2 when every run has one)
  --by concentration  the order in the excess reagent and k, from k_obs = k [B]^m
  --by temperature    the activation energy Ea and A, from ln k = ln A − Ea/(R T)
  --reagent NAME   with --by concentration: which of a record's concentrations is the
                   excess reagent (needed when the record lists more than one)
  --value FILE=X   the x value of a run: its reagent concentration after mixing in mol/L
                   (--by concentration) or its temperature in °C (--by temperature).
                   Needed for a run CSV, which carries neither; for a run record it
                   replaces the header's value. Repeat once per file, or list several
                   after one --value: --value a.csv=0.010 b.csv=0.020
  --format         text (default) or json`;

/** --value FILE=X pairs, keyed by the resolved path, checked for number and duplicates. */
function valueOptions(raw: string[], by: CombineBy): Map<string, { given: string; x: number }> {
  const out = new Map<string, { given: string; x: number }>();
  for (const pair of raw) {
    const eq = pair.lastIndexOf('=');
    if (eq <= 0) throw new InputError(`rateline combine: --value ${pair} is not FILE=X; write e.g. --value run1.csv=${by === 'concentration' ? '0.010' : '25.0'}.`);
    const given = pair.slice(0, eq);
    const text = pair.slice(eq + 1);
    const x = numberValue('combine', 'value', text, by === 'concentration' ? plausible.concentration_M : plausible.temperature_C, `${by === 'concentration' ? PLAUSIBLE_WORDS.concentration_M : PLAUSIBLE_WORDS.temperature_C} (for ${given})`);
    const key = resolve(given);
    if (out.has(key)) throw new InputError(`rateline combine: --value gives ${given} twice; give one value per file.`);
    out.set(key, { given, x });
  }
  return out;
}

/** The run's metadata as it stood at the end: the header, updated by any `meta` events. */
function finalRunMetadata(record: RunRecord): { temperature_C: number | null; concentrations: { name: string; value: number; unit: string }[] } {
  let temperature_C = record.header.run.temperature_C;
  let concentrations = record.header.run.concentrations;
  for (const p of record.events) {
    if (p.event.ev !== 'meta' || !p.event.run) continue;
    if (p.event.run.temperature_C !== undefined) temperature_C = p.event.run.temperature_C;
    if (p.event.run.concentrations !== undefined) concentrations = p.event.run.concentrations;
  }
  return { temperature_C, concentrations };
}

const TO_MOLAR: Record<string, number> = { m: 1, 'mol/l': 1, mm: 1e-3, 'mmol/l': 1e-3, um: 1e-6, 'µm': 1e-6, 'μm': 1e-6, 'µmol/l': 1e-6, 'μmol/l': 1e-6 };

function recordX(record: RunRecord, file: string, by: CombineBy, reagent: string | undefined): number {
  const meta = finalRunMetadata(record);
  if (by === 'temperature') {
    if (meta.temperature_C === null) throw new InputError(`${file} line 1: the run record gives no temperature; give it with --value ${file}=T (in °C).`);
    return meta.temperature_C;
  }
  const list = meta.concentrations;
  let q;
  if (reagent !== undefined) {
    q = list.find((c) => c.name.toLowerCase() === reagent.toLowerCase());
    if (!q) throw new InputError(`${file} line 1: the run record lists no concentration of "${reagent}" (it has ${list.length === 0 ? 'none' : list.map((c) => `"${c.name}"`).join(', ')}); check --reagent or give --value ${file}=C (in mol/L).`);
  } else if (list.length === 1) {
    q = list[0]!;
  } else {
    throw new InputError(list.length === 0
      ? `${file} line 1: the run record lists no concentrations; give the reagent's with --value ${file}=C (in mol/L).`
      : `${file} line 1: the run record lists ${list.length} concentrations (${list.map((c) => `"${c.name}"`).join(', ')}); say which is the excess reagent with --reagent NAME.`);
  }
  const factor = TO_MOLAR[q.unit.trim().toLowerCase()];
  if (factor === undefined) throw new InputError(`${file} line 1: the concentration of "${q.name}" is in "${q.unit}", not M, mM or µM; give it with --value ${file}=C (in mol/L).`);
  return q.value * factor;
}

/** Rows of a summary CSV (runs analysed elsewhere). */
function summaryRuns(text: string, file: string, by: CombineBy, names: string[], headerLine: number): CombinedRun[] {
  let xName: string;
  let factor = 1;
  if (by === 'temperature') {
    xName = 'temperature_c';
    if (!names.includes(xName)) throw new InputError(`${file} line ${headerLine}: no "temperature_C" column for --by temperature (the header has ${shownNames(names)}); add it, or use --by concentration.`);
  } else {
    const col = CONCENTRATION_COLUMNS.find((c) => names.includes(c.name));
    if (!col) throw new InputError(`${file} line ${headerLine}: no "concentration_M" column for --by concentration (the header has ${shownNames(names)}); add it, or use --by temperature.`);
    xName = col.name;
    factor = col.toMolar;
  }
  const parsed = parseNumericTable(text, file, [{ name: xName }, { name: 'k' }, { name: 'k_se', optional: true }], `${by === 'temperature' ? 'temperature_C' : 'concentration_M'}, k and k_se`);
  if (!parsed.ok) throw new InputError(parsed.error);
  if (parsed.table.rows.length === 0) throw new InputError(`${file}: no runs below the header (line ${headerLine}); add one line per run.`);
  return parsed.table.rows.map((r) => {
    const [x, k, se] = r.values;
    if (!(k! > 0)) throw new InputError(`${file} line ${r.line}: k = ${k} is not positive; fit the run again, or remove the line.`);
    if (se !== null && !(se! > 0)) throw new InputError(`${file} line ${r.line}: k_se = ${se} is not positive; give the standard error of k, or leave the cell empty.`);
    if (by === 'concentration' && !plausible.concentration_M(x! * factor)) throw new InputError(`${file} line ${r.line}: concentration ${x} is not ${PLAUSIBLE_WORDS.concentration_M}; give the reagent's concentration after mixing.`);
    if (by === 'temperature' && !plausible.temperature_C(x!)) throw new InputError(`${file} line ${r.line}: temperature ${x} °C is not ${PLAUSIBLE_WORDS.temperature_C}; give it in °C.`);
    return { label: `${file} line ${r.line}`, x: x! * factor, xFrom: 'summary' as const, k_perSecond: k!, kStdErr_perSecond: se ?? null };
  });
}

/**
 * Fits one run file; returns the run, or why it is left out. The study is designed to be
 * pseudo-first-order (reagent in excess), so a run is left out only when the data decide
 * for another order; a run left undecided while first order fits best (most often a
 * chance rejection by the runs test, about one good run in twenty) is kept, with a note.
 */
function analyseRun(time_s: Float64Array, absorbance: Float64Array, file: string, settings: RecordedFitSettings | null = null): { k: number; se: number; note?: string } | { reason: string } {
  if (time_s.length < MIN_POINTS_TO_ESTIMATE) {
    throw new InputError(`${file}: only ${time_s.length} reading(s); a fit needs at least ${MIN_POINTS_TO_ESTIMATE}. Record a longer run or leave this file out.`);
  }
  // The same checks of a run as a whole as rateline analyze makes (times that advance, a swapped blank).
  const problem = runProblem(time_s, absorbance, file);
  if (problem) throw new InputError(problem);
  // A recorded run is fitted as it was stopped: its window, target and precision.
  const analyzer = new RunAnalyzer(fitSettingsToApply(settings));
  for (let i = 0; i < time_s.length; i++) analyzer.add(time_s[i]!, absorbance[i]!);
  const r = analyzer.flush();
  const first = r.models.first;
  const w = r.verdict.weights;
  const firstBest = w.first !== null && w.first >= (w.zero ?? 0) && w.first >= (w.second ?? 0);
  const open = r.verdict.order === 'undecided' || r.verdict.order === 'noSimpleLaw';
  if (r.verdict.order !== 'first' && !(open && firstBest)) {
    return { reason: `its order is ${r.verdict.order} (${r.verdict.reason}), not first` };
  }
  const note = open ? `its order is ${r.verdict.order === 'undecided' ? 'undecided' : 'not a simple rate law'} (${r.verdict.reason}); first order fits it best and is used` : undefined;
  if (r.stop.state !== 'settled' && r.stop.state !== 'farEnough') return { reason: `k has not settled (${r.stop.reason}); record it longer` };
  if (first.k === null || first.kStdErr === null || !(first.k > 0)) return { reason: 'the first-order fit gave no k with a standard error' };
  return note === undefined ? { k: first.k, se: first.kStdErr } : { k: first.k, se: first.kStdErr, note };
}

export async function run(argv: string[]): Promise<number> {
  const cmd = 'combine';
  const args = parseCommandArguments(cmd, argv, { by: 'value', reagent: 'value', value: 'values', format: 'value' });
  if (args.help) { console.log(HELP); return 0; }
  if (!args.given('by')) throw new InputError('rateline combine: no --by given; say --by concentration (rate law) or --by temperature (activation energy).');
  const by: CombineBy = args.choice('by', ['concentration', 'temperature'], 'concentration');
  const format = args.choice('format', ['text', 'json'], 'text');
  const reagent = args.value('reagent');
  if (reagent !== undefined && by !== 'concentration') throw new InputError('rateline combine: --reagent goes with --by concentration; leave it out for --by temperature.');
  if (args.positionals.length === 0) throw new InputError('rateline combine: no files given; usage: rateline combine FILE... --by concentration|temperature.');
  const values = valueOptions(args.values('value'), by);
  const seen = new Map<string, string>();
  for (const f of args.positionals) {
    const key = resolve(f);
    if (seen.has(key)) throw new InputError(`rateline combine: ${f} is given twice; give each run once.`);
    seen.set(key, f);
  }
  for (const [key, v] of values) {
    if (!seen.has(key)) throw new InputError(`rateline combine: --value names ${v.given}, which is not among the files; check the name.`);
  }

  const runs: CombinedRun[] = [];
  const leftOut: LeftOutRun[] = [];
  for (const file of args.positionals) {
    const text = await readUserText(file, 'a run file (.jsonl or .csv)');
    const option = values.get(resolve(file));
    const firstLine = text.slice(0, text.indexOf('\n') >>> 0);
    if (extname(file).toLowerCase() === '.jsonl' || looksLikeRunRecordLine(firstLine)) {
      const record = parseRunRecord(text, file);
      if (record.recovery.message) console.error(record.recovery.message);
      const x = option ? option.x : recordX(record, file, by, reagent);
      const readings = analysisReadings(record);
      const fit = analyseRun(readings.time_s, readings.absorbance, file, recordFitSettings(record.events));
      if ('reason' in fit) leftOut.push({ label: file, reason: fit.reason });
      else {
        if (fit.note) console.error(`rateline combine: note: ${file}: ${fit.note}.`);
        runs.push({ label: file, x, xFrom: option ? 'option' : 'header', k_perSecond: fit.k, kStdErr_perSecond: fit.se });
      }
      continue;
    }
    const read = readHeader(text, file, 'the columns time_s and absorbance (a run) or k and its x value (a summary of runs)');
    const header = read.ok ? read.header : null;
    // A summary CSV names k or an x column and no time; a run CSV names time_s.
    const summaryNames = ['k', 'k_se', 'temperature_c', ...CONCENTRATION_COLUMNS.map((c) => c.name)];
    if (header && !header.names.includes('time_s') && header.names.some((n) => summaryNames.includes(n))) {
      if (option) throw new InputError(`rateline combine: --value ${option.given}=… names a summary CSV, whose rows carry their own values; leave it out.`);
      runs.push(...summaryRuns(text, file, by, header.names, header.line));
      continue;
    }
    const parsed = parseRunCsv(text, file);
    if (!parsed.ok) throw new InputError(parsed.error);
    if (!option) {
      throw new InputError(`${file}: a run CSV carries no ${by === 'concentration' ? 'reagent concentration' : 'temperature'}; give it with --value ${file}=${by === 'concentration' ? 'C (mol/L)' : 'T (°C)'}.`);
    }
    const fit = analyseRun(parsed.run.time_s, parsed.run.absorbance, file);
    if ('reason' in fit) leftOut.push({ label: file, reason: fit.reason });
    else {
      if (fit.note) console.error(`rateline combine: note: ${file}: ${fit.note}.`);
      runs.push({ label: file, x: option.x, xFrom: 'option', k_perSecond: fit.k, kStdErr_perSecond: fit.se });
    }
  }
  for (const l of leftOut) console.error(`rateline combine: warning: ${l.label} is left out: ${l.reason}.`);
  if (runs.length < 2) {
    const leftNote = leftOut.length > 0 ? ` (${leftOut.length} left out, see the warnings above)` : '';
    throw new InputError(`rateline combine: only ${runs.length} usable run(s)${leftNote}; ${by === 'concentration' ? 'a rate law needs runs at two or more concentrations' : 'an activation energy needs runs at two or more temperatures'}, so add runs.`);
  }

  if (by === 'concentration') {
    const law = rateLawFromSeries(runs.map((r) => ({ concentration_M: r.x, kObs_perSecond: r.k_perSecond, kObsStdErr_perSecond: r.kStdErr_perSecond, label: r.label })));
    if (!law.ok) throw new InputError(`rateline combine: ${law.error}`);
    const out = { by: 'concentration' as const, runs: runs.map((r) => ({ ...r, concentration_M: r.x })), leftOut, rateLaw: law };
    if (format === 'json') console.log(json(out));
    else console.log(formatCombinedText(out));
    return 0;
  }
  const fit = arrheniusFit(runs.map((r) => ({ temperature_C: r.x, k: r.k_perSecond, kStdErr: r.kStdErr_perSecond, label: r.label })));
  if (!fit.ok) throw new InputError(`rateline combine: ${fit.error}`);
  const out = {
    by: 'temperature' as const,
    runs: runs.map((r) => {
      const T = celsiusToKelvin(r.x);
      return { ...r, temperature_C: r.x, temperature_K: T, inverseTemperature_perK: 1 / T, lnK: Math.log(r.k_perSecond) };
    }),
    leftOut,
    arrhenius: fit,
  };
  if (format === 'json') console.log(json(out));
  else console.log(formatCombinedText(out));
  return 0;
}

function json(v: unknown): string {
  return JSON.stringify(v, (_k, x) => (typeof x === 'number' && !Number.isFinite(x) ? null : x), 2);
}
