/**
 * Opening the serial instrument for `rateline record`. The serialport module is loaded
 * only here, so that recording from the simulated instrument never needs it.
 */
import type { ReadingSource } from '../../acquisition/sourceTypes';

export async function openSerialForRecord(port: string, baud: number): Promise<ReadingSource> {
  const { SerialSource } = await import('../../acquisition/serialSource');
  // Opening (and a clear message listing the ports when it fails) is the recorder's start.
  return new SerialSource({ path: port, baudRate: baud });
}
