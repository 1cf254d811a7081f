/**
 * Opening the serial instrument for `rateline record`. The serialport module is loaded
 * only here, so that recording from the simulated instrument never needs it.
 */
import type { ReadingSource } from '../../../acquisition/sources/sourceTypes';
import type { DelimitedConfig } from '../../../acquisition/plain/delimitedReader';

export interface PlainReading {
  /** How the instrument's plain delimited lines are read. */
  delimited: DelimitedConfig;
  /** Seconds between its lines, for the stale-feed watchdog. */
  expectedInterval_s: number;
}

export async function openSerialForRecord(port: string, baud: number, plain?: PlainReading): Promise<ReadingSource> {
  const { SerialSource } = await import('../../../acquisition/sources/serialSource');
  // Opening (and a clear message listing the ports when it fails) is the recorder's start.
  return new SerialSource({ path: port, baudRate: baud, ...(plain ? { delimited: plain.delimited, expectedInterval_s: plain.expectedInterval_s } : {}) });
}
