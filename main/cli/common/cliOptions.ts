/**
 * Option parsing shared by the analyze and simulate commands: `--name value` or
 * `--name=value`, numbers checked where they are read, every mistake one InputError.
 */
import { InputError } from './cliErrors';

export interface ParsedArgs {
  positional: string[];
  options: Map<string, string>;
  help: boolean;
}

export function parseArgs(command: string, argv: string[], known: readonly string[]): ParsedArgs {
  const positional: string[] = [];
  const options = new Map<string, string>();
  let help = false;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === '--help' || a === '-h') { help = true; continue; }
    if (!a.startsWith('--')) { positional.push(a); continue; }
    const eq = a.indexOf('=');
    const name = eq > 0 ? a.slice(2, eq) : a.slice(2);
    if (!known.includes(name)) {
      throw new InputError(`rateline ${command}: unknown option --${name}; run "rateline ${command} --help" for the options.`);
    }
    let value: string | undefined = eq > 0 ? a.slice(eq + 1) : argv[i + 1];
    if (eq < 0) i++;
    if (value === undefined || (eq < 0 && value.startsWith('--'))) {
      throw new InputError(`rateline ${command}: --${name} needs a value; run "rateline ${command} --help" for the options.`);
    }
    options.set(name, value);
  }
  return { positional, options, help };
}

export function numberOption(command: string, args: ParsedArgs, name: string, check: (x: number) => boolean, what: string): number | undefined {
  const raw = args.options.get(name);
  if (raw === undefined) return undefined;
  const x = Number(raw);
  if (raw.trim() === '' || !Number.isFinite(x) || !check(x)) {
    throw new InputError(`rateline ${command}: --${name} ${raw} is not ${what}; give ${what}.`);
  }
  return x;
}
