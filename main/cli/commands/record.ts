/**
 * `rateline record`: records a run headless, from a serial instrument or the simulated
 * one, into a new run record, printing live progress, and stops on Ctrl-C or SIGTERM
 * (closing the record cleanly), at the time limit, or when the advice says stop.
 */
import { existsSync, statSync, unlinkSync } from 'node:fs';
import { PROGRAM } from '../../programIdentity';
import { RunAnalyzer } from '../../../kinetics/runAnalyzer';
import { DEMO_RUN } from '../../../kinetics/reactionModel';
import type { AnalysisResult } from '../../../kinetics/analysisTypes';
import { Journal, JournalError } from '../../../acquisition/record/journal';
import { RunSession, type RunSessionOutcome, type TimeZero } from '../../../acquisition/record/runSession';
import { buildRecordHeader } from '../../../acquisition/record/recordHeader';
import {
  emptyRunMetadata, type RecordHeader, type RunMetadata,
} from '../../../acquisition/record/runRecordFormat';
import type { ReadingSource } from '../../../acquisition/sources/sourceTypes';
import { SimulatedSource } from '../../../acquisition/sources/simulatedSource';
import { defaultInstrumentSettings } from '../../../acquisition/sources/simulatedInstrument';
import { EXIT_BAD_INPUT, EXIT_OK, InputError } from '../common/cliErrors';
import { parseCommandArguments } from '../common/arguments';
import { HALF_LIVES_WORDS, PLAUSIBLE_WORDS, SEED_WORDS, SPEED_WORDS, halfLivesCheck, plausible, seedCheck, speedCheck } from '../common/benchRanges';
import { formatProgress, progressJson } from '../common/recordProgress';
import { openSerialForRecord } from '../common/recordSerial';
import { CalibrationFileError, readCalibrationFile, type CalibrationFile } from '../../../acquisition/files/calibrationFile';
import { PLAIN_SPEC_HELP, PlainSpecError, parsePlainSpec, plainIdentity, type PlainSpec } from '../../../acquisition/plain/plainSpec';

const USAGE = `usage: rateline record --port PATH|sim --out FILE [options]

  --port PATH          serial port of the instrument ("sim" = the simulated instrument)
  --simulate           same as --port sim (demo data)
  --out FILE           the new run record (.jsonl); an existing file is never overwritten
  --baud N             serial speed (default 115200)
  --plain SPEC         the instrument prints plain delimited lines, not the Rateline protocol:
                       how to read them, e.g. --plain "time=1,time-unit=s,signal=2,signal-unit=%T,delimiter=tab"
                       (it takes no commands; time zero is its first reading; see below)
  --max-seconds N      stop after N s of run time
  --until-advice       stop when the advice says the run has gone far enough
  --half-lives N       target for the advice, in half-lives (default 3)
  --precision F        settled when k's 95% CI half-width is within F of k (default 0.05)
  --sample TEXT  --operator TEXT  --temperature-c T  --wavelength-nm W  --path-cm L
  --ph X  --buffer TEXT  --note TEXT
  --conc "NAME=VALUE UNIT"   a concentration (repeatable), e.g. --conc "hypochlorite=0.010 M"
  --volume "NAME=ML"         a volume in mL (repeatable)
  --speed X|max        simulated instrument only: device seconds per second (default 1)
  --seed N             simulated instrument only (default 1)
  --sends absorbance|counts  simulated instrument only (counts: a blank is taken first)
  --progress text|json progress lines on standard output (default text)
  --progress-ms N      how often progress is printed (default 1000)
  --calibration CAL    a calibration file (rateline calibrate --save) to keep in the record's
                       header; rateline analyze then fits the run in its concentration unit

--plain ${PLAIN_SPEC_HELP}
  The record's header keeps the spec in full (instrument identity: "plain delimited lines read as …").`;

const RECORD_OPTIONS = {
  port: 'value', out: 'value', baud: 'value', simulate: 'flag',
  'max-seconds': 'value', 'until-advice': 'flag', 'half-lives': 'value', precision: 'value',
  sample: 'value', operator: 'value', 'temperature-c': 'value', 'wavelength-nm': 'value',
  'path-cm': 'value', ph: 'value', buffer: 'value', note: 'value', conc: 'values', volume: 'values',
  plain: 'value', speed: 'value', seed: 'value', sends: 'value',
  progress: 'value', 'progress-ms': 'value', calibration: 'value',
} as const;

function parseConcentration(raw: string): RunMetadata['concentrations'][number] {
  const m = /^\s*([^=]+?)\s*=\s*([-+0-9.eE]+)\s*(\S.*)?$/.exec(raw);
  const value = m ? Number(m[2]) : NaN;
  if (!m || !Number.isFinite(value)) throw new InputError(`rateline record: --conc "${raw}" is not NAME=VALUE UNIT; write it like --conc "hypochlorite=0.010 M".`);
  return { name: m[1]!, value, unit: (m[3] ?? '').trim() };
}

function parseVolume(raw: string): RunMetadata['volumes'][number] {
  const m = /^\s*([^=]+?)\s*=\s*([-+0-9.eE]+)\s*(mL)?\s*$/.exec(raw);
  const value = m ? Number(m[2]) : NaN;
  if (!m || !Number.isFinite(value) || value < 0) throw new InputError(`rateline record: --volume "${raw}" is not NAME=ML; write it like --volume "dye stock=0.30".`);
  return { name: m[1]!, value_mL: value };
}

export async function run(argv: string[]): Promise<number> {
  const args = parseCommandArguments('record', argv, RECORD_OPTIONS);
  if (args.help) {
    console.log(USAGE);
    return EXIT_OK;
  }
  if (args.positionals.length > 0) throw new InputError(`rateline record: unexpected argument "${args.positionals[0]}"; every value goes after its option (run "rateline record --help" for the options).`);
  const port = args.value('port');
  const simulate = args.flag('simulate') || port === 'sim';
  if (!simulate && !port) throw new InputError('rateline record: no --port given; name the serial port of the instrument (or --simulate for the simulated one).');
  const out = args.value('out');
  if (!out) throw new InputError('rateline record: no --out given; name the new run record file, for example --out run1.jsonl.');
  if (existsSync(out)) {
    const what = statSync(out).isDirectory() ? 'a folder' : 'a file';
    throw new InputError(`rateline record: ${out} is already ${what}, and a run record is never overwritten; choose another --out name.`);
  }
  const positive = (v: number): boolean => v > 0;
  const maxSeconds = args.number('max-seconds', positive, 'a positive number of seconds');
  const halfLives = args.number('half-lives', halfLivesCheck, HALF_LIVES_WORDS);
  const precision = args.number('precision', (v) => v > 0 && v < 1, 'a fraction between 0 and 1');
  const baud = args.number('baud', (v) => Number.isInteger(v) && v > 0, 'a whole positive baud rate') ?? 115200;
  const seed = args.number('seed', seedCheck, SEED_WORDS) ?? 1;
  const progressMs = args.number('progress-ms', (v) => v >= 50 && v <= 3_600_000, 'from 50 ms to an hour (3600000 ms)') ?? 1000;
  const speed = args.value('speed') === 'max' ? 'max' : args.number('speed', speedCheck, `${SPEED_WORDS}, or max`) ?? 1;
  const sends = args.choice('sends', ['absorbance', 'counts'], 'absorbance');
  const progressMode = args.choice('progress', ['text', 'json'], 'text');
  if (!simulate && (args.given('speed') || args.given('seed') || args.given('sends'))) {
    throw new InputError('rateline record: --speed, --seed and --sends are for the simulated instrument only; drop them or add --simulate.');
  }

  let calibration: CalibrationFile | null = null;
  const calibrationPath = args.value('calibration');
  if (calibrationPath !== undefined) {
    try {
      calibration = readCalibrationFile(calibrationPath);
    } catch (err) {
      if (err instanceof CalibrationFileError) throw new InputError(`rateline record: --calibration ${err.message}`);
      throw err;
    }
  }

  let plain: PlainSpec | null = null;
  const plainText = args.value('plain');
  if (plainText !== undefined) {
    if (simulate) throw new InputError('rateline record: --plain is for a serial instrument that prints plain lines; drop it, or give --port PATH instead of --simulate.');
    try {
      plain = parsePlainSpec(plainText);
    } catch (err) {
      if (err instanceof PlainSpecError) throw new InputError(`rateline record: --plain "${plainText}": ${err.message}; run "rateline record --help" for the spec.`);
      throw err;
    }
  }

  const run: RunMetadata = {
    ...emptyRunMetadata(),
    sample: args.value('sample') ?? (simulate ? 'brilliant blue FCF + hypochlorite (demo)' : null),
    operator: args.value('operator') ?? null,
    wavelength_nm: args.number('wavelength-nm', plausible.wavelength_nm, PLAUSIBLE_WORDS.wavelength_nm) ?? (simulate ? 630 : null),
    path_cm: args.number('path-cm', plausible.path_cm, PLAUSIBLE_WORDS.path_cm) ?? null,
    temperature_C: args.number('temperature-c', plausible.temperature_C, PLAUSIBLE_WORDS.temperature_C) ?? null,
    pH: args.number('ph', (v) => v >= -2 && v <= 16, 'a pH') ?? null,
    buffer: args.value('buffer') ?? null,
    concentrations: args.values('conc').map(parseConcentration),
    volumes: args.values('volume').map(parseVolume),
    note: args.value('note') ?? null,
  };

  let source: ReadingSource;
  let timeZero: TimeZero;
  const instrument: RecordHeader['instrument'] = { source: simulate ? 'simulated' : 'serial', port: simulate ? null : port!, baud: simulate ? null : baud, identity: null };
  if (simulate) {
    const settings = defaultInstrumentSettings(DEMO_RUN, { seed, sends });
    source = new SimulatedSource({ instrument: settings, speed });
    instrument.identity = settings.identity;
    // The simulated instrument starts the reaction itself at its device time 0: the header says so.
    timeZero = { reactionStart_s: 0 };
  } else {
    if (plain) {
      // A plain instrument cannot say who it is: the header says how its lines are read instead.
      instrument.identity = plainIdentity(plain);
      source = await openSerialForRecord(port!, baud, { delimited: { ...plain.config, ...(run.wavelength_nm !== null ? { wavelength_nm: run.wavelength_nm } : {}) }, expectedInterval_s: plain.interval_s });
    } else {
      source = await openSerialForRecord(port!, baud);
    }
    timeZero = 'firstReading';
  }

  const header = buildRecordHeader({
    started: new Date(), program: PROGRAM, run,
    // The whole calibration file: the record's calibration shape (label, signal, slope,
    // intercept) with its range and uncertainty as further fields, which the format allows.
    calibration, instrument, demo: simulate,
    reactionStart_s: typeof timeZero === 'object' && 'reactionStart_s' in timeZero ? timeZero.reactionStart_s : null,
  });
  let journal: Journal;
  try {
    journal = Journal.create(out, header);
  } catch (err) {
    await source.close().catch(() => undefined);
    if (err instanceof JournalError) throw new InputError(`rateline record: ${err.message}`);
    throw err;
  }
  const analyzerOptions = {
    ...(halfLives !== undefined ? { targetHalfLives: halfLives } : {}),
    ...(precision !== undefined ? { precision } : {}),
  };
  const analyzer = new RunAnalyzer(analyzerOptions);
  const recorder = new RunSession({
    source, journal, analyzer, analyzerOptions, createAnalyzer: (o) => new RunAnalyzer(o),
    timeZero, wavelength_nm: run.wavelength_nm, identity: instrument.identity, warnLateStart: !simulate,
    ...(maxSeconds !== undefined ? { maxRunSeconds: maxSeconds } : {}),
    ...(args.flag('until-advice') ? { untilAdvice: true } : {}),
  });

  const say = (line: string): void => {
    process.stdout.write(line + '\n');
  };
  const onInt = (): void => void recorder.stop('user', 'Ctrl-C');
  const onTerm = (): void => void recorder.stop('signal', 'SIGTERM');
  process.on('SIGINT', onInt);
  process.on('SIGTERM', onTerm);
  const printProgress = (): void => {
    const p = recorder.progress();
    try {
      const r = recorder.result();
      say(progressMode === 'json' ? JSON.stringify(progressJson(p, r)) : formatProgress(p, r));
    } catch (err) {
      // A fault of the analysis must not stop the recording: the readings keep going to the record.
      say(`${p.journalled} readings recorded; the analysis failed (${err instanceof Error ? err.message : String(err)}).`);
    }
  };
  const ticker = setInterval(printProgress, progressMs);
  let outcome: RunSessionOutcome;
  try {
    await recorder.start();
    // Said once the instrument is open: a port that will not open gets its one sentence, and no "recording".
    if (progressMode === 'text' && recorder.progress().phase !== 'stopped') {
      say(`rateline record: recording to ${out}${simulate ? ' from the simulated instrument (demo data)' : ` from ${port} at ${baud} baud${plain ? `, plain lines read as ${plain.canonical}` : ''}`}; Ctrl-C stops and closes the record.`);
    }
    outcome = await recorder.finished;
  } finally {
    clearInterval(ticker);
    process.off('SIGINT', onInt);
    process.off('SIGTERM', onTerm);
  }
  // After a failed write the analysis holds readings the file does not: the error's count is the one to see.
  if (outcome.readings > 0 && outcome.error === null) printProgress();
  return finish(out, outcome, progressMode, say);
}

function finish(out: string, outcome: RunSessionOutcome, mode: 'text' | 'json', say: (l: string) => void): number {
  if (outcome.reason === 'error') {
    if (outcome.readings === 0 && outcome.error === null) {
      // Nothing was measured: the file holds only the header and the failure, so it is removed
      // to leave the name free for the retry.
      try {
        unlinkSync(out);
      } catch {
        // Leave it; it holds nothing that could be lost.
      }
    }
    // A failed write says itself how many readings the file holds; any other fault gets the count here.
    if (outcome.error !== null) console.error(`rateline record: ${outcome.error}`);
    else console.error(`rateline record: ${outcome.detail}${outcome.readings > 0 ? ` (${outcome.readings} readings are kept in ${out})` : ''}`);
    return EXIT_BAD_INPUT;
  }
  if (mode === 'json') {
    // The final refit (the same numbers rateline analyze gives of the record), non-finite numbers as null like analyze's JSON.
    say(JSON.stringify({ stopped: outcome.reason, detail: outcome.detail, readings: outcome.readings, record: out, result: outcome.result },
      (_k, v: unknown) => (typeof v === 'number' && !Number.isFinite(v) ? null : v)));
  } else {
    say(`rateline record: stopped (${describeStop(outcome)}); ${outcome.readings} readings in ${out}.`);
    say(summary(outcome.result));
  }
  return EXIT_OK;
}

function describeStop(o: RunSessionOutcome): string {
  switch (o.reason) {
    case 'user': return 'Ctrl-C';
    case 'signal': return 'SIGTERM';
    case 'limit': return o.detail;
    case 'advice': return `the advice: ${o.detail}`;
    case 'sourceEnded': return `the instrument ended the run: ${o.detail}`;
    default: return o.detail;
  }
}

function summary(r: AnalysisResult | null): string {
  if (r === null) return 'the analysis failed on this run; the readings are all in the record (rateline analyze reads it).';
  const m = r.models[r.drivingModel];
  if (m.k === null || m.kCI95 === null) return `not enough data for a rate constant yet (${r.points} points).`;
  const half = (m.kCI95[1] - m.kCI95[0]) / 2;
  return `${r.drivingModel} order (verdict: ${r.verdict.order}): k = ${m.k.toPrecision(4)} ± ${half.toPrecision(2)} ${r.units.k[r.drivingModel]} (95% CI, noise only), ` +
    `${r.halfLivesElapsed === null ? '?' : r.halfLivesElapsed.toFixed(2)} half-lives elapsed; ${r.stop.reason}`;
}
