/**
 * The real parts behind the bench service's ports: the acquisition sources, the
 * streaming analyzer, the journal and the serial port list. Both hosts build their
 * service with `createBenchService`, so they differ only in how they carry the bridge.
 */
import { homedir } from 'node:os';
import { join, resolve } from 'node:path';
import { readRunRecord } from '../../acquisition/record/journalReader';
import { ReplaySource, timelineFromRecord } from '../../acquisition/sources/replaySource';
import { SerialSource } from '../../acquisition/sources/serialSource';
import { defaultInstrumentSettings } from '../../acquisition/sources/simulatedInstrument';
import { SimulatedSource } from '../../acquisition/sources/simulatedSource';
import type { ReadingSource } from '../../acquisition/sources/sourceTypes';
import { RunAnalyzer } from '../../kinetics/runAnalyzer';
import { DEMO_RUN } from '../../kinetics/reactionModel';
import type { SourceChoice } from '../bridge/contract';
import { BenchService } from '../benchService';
import type { BenchDialogs, PortListing } from './benchDependencies';
import { openJournalSink } from './journalSink';
import { Refusal } from './refusal';

/** The simulated demo run ends by itself after this long (about nine half-lives), so a forgotten demo stops. */
export const DEMO_DURATION_S = 1800;
export const DEFAULT_SPEED = 20;

/** The runs folder: --data-dir, else RATELINE_DATA_DIR, else ~/Rateline/runs. */
export function defaultDataDir(given?: string | null): string {
  if (given) return resolve(given);
  if (process.env.RATELINE_DATA_DIR) return resolve(process.env.RATELINE_DATA_DIR);
  return join(homedir(), 'Rateline', 'runs');
}

export async function createSource(choice: SourceChoice, replayPath: string | null): Promise<ReadingSource> {
  switch (choice.kind) {
    case 'simulated':
      // The demo scenario of DEMO.md: brilliant blue FCF bleached by hypochlorite (invented demo data).
      return new SimulatedSource({
        instrument: defaultInstrumentSettings(
          { order: DEMO_RUN.order, k: DEMO_RUN.k, a0: DEMO_RUN.a0, aInf: DEMO_RUN.aInf },
          { seed: choice.seed ?? DEMO_RUN.seed, sigmaT: DEMO_RUN.sigmaT, interval_s: DEMO_RUN.dt_s },
        ),
        speed: choice.speed ?? DEFAULT_SPEED,
        duration_s: DEMO_DURATION_S,
      });
    case 'replay': {
      if (!replayPath) throw new Refusal('replay: no record chosen; pick one from the runs folder first.');
      let record;
      try {
        record = readRunRecord(replayPath);
      } catch (err) {
        throw new Refusal(err instanceof Error ? err.message.split('\n')[0]! : String(err));
      }
      // Small batches at full speed keep the host answering the screen between them.
      return new ReplaySource(timelineFromRecord(record), { speed: choice.speed ?? 'max', label: choice.file, batch: 512 });
    }
    case 'serial':
      return new SerialSource({ path: choice.path, baudRate: choice.baud });
  }
}

export async function listSerialPorts(): Promise<PortListing[]> {
  try {
    const { SerialPort } = await import('serialport');
    const ports = await SerialPort.list();
    return ports.map((p) => ({ path: p.path, manufacturer: p.manufacturer ?? null, serialNumber: p.serialNumber ?? null }));
  } catch (err) {
    throw new Refusal(`ports: the serial ports could not be listed (${err instanceof Error ? err.message.split('\n')[0] : String(err)}).`);
  }
}

export interface BenchServiceOptions {
  host: 'electron' | 'web';
  dataDir?: string | null;
  speed?: number;
  dialogs?: BenchDialogs;
}

export function createBenchService(o: BenchServiceOptions): BenchService {
  return new BenchService({
    host: o.host,
    dataDir: defaultDataDir(o.dataDir),
    defaultSpeed: o.speed ?? DEFAULT_SPEED,
    createSource,
    createAnalyzer: (options) => new RunAnalyzer(options),
    openRecord: (opening) => openJournalSink(opening),
    listPorts: listSerialPorts,
    ...(o.dialogs ? { dialogs: o.dialogs } : {}),
  });
}
