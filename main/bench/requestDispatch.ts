/**
 * What each request from the screen does, once it has been parsed and its turn in the
 * queue has come. A refusal the user can act on is thrown as a `Refusal`; the service
 * turns it, or any other failure, into a one-line reply.
 */
import { isoWithLocalOffset } from '../../acquisition/record/runRecordFormat';
import { runMetadata } from './journalSink';
import { join } from 'node:path';
import type { SpectrumFrame } from '../../acquisition/sources/sourceTypes';
import { LIMITS, type BridgeRequest } from '../bridge/contract';
import { indexRunsFolder } from '../../acquisition/record/runLibrary';
import { combineInFolder } from './studyCombine';
import type { BenchSession } from './benchSession';
import { Refusal } from './refusal';
import { exportCsv, type ExportInput } from '../../acquisition/exports/runCsvExport';
import { listRecordFiles, resolveRecordName } from './runsFolder';
import { closeSource, connect, setSource, startRun, stopRun } from './runLifecycle';

export async function dispatch(s: BenchSession, req: BridgeRequest): Promise<unknown> {
  switch (req.type) {
    case 'getState': return s.snapshot();
    case 'listPorts': return { ports: await s.deps.listPorts() };
    case 'listRecords': return { records: await listRecordFiles(s.deps.dataDir) };
    case 'combineRuns': return combineInFolder(s.deps.dataDir, req);
    case 'listLibrary': {
      // Long text fields are cut to what the bridge carries; the record keeps them whole.
      const { entries, fromCache } = await indexRunsFolder(s.deps.dataDir, LIMITS.maxRecords);
      const cut = (x: string | null, n: number) => (x === null ? null : x.slice(0, n));
      return {
        fromCache,
        entries: entries.map((e) => ({
          ...e, sample: cut(e.sample, LIMITS.maxShortText), operator: cut(e.operator, LIMITS.maxShortText),
          conditions: e.conditions.slice(0, LIMITS.maxNote), notice: cut(e.notice, LIMITS.maxNote), problem: cut(e.problem, LIMITS.maxNote),
        })),
      };
    }
    case 'chooseSource':
      s.notWhileRunning('choose another source');
      await closeSource(s);
      if (req.source.kind === 'replay') s.replayPath = await resolveRecordName(s.deps.dataDir, req.source.file);
      setSource(s, req.source);
      return s.changed();
    case 'connect': await connect(s); return s.changed();
    case 'disconnect':
      s.notWhileRunning('disconnect');
      await closeSource(s);
      return s.changed();
    case 'findPeak': throw new Error('findPeak is answered outside the request queue');
    case 'takeBlank': {
      const blanksBefore = s.blanksRecorded;
      await s.source.command({ type: 'takeBlank' }, 'take the blank');
      s.state.blankTaken = true;
      // A counts device sends its blank (with the reference) as a source event, which the
      // record already holds; an absorbance device zeroes itself and only its word is left.
      if (s.blanksRecorded === blanksBefore) {
        s.record.event({ ev: 'blank', t: s.run.deviceTimeNow(), detail: 'blank taken on the instrument (it sends absorbance, so no reference counts)', noise_AU: null, drift_AUperMin: null });
      }
      return s.changed();
    }
    case 'setWavelength':
      if (s.source.isOpen) await s.source.command({ type: 'setWavelength', wavelength_nm: req.wavelength_nm }, 'set the wavelength');
      s.state.wavelength_nm = req.wavelength_nm;
      s.record.event({ ev: 'meta', t: s.run.deviceTimeNow(), run: runMetadata(s.state.sampleDetails, req.wavelength_nm) });
      return s.changed();
    case 'start': await startRun(s); return s.changed();
    case 'stop':
      if (s.state.phase !== 'running') throw new Refusal('stop: no run is going; press start first.');
      await stopRun(s, 'user', 'stopped by the user');
      return s.changed();
    case 'markEvent': {
      if (s.state.phase !== 'running') throw new Refusal('mark: events are marked during a run; start one first.');
      s.record.event({ ev: 'mark', t: s.run.deviceTimeNow(), note: req.note });
      return { at_s: s.run.runTimeNow() };
    }
    case 'mixed': {
      if (s.state.phase !== 'running') throw new Refusal('mixed: time zero is set during a run; start one first.');
      // One reading of the clock for both, so the record's time zero is the screen's to the last digit.
      const at_s = s.run.runTimeNow();
      s.run.timeZero_s = at_s;
      s.record.event({ ev: 'mixed', t: s.run.origin_s === null ? null : at_s + s.run.origin_s, wall: isoWithLocalOffset(new Date()) });
      s.rebuildAnalyzer();
      return s.changed();
    }
    case 'setSampleDetails':
      s.state.sampleDetails = { ...s.state.sampleDetails, ...req.details };
      s.record.event({ ev: 'meta', t: s.run.deviceTimeNow(), run: runMetadata(s.state.sampleDetails, s.state.wavelength_nm) });
      return s.changed();
    case 'setFitWindow':
      s.state.fitWindow = { ...req.window };
      s.rebuildAnalyzer();
      return s.changed();
    case 'setAnalysisOptions':
      s.state.analysisOptions = { ...s.state.analysisOptions, ...req.options };
      s.rebuildAnalyzer();
      return s.changed();
    case 'openRecord': {
      if (!s.deps.dialogs) throw new Refusal('open: in the browser, choose a record from the runs folder list instead.');
      s.notWhileRunning('open a record');
      const path = await s.deps.dialogs.chooseRecordToOpen();
      if (path) {
        await closeSource(s);
        s.replayPath = path;
        setSource(s, { kind: 'replay', file: path.split(/[/\\]/).pop() ?? 'record', speed: 'max' });
      }
      return { path, state: s.changed() };
    }
    case 'saveExport': {
      if (s.run.count === 0) throw new Refusal('export: there is no run to export yet; record or replay one first.');
      const name = `${s.state.runId ?? 'run'}.csv`;
      const path = s.deps.dialogs
        ? await s.deps.dialogs.chooseExportPath(name)
        : join(s.deps.dataDir, 'exports', name);
      if (path) await exportCsv(path, exportInput(s));
      return { path };
    }
  }
}

/**
 * Find the peak, first half: sends the scan command and resolves to the frame to come
 * (wrapped, so that the wait for it stays outside the request queue).
 */
export async function askForSpectrum(s: BenchSession): Promise<{ frame: Promise<{ frame: SpectrumFrame; recorded: boolean }> }> {
  if (s.state.source.kind === 'replay') throw new Refusal('find the peak: a recorded run cannot take a spectrum; that needs a live instrument.');
  const wait = s.spectra.expect(s.deps.spectrumTimeout_ms ?? 10_000);
  try {
    await s.source.command({ type: 'scan' }, 'find the peak');
  } catch (err) {
    wait.cancel();
    throw err;
  }
  return { frame: wait.frame };
}

function exportInput(s: BenchSession): ExportInput {
  return {
    runId: s.state.runId ?? 'run', demo: s.state.demo, sourceLabel: s.state.sourceLabel,
    details: s.state.sampleDetails, wavelength_nm: s.state.wavelength_nm, timeZero_s: s.run.timeZero_s ?? 0,
    readings: s.run.readings, result: s.run.resultOrNull(),
  };
}
