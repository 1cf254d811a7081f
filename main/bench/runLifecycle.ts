/**
 * The bench's source and run from choice to close: a source is chosen, connected and
 * closed; a run opens its record, resets its clock and analyzer and starts the source;
 * it stops on request, when the source ends, or when the record cannot be written.
 */
import { join } from 'node:path';
import type { SourceChoice } from '../bridge/contract';
import type { BenchSession, BenchStopReason } from './benchSession';
import { Refusal, oneLine } from './refusal';
import { newRunId, recordFileName, sourceLabel } from './runNaming';
import { onRecordedEvent, onSourceEvent } from './sourceEvents';

export function setSource(s: BenchSession, choice: SourceChoice): void {
  if (choice.kind !== 'replay') s.replayPath = null;
  s.state.source = choice.kind === 'simulated' && choice.speed === undefined ? { ...choice, speed: s.deps.defaultSpeed } : choice;
  s.state.sourceLabel = sourceLabel(s.state.source);
  s.state.demo = choice.kind === 'simulated';
  s.state.phase = 'idle';
  s.state.blankTaken = false;
}

export async function connect(s: BenchSession): Promise<void> {
  if (s.source.isOpen) return;
  s.state.phase = 'connecting';
  s.changed();
  try {
    await openSource(s);
    s.state.phase = 'connected';
  } catch (err) {
    s.state.phase = 'error';
    throw new Refusal(`connect: ${oneLine(err)}`);
  }
}

/** Opens the chosen source; on failure nothing is left open and the status says why. */
async function openSource(s: BenchSession): Promise<void> {
  try {
    await s.source.open(
      () => s.deps.createSource(s.state.source, s.replayPath),
      (e) => onSourceEvent(s, e),
      // A replayed record's own events: its time zero and its marks carry over into the new record.
      (e) => onRecordedEvent(s, e),
    );
  } catch (err) {
    if (s.state.phase !== 'running') s.state.phase = 'idle';
    s.state.sourceStatus = { kind: 'error', message: oneLine(err) };
    throw err;
  }
}

export async function closeSource(s: BenchSession): Promise<void> {
  s.spectra.failAll('find the peak: the instrument was closed before it sent its spectrum; connect and try again.');
  await s.source.close();
  if (s.state.phase !== 'running') s.state.phase = 'idle';
}

export async function startRun(s: BenchSession): Promise<void> {
  if (s.state.phase === 'running') throw new Refusal('start: a run is already going; stop it first.');
  // The simulated instrument and a replay start afresh for every run: the simulated
  // reaction begins at the instrument's time zero, and a record plays from its start.
  const fresh = s.state.source.kind !== 'serial';
  if (fresh) await closeSource(s);
  else await connect(s);
  const started = new Date();
  const runId = newRunId(started);
  s.outbox.reset();
  // The simulated instrument starts its reaction at its device time 0 (the header's
  // reactionStart_s says so) until Mixed is pressed; other sources' run clock starts at
  // their first reading, and time zero is their first reading until Mixed is pressed.
  const simulated = s.state.source.kind === 'simulated';
  s.run.reset(simulated ? 0 : null, simulated ? 0 : null);
  s.lateStartChecked = s.state.source.kind !== 'serial';
  s.state.runId = runId;
  s.state.fitWindow = { from_s: null, to_s: null };
  const path = join(s.deps.dataDir, recordFileName(runId));
  try {
    s.record.open(await s.deps.openRecord({
      path, started, details: s.state.sampleDetails, wavelength_nm: s.state.wavelength_nm,
      source: s.state.source, demo: s.state.demo,
    }));
  } catch (err) {
    s.state.runId = null;
    throw new Refusal(`start: the run record could not be created (${oneLine(err)}); check the runs folder ${s.deps.dataDir}.`);
  }
  s.state.recordPath = path;
  s.pendingMixedDevice_s = null;
  s.rebuildAnalyzer();
  s.state.phase = 'running';
  s.emit({ type: 'record', path, status: 'open' });
  // A fresh source opens only now, with the record ready, so its first reading is kept.
  if (fresh) {
    try {
      await openSource(s);
    } catch (err) {
      await stopRun(s, 'error', oneLine(err));
      throw new Refusal(`start: ${oneLine(err)}`);
    }
    // A replayed record keeps its time zero, and is fitted as its run was stopped: its window, target and precision.
    s.pendingMixedDevice_s = s.source.recorded?.recordedTimeZero_s ?? null;
    const settings = s.source.recorded?.recordedFitSettings;
    if (settings) {
      s.state.fitWindow = { from_s: settings.from_s, to_s: settings.to_s };
      s.state.analysisOptions = { ...s.state.analysisOptions, targetHalfLives: settings.targetHalfLives, precision: settings.precision };
      s.rebuildAnalyzer();
    }
  }
  try {
    await s.source.command({ type: 'start' }, 'start');
  } catch (err) {
    await stopRun(s, 'error', oneLine(err));
    throw err;
  }
}

export async function stopRun(s: BenchSession, reason: BenchStopReason, detail: string): Promise<void> {
  if (s.state.phase !== 'running') return;
  s.state.phase = 'stopped';
  if (reason !== 'sourceEnded') await s.source.commandQuietly({ type: 'stop' });
  // The final refit over every reading (the screen's last result, sent by the drain
  // below), and the settings it was made with, so that `rateline analyze` of the record
  // gives the numbers the screen shows at the end.
  s.run.flushOrNull();
  s.outbox.drain();
  if (s.state.runId) {
    const w = s.state.fitWindow;
    s.record.event({
      ev: 'fitSettings', t: s.run.deviceTimeNow(), from_s: w.from_s, to_s: w.to_s,
      targetHalfLives: s.state.analysisOptions.targetHalfLives, precision: s.state.analysisOptions.precision,
    });
  }
  const path = await s.record.close({ reason, detail, rejected: { ...s.state.rejected } }, (m) => s.warn(m));
  if (path) s.emit({ type: 'record', path, status: 'closed' });
  // The simulated instrument and a replay are made afresh for each run: nothing to keep open.
  if (s.state.source.kind !== 'serial') {
    await closeSource(s);
    s.state.phase = 'stopped';
  }
}
