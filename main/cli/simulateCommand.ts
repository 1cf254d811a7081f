// Placeholder until the simulate command lands; replaced by its real implementation.
import { InputError } from './cliErrors';

export async function run(_argv: string[]): Promise<number> {
  throw new InputError('rateline simulate: not built yet in this version.');
}
