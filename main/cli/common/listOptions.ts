/**
 * Option parsing for commands that need more than `--name value` once: switches that
 * take no value (`--intercept`), options that may be repeated (`--value a.csv=0.01
 * --value b.csv=0.02`) and options that take every value up to the next option
 * (`--predict 0.21 0.43`). Every mistake is one InputError naming the option.
 */
import { InputError } from './cliErrors';

export interface OptionSpec {
  /** 'switch' takes no value; 'one' one value; 'many' one or more, repeatable. */
  kind: 'switch' | 'one' | 'many';
}

export interface ListArgs {
  positional: string[];
  switches: Set<string>;
  single: Map<string, string>;
  lists: Map<string, string[]>;
  help: boolean;
}

/** A value that begins like an option; a negative number is still a value. */
const isOption = (a: string): boolean => a.startsWith('--') || (a.startsWith('-') && a.length > 1 && !/^-[\d.]/.test(a));

export function parseListArgs(command: string, argv: string[], spec: Readonly<Record<string, OptionSpec>>): ListArgs {
  const out: ListArgs = { positional: [], switches: new Set(), single: new Map(), lists: new Map(), help: false };
  const help = `run "rateline ${command} --help" for the options`;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!;
    if (a === '--help' || a === '-h') { out.help = true; continue; }
    if (!a.startsWith('--')) { out.positional.push(a); continue; }
    const eq = a.indexOf('=');
    const name = eq > 0 ? a.slice(2, eq) : a.slice(2);
    const s = spec[name];
    if (!s) throw new InputError(`rateline ${command}: unknown option --${name}; ${help}.`);
    if (s.kind === 'switch') {
      if (eq > 0) throw new InputError(`rateline ${command}: --${name} takes no value; write it alone.`);
      out.switches.add(name);
      continue;
    }
    const values: string[] = [];
    if (eq > 0) values.push(a.slice(eq + 1));
    else if (s.kind === 'one') {
      if (i + 1 < argv.length && !isOption(argv[i + 1]!)) values.push(argv[++i]!);
    } else {
      while (i + 1 < argv.length && !isOption(argv[i + 1]!)) values.push(argv[++i]!);
    }
    if (values.length === 0 || values.some((v) => v === '')) throw new InputError(`rateline ${command}: --${name} needs a value; ${help}.`);
    if (s.kind === 'one') {
      if (out.single.has(name)) throw new InputError(`rateline ${command}: --${name} is given twice; give it once.`);
      out.single.set(name, values[0]!);
    } else {
      out.lists.set(name, [...(out.lists.get(name) ?? []), ...values]);
    }
  }
  return out;
}

/** A number option, checked where it is read. */
export function numberValue(command: string, name: string, raw: string, check: (x: number) => boolean, what: string): number {
  const x = Number(raw);
  if (raw.trim() === '' || !Number.isFinite(x) || !check(x)) {
    throw new InputError(`rateline ${command}: --${name} ${raw} is not ${what}; give ${what}.`);
  }
  return x;
}
