/**
 * `rateline combine FILE... --by concentration|temperature [options]`, or a study file
 * in place of the files: several runs, one result. Each run file (a run record or a run
 * CSV) is fitted by a RunAnalyzer as `rateline analyze` does; its first-order k_obs with
 * SE goes into the series statistics (kinetics/seriesCombination.ts: the rate law in the
 * excess reagent with the isolation check and the global fit, or the Arrhenius and
 * Eyring lines). The command only reads, calls and prints; study files are read and
 * written through main/cli/common/combineStudy.ts. A run whose data decide for another order than
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
import { combineConcentrationSeries, combineTemperatureSeries, type SeriesRun } from '../../../kinetics/seriesCombination';
import { isStudyFileName, type StudyRun } from '../../../acquisition/files/studyFile';
import { conditionConcentration, readStudy, saveCombinedStudy, studyRunX, type RunConditions, type SavedRun } from '../common/combineStudy';
import { celsiusToKelvin } from '../../../kinetics/temperature';

const HELP = `usage: rateline combine FILE... --by concentration|temperature [options]
       rateline combine NAME.vN.study.json [options]

  FILE...          two or more runs: run records (.jsonl, as rateline record writes them)
                   or run CSVs (time_s, absorbance); each is fitted as rateline analyze
                   does, and its first-order k_obs (with SE) is used. A run whose data
                   decide for another order, or whose k has not settled, is left out
                   with a warning; an undecided run that first order fits best is kept.
                   A FILE may instead be a summary CSV of runs analysed elsewhere, one run
                   a line: concentration_M (or _mM, _uM) or temperature_C, k (s^-1), and
                   optionally k_se (the fit is weighted by the runs' SEs when every run has one)
  NAME.vN.study.json  a study file (see acquisition/record/STUDY_FILE.md): its runs, their
                   conditions, the reagent, the followed species and the stoichiometry;
                   each run's SHA-256 is checked first
  --by concentration  the order m in the excess reagent and k, from k_obs = k [B]^m; the
                   isolation of each run; a global fit of all readings as a check
  --by temperature    Ea and A (Arrhenius), and ΔH‡, ΔS‡, ΔG‡ (Eyring) from k = k_obs/[B]^m
  --reagent NAME   which of a record's concentrations is the excess reagent (needed when
                   the record lists more than one; by temperature it gives [B] for Eyring)
  --followed NAME  which of a record's concentrations is the followed species, for the
                   isolation check ([B]/[A] of about 10 or more)
  --stoichiometry N   mol of reagent used per mol of the followed species (default 1)
  --order-in-reagent M  by temperature: the order m in k = k_obs/[B]^m (default 1)
  --predict-at-c T k at T °C from the Arrhenius line, with its 95% interval
  --value FILE=X   the x value of a run: its reagent concentration after mixing in mol/L
                   (--by concentration) or its temperature in °C (--by temperature).
                   Needed for a run CSV, which carries neither; for a run record it
                   replaces the header's value. Repeat once per file, or list several
                   after one --value: --value a.csv=0.010 b.csv=0.020
  --save-study [DIR/]NAME  write the runs and their conditions as DIR/NAME.vN.study.json,
                   the next version N beside any earlier ones; needs --reagent, --followed
                   and --safety-note TEXT; --calibration FILE names the calibration in use
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

/** One run's own first-order fit, as the series needs it. */
interface RunFit { k: number; se: number; note?: string; a0: number | null; aInf: number | null; fractionConverted: number | null }

/**
 * Fits one run file; returns the run, or why it is left out. The study is designed to be
 * pseudo-first-order (reagent in excess), so a run is left out only when the data decide
 * for another order; a run left undecided while first order fits best (most often a
 * chance rejection by the runs test, about one good run in twenty) is kept, with a note.
 */
function analyseRun(time_s: Float64Array, absorbance: Float64Array, file: string, settings: RecordedFitSettings | null = null): RunFit | { reason: string } {
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
  const fit: RunFit = { k: first.k, se: first.kStdErr, a0: first.a0, aInf: first.aInf, fractionConverted: r.fractionConverted };
  if (note !== undefined) fit.note = note;
  return fit;
}

/** The concentrations of a record's final metadata that are in M, mM or µM, in mol/L. */
function recordConcentrations(record: RunRecord): { name: string; concentration_M: number }[] {
  return finalRunMetadata(record).concentrations.flatMap((c) => {
    const f = TO_MOLAR[c.unit.trim().toLowerCase()];
    return f === undefined || !(c.value > 0) ? [] : [{ name: c.name, concentration_M: c.value * f }];
  });
}

/** What is known of a run beyond its k: for the isolation check, the global fit, Eyring and a saved study. */
interface RunDetails {
  file: string;
  conditions: RunConditions;
  fit: RunFit | null;
  readings: { time_s: Float64Array; absorbance: Float64Array } | null;
}

/** Where the command's answer and its notes go: the terminal, or a caller that shows them (the study screen). */
export interface CombineOutput {
  log(text: string): void;
  error(text: string): void;
}

export async function run(argv: string[]): Promise<number> {
  return combineRuns(argv, console);
}

/**
 * The whole command with its output handed to `io`: the study screen runs exactly this,
 * so its numbers are the command's to the last digit. Bad input throws InputError (or a
 * file's own error) with the one sentence to show.
 */
export async function combineRuns(argv: string[], io: CombineOutput): Promise<number> {
  const cmd = 'combine';
  const args = parseCommandArguments(cmd, argv, {
    by: 'value', reagent: 'value', value: 'values', format: 'value', followed: 'value', stoichiometry: 'value',
    'order-in-reagent': 'value', 'predict-at-c': 'value', 'save-study': 'value', 'safety-note': 'value', calibration: 'value',
  });
  if (args.help) { io.log(HELP); return 0; }
  const studyFiles = args.positionals.filter(isStudyFileName);
  if (studyFiles.length > 1) throw new InputError('rateline combine: more than one study file given; combine one study at a time.');
  if (studyFiles.length === 1 && args.positionals.length > 1) throw new InputError('rateline combine: give a study file or run files, not both; add the runs to the study by saving it again.');
  const study = studyFiles.length === 1 ? readStudy(studyFiles[0]!) : null;
  if (study && args.given('save-study')) throw new InputError('rateline combine: --save-study goes with run files; a study file is saved already (its runs keep their conditions).');
  if (study && (args.given('value') || args.given('reagent') || args.given('followed') || args.given('stoichiometry'))) {
    throw new InputError('rateline combine: the study file gives each run\'s conditions, the reagent, the followed species and the stoichiometry; leave out --value, --reagent, --followed and --stoichiometry.');
  }
  if (!args.given('by') && !study) throw new InputError('rateline combine: no --by given; say --by concentration (rate law) or --by temperature (activation energy).');
  const by: CombineBy = args.choice('by', ['concentration', 'temperature'], study ? study.study.by : 'concentration');
  if (study && by !== study.study.by) throw new InputError(`rateline combine: ${study.path} is a series by ${study.study.by}; leave out --by or give --by ${study.study.by}.`);
  const format = args.choice('format', ['text', 'json'], 'text');
  const reagent = study ? study.study.excessReagent : args.value('reagent');
  const followed = study ? study.study.followedSpecies : args.value('followed');
  const stoichiometry = study ? study.study.stoichiometry : args.number('stoichiometry', (v) => v > 0 && v <= 100, 'a positive number of mol of reagent per mol of the followed species, at most 100') ?? 1;
  const orderInReagent = args.number('order-in-reagent', (v) => Number.isInteger(v) && v >= 0 && v <= 3, 'a whole order from 0 to 3') ?? 1;
  if (args.given('order-in-reagent') && by !== 'temperature') throw new InputError('rateline combine: --order-in-reagent goes with --by temperature (k = k_obs/[B]^m); by concentration the order is fitted.');
  const predictAt = args.number('predict-at-c', plausible.temperature_C, PLAUSIBLE_WORDS.temperature_C) ?? null;
  if (predictAt !== null && by !== 'temperature') throw new InputError('rateline combine: --predict-at-c goes with --by temperature; leave it out for --by concentration.');
  const saveTarget = args.value('save-study');
  if (!saveTarget && (args.given('safety-note') || args.given('calibration'))) throw new InputError('rateline combine: --safety-note and --calibration are saved with --save-study NAME; give it, or leave them out.');
  if (saveTarget) {
    if (reagent === undefined || followed === undefined) throw new InputError('rateline combine: --save-study needs --reagent NAME (the reagent in excess) and --followed NAME (the species whose absorbance is followed).');
    if (!args.given('safety-note')) throw new InputError('rateline combine: --save-study needs --safety-note TEXT on the hazards of the reagents and how they are handled.');
  }
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
  const details = new Map<string, RunDetails>();
  const saved: SavedRun[] = [];
  const keep = (file: string, x: number, xFrom: CombinedRun['xFrom'], conditions: RunConditions, t: Float64Array, a: Float64Array, settings: RecordedFitSettings | null = null) => {
    const fit = analyseRun(t, a, file, settings);
    if ('reason' in fit) { leftOut.push({ label: file, reason: fit.reason }); saved.push({ file, conditions, included: false, leftOutReason: fit.reason }); return; }
    if (fit.note) io.error(`rateline combine: note: ${file}: ${fit.note}.`);
    runs.push({ label: file, x, xFrom, k_perSecond: fit.k, kStdErr_perSecond: fit.se });
    details.set(file, { file, conditions, fit, readings: { time_s: t, absorbance: a } });
    saved.push({ file, conditions, included: true, leftOutReason: null });
  };
  // Read one after another, so that the first bad file named is the one reported.
  const inputs: { file: string; text: string; studyRun: StudyRun | null }[] = study ? study.inputs.map((i) => ({ file: i.file, text: i.text, studyRun: i.run })) : [];
  if (!study) for (const file of args.positionals) inputs.push({ file, text: await readUserText(file, 'a run file (.jsonl or .csv)'), studyRun: null });
  if (study?.newerRevision) io.error(`rateline combine: note: ${study.path} is version ${study.study.revision}; version ${study.newerRevision} beside it is the current one.`);
  for (const { file, text, studyRun } of inputs) {
    if (studyRun && !studyRun.included) { leftOut.push({ label: file, reason: `left out in the study: ${studyRun.leftOutReason}` }); continue; }
    const option = values.get(resolve(file));
    const firstLine = text.slice(0, text.indexOf('\n') >>> 0);
    if (extname(file).toLowerCase() === '.jsonl' || looksLikeRunRecordLine(firstLine)) {
      const record = parseRunRecord(text, file);
      if (record.recovery.message) io.error(record.recovery.message);
      const x = studyRun ? studyRunX(study!, { file, text, run: studyRun }) : option ? option.x : recordX(record, file, by, by === 'concentration' ? reagent : undefined);
      const meta = finalRunMetadata(record);
      const conditions: RunConditions = studyRun ? studyRun.conditions : withX({ concentrations: recordConcentrations(record), temperature_C: meta.temperature_C }, by, x, reagent);
      const readings = analysisReadings(record);
      keep(file, x, studyRun ? 'study' : option ? 'option' : 'header', conditions, readings.time_s, readings.absorbance, recordFitSettings(record.events));
      continue;
    }
    const read = readHeader(text, file, 'the columns time_s and absorbance (a run) or k and its x value (a summary of runs)');
    const header = read.ok ? read.header : null;
    // A summary CSV names k or an x column and no time; a run CSV names time_s.
    const summaryNames = ['k', 'k_se', 'temperature_c', ...CONCENTRATION_COLUMNS.map((c) => c.name)];
    if (header && !header.names.includes('time_s') && header.names.some((n) => summaryNames.includes(n))) {
      if (studyRun) throw new InputError(`${study!.path}: ${studyRun.path} is a summary CSV, not a run; a study names run files.`);
      if (option) throw new InputError(`rateline combine: --value ${option.given}=… names a summary CSV, whose rows carry their own values; leave it out.`);
      if (saveTarget) throw new InputError(`rateline combine: ${file} is a summary CSV; a study names run files, so --save-study cannot keep it.`);
      runs.push(...summaryRuns(text, file, by, header.names, header.line));
      continue;
    }
    const parsed = parseRunCsv(text, file);
    if (!parsed.ok) throw new InputError(parsed.error);
    if (!option && !studyRun) {
      throw new InputError(`${file}: a run CSV carries no ${by === 'concentration' ? 'reagent concentration' : 'temperature'}; give it with --value ${file}=${by === 'concentration' ? 'C (mol/L)' : 'T (°C)'}.`);
    }
    const x = studyRun ? studyRunX(study!, { file, text, run: studyRun }) : option!.x;
    const conditions = studyRun ? studyRun.conditions : withX({ concentrations: [], temperature_C: null }, by, x, reagent);
    keep(file, x, studyRun ? 'study' : 'option', conditions, parsed.run.time_s, parsed.run.absorbance);
  }
  for (const l of leftOut) io.error(`rateline combine: warning: ${l.label} is left out: ${l.reason}.`);
  if (runs.length < 2) {
    const leftNote = leftOut.length > 0 ? ` (${leftOut.length} left out, see the warnings above)` : '';
    throw new InputError(`rateline combine: only ${runs.length} usable run(s)${leftNote}; ${by === 'concentration' ? 'a rate law needs runs at two or more concentrations' : 'an activation energy needs runs at two or more temperatures'}, so add runs.`);
  }

  const seriesRuns: SeriesRun[] = runs.map((r) => {
    const d = details.get(r.label);
    const fit = d?.fit ?? null;
    return {
      label: r.label, x: r.x, kObs_perSecond: r.k_perSecond, kObsStdErr_perSecond: r.kStdErr_perSecond,
      followed_M: d ? conditionConcentration(d.conditions, followed) : null,
      excess_M: d ? conditionConcentration(d.conditions, reagent) : null,
      fractionConverted: fit?.fractionConverted ?? null,
      readings: d?.readings && fit && fit.a0 !== null && fit.aInf !== null ? { ...d.readings, a0: fit.a0, aInf: fit.aInf } : null,
    };
  });
  let savedPath: string | null = null;
  const save = () => {
    if (!saveTarget) return;
    savedPath = saveCombinedStudy(saveTarget, by, saved, { followedSpecies: followed!, excessReagent: reagent!, stoichiometry, safetyNote: args.value('safety-note')!, calibration: args.value('calibration') });
    io.error(`rateline combine: saved the study as ${savedPath}.`);
  };
  const studyInfo = study ? { path: study.path, name: study.study.name, revision: study.study.revision, safetyNote: study.study.safetyNote } : null;

  if (by === 'concentration') {
    const series = combineConcentrationSeries(seriesRuns, { stoichiometry });
    if ('ok' in series) throw new InputError(`rateline combine: ${series.error}`);
    save();
    const out = { by: 'concentration' as const, study: studyInfo, savedStudy: savedPath, runs: runs.map((r) => ({ ...r, concentration_M: r.x })), leftOut, ...series };
    if (format === 'json') io.log(json(out));
    else io.log(formatCombinedText(out));
    return 0;
  }
  const series = combineTemperatureSeries(seriesRuns, { orderInExcess: orderInReagent, predictAt_C: predictAt });
  if ('ok' in series) throw new InputError(`rateline combine: ${series.error}`);
  save();
  const out = {
    by: 'temperature' as const,
    study: studyInfo,
    savedStudy: savedPath,
    runs: runs.map((r) => {
      const T = celsiusToKelvin(r.x);
      return { ...r, temperature_C: r.x, temperature_K: T, inverseTemperature_perK: 1 / T, lnK: Math.log(r.k_perSecond) };
    }),
    leftOut,
    ...series,
  };
  if (format === 'json') io.log(json(out));
  else io.log(formatCombinedText(out));
  return 0;
}

/** The conditions with the run's x written in: the excess reagent's concentration, or the temperature. */
function withX(c: RunConditions, by: CombineBy, x: number, reagent: string | undefined): RunConditions {
  if (by === 'temperature') return { ...c, temperature_C: x };
  const name = reagent ?? 'excess reagent';
  const same = (q: { name: string }) => q.name.toLowerCase() === name.toLowerCase();
  if (!c.concentrations.some(same)) return { ...c, concentrations: [...c.concentrations, { name, concentration_M: x }] };
  return { ...c, concentrations: c.concentrations.map((q) => (same(q) ? { name: q.name, concentration_M: x } : q)) };
}

function json(v: unknown): string {
  return JSON.stringify(v, (_k, x) => (typeof x === 'number' && !Number.isFinite(x) ? null : x), 2);
}
