// Placeholder until the record command lands; replaced by its real implementation.
import { InputError } from './cliErrors';

export async function run(_argv: string[]): Promise<number> {
  throw new InputError('rateline record: not built yet in this version.');
}
