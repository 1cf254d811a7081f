/** Opening the serial instrument for `rateline record`. */
import type { ReadingSource } from '../../acquisition/sourceTypes';
import { InputError } from './cliErrors';

export async function openSerialForRecord(port: string, _baud: number): Promise<ReadingSource> {
  throw new InputError(`rateline record: recording from the serial port ${port} is not in this build yet; use --simulate.`);
}
