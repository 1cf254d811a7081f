/**
 * `rateline export FILE --to jcamp|csv --out OUT`: a recorded run (run record or CSV) in
 * an open format another program can read: JCAMP-DX 5.01 (acquisition/exports/jcampExport.ts) or
 * our annotated CSV (the same writer as the screen's export). The readings are those
 * the analysis uses (from time zero on); the fit's summary goes along as notes.
 */
import { fitSettingsToApply } from '../../../acquisition/record/recordTimeZero';
import { existsSync } from 'node:fs';
import { writeFile } from 'node:fs/promises';
import { basename } from 'node:path';
import { InputError } from '../common/cliErrors';
import { parseCommandArguments } from '../common/arguments';
import { runJcamp, type JcampRun } from '../../../acquisition/exports/jcampExport';
import { loadRun } from '../../../acquisition/files/runFile';
import { readRunRecord } from '../../../acquisition/record/journalReader';
import { RunAnalyzer } from '../../../kinetics/runAnalyzer';
import type { AnalysisResult } from '../../../kinetics/analysisTypes';
import { runCsv } from '../../../acquisition/exports/runCsvExport';

const HELP = `usage: rateline export FILE --to jcamp|csv --out OUT

  FILE        a run record (.jsonl) or a run CSV (time_s, absorbance)
  --to        jcamp: JCAMP-DX 5.01, absorbance against time (##XYDATA when the
              readings are evenly spaced, ##XYPOINTS otherwise);
              csv: comment lines with the run's details and fit, then one row a reading
  --out OUT   a new file; an existing file is never overwritten`;

/** What the export says about the run besides its readings (the JCAMP-DX header fields, and the CSV's). */
type RunDetails = Omit<JcampRun, 'time_s' | 'absorbance' | 'notes'> & {
  concentrations: { name: string; value: number; unit: string }[];
};

function fitNotes(r: AnalysisResult): string[] {
  const m = r.models[r.drivingModel];
  const notes = [`order verdict: ${r.verdict.order} (${r.verdict.reason})`];
  if (m.k !== null) {
    const ci = m.kCI95 ? `, 95% CI ${m.kCI95[0].toPrecision(4)} to ${m.kCI95[1].toPrecision(4)}` : '';
    notes.push(`k (${r.drivingModel} order) = ${m.k.toPrecision(4)} ${r.units.k[r.drivingModel]}${ci}`);
  }
  if (m.halfLife_s !== null) notes.push(`half-life = ${m.halfLife_s.toPrecision(4)} s${m.halfLifeStdErr_s !== null ? ` ± ${m.halfLifeStdErr_s.toPrecision(2)} s (1 SE)` : ''}`);
  notes.push(r.uncertaintyNote);
  return notes;
}

export async function run(argv: string[]): Promise<number> {
  const args = parseCommandArguments('export', argv, { to: 'value', out: 'value' });
  if (args.help) { console.log(HELP); return 0; }
  const [file, ...extra] = args.positionals;
  if (!file) throw new InputError('rateline export: no file given; usage: rateline export FILE --to jcamp|csv --out OUT.');
  if (extra.length > 0) throw new InputError(`rateline export: one file at a time; "${extra[0]}" is one too many.`);
  const to = args.value('to');
  if (to === undefined) throw new InputError('rateline export: no --to given; say which format, --to jcamp or --to csv.');
  if (to !== 'jcamp' && to !== 'csv') throw new InputError(`rateline export: --to ${to} is not known; use --to jcamp or --to csv.`);
  const out = args.value('out');
  if (!out) throw new InputError('rateline export: no --out given; name the new file to write.');
  if (existsSync(out)) throw new InputError(`rateline export: ${out} exists already; an export never overwrites a file, so give a new name.`);

  const loaded = await loadRun(file);
  if (loaded.notice) console.error(loaded.notice);
  const details = await runDetails(file, loaded.source.format === 'runRecord');
  // The fit as the recorded run was stopped: its window, target and precision.
  const analyzer = new RunAnalyzer(fitSettingsToApply(loaded.fitSettings ?? null));
  for (let i = 0; i < loaded.time_s.length; i++) analyzer.add(loaded.time_s[i]!, loaded.absorbance[i]!);
  const result = loaded.time_s.length >= 10 ? analyzer.flush() : null;

  let text: string;
  if (to === 'jcamp') {
    const j = runJcamp({ ...details, time_s: loaded.time_s, absorbance: loaded.absorbance, notes: result ? fitNotes(result) : [] });
    if (!j.ok) throw new InputError(`${file}: ${j.error}`);
    text = j.text;
  } else {
    const readings = { length: loaded.time_s.length, time_s: loaded.time_s, absorbance: loaded.absorbance, flags: new Uint32Array(loaded.time_s.length) };
    text = runCsv({
      runId: details.title, demo: details.demo, sourceLabel: details.origin,
      details: { sample: details.title, operator: details.owner || undefined, temperature_C: details.temperature_C, concentrations: details.concentrations },
      wavelength_nm: details.wavelength_nm, timeZero_s: 0, readings, result,
    });
  }
  try {
    await writeFile(out, text, { encoding: 'utf8', flag: 'wx' });
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new InputError(`rateline export: cannot write ${out} (${code ?? 'error'}); check that its folder exists and can be written.`);
  }
  console.log(`wrote ${loaded.time_s.length} readings of ${file} to ${out} (${to === 'jcamp' ? 'JCAMP-DX 5.01' : 'CSV'})${details.demo ? '; demo data' : ''}`);
  return 0;
}

async function runDetails(file: string, isRecord: boolean): Promise<RunDetails> {
  const plain: RunDetails = {
    title: basename(file), origin: `Rateline, from ${basename(file)}`, owner: '', started: null,
    wavelength_nm: null, path_cm: null, temperature_C: null, demo: false, concentrations: [],
  };
  if (!isRecord) return plain;
  const rec = readRunRecord(file);
  const h = rec.header;
  const id = h.instrument.identity;
  return {
    title: h.run.sample ?? basename(file),
    origin: id ? `${id.maker} ${id.model} (serial ${id.serial}), recorded by Rateline ${h.program.version}` : `Rateline ${h.program.version}, ${h.instrument.source} source`,
    owner: h.run.operator ?? '',
    started: h.started,
    wavelength_nm: h.run.wavelength_nm ?? null,
    path_cm: h.run.path_cm ?? null,
    temperature_C: h.run.temperature_C ?? null,
    demo: h.demo,
    concentrations: h.run.concentrations,
  };
}
