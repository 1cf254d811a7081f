/**
 * The program's name and version as written into every run record: the version is the
 * package's own, so a record says which release measured it.
 */
import pkg from '../package.json';

export const PROGRAM: { readonly name: string; readonly version: string } = Object.freeze({
  name: 'rateline',
  version: typeof pkg.version === 'string' ? pkg.version : 'unknown',
});
