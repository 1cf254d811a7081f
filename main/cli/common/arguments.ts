/**
 * The one argument layer of every `rateline` command, built on node's `util.parseArgs`.
 *
 * Each command declares its options in a table: a `flag` takes no value (`--intercept`),
 * a `value` one value, given once (`--out run.jsonl`, `--out=run.jsonl`), and `values`
 * one or more values, repeatable, each option taking every value up to the next option
 * (`--predict 0.21 0.43`, `--value a.csv=0.01 --value b.csv=0.02`).
 *
 * parseArgs alone cannot read two things our users type: a value that starts with a
 * minus sign (`--temperature-c -5`: in strict mode it calls that "ambiguous", and out of
 * strict mode it would take `--out --seed` as an out file named "--seed"), and several
 * values after one option. So a first pass, which knows the table, joins each option to
 * its values (`--a-inf -0.02` → `--a-inf=-0.02`; `--predict 0.21 0.43` →
 * `--predict=0.21 --predict=0.43`); a negative number is a value, anything else that
 * begins with a dash is an option. parseArgs then splits the arguments into options and
 * positionals (`--name=value`, `-h`, `--` ends the options), and its tokens are checked
 * here against the table. Every mistake is one InputError naming the option and what to
 * do; no message of the parser's own reaches the user.
 */
import { parseArgs } from 'node:util';
import { InputError } from './cliErrors';

export type OptionKind = 'flag' | 'value' | 'values';
export type OptionTable = Readonly<Record<string, OptionKind>>;

/** A negative (or signed) number such as -5, -0.02, -.5 or -1e-3 is a value, not an option. */
const SIGNED_NUMBER = /^[+-](\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** Whether an argument reads as an option: it begins with a dash and is not a negative number or a lone "-". */
export function looksLikeOption(arg: string): boolean {
  return arg.startsWith('-') && arg !== '-' && !SIGNED_NUMBER.test(arg);
}

export class CommandArguments<Name extends string = string> {
  constructor(
    readonly command: string,
    /** Arguments that are not options, in order (files, mostly). */
    readonly positionals: readonly string[],
    /** `--help` or `-h` was given. */
    readonly help: boolean,
    private readonly flags: ReadonlySet<string>,
    private readonly lists: ReadonlyMap<string, readonly string[]>,
  ) {}

  flag(name: Name): boolean {
    return this.flags.has(name);
  }

  /** Whether the option was given at all. */
  given(name: Name): boolean {
    return this.flags.has(name) || this.lists.has(name);
  }

  /** The value of a `value` option, or undefined when it was not given. */
  value(name: Name): string | undefined {
    return this.lists.get(name)?.[0];
  }

  /** Every value of a `values` option, in order (empty when not given). */
  values(name: Name): string[] {
    return [...(this.lists.get(name) ?? [])];
  }

  /** A `value` option read as a number and checked; `what` says what is wanted ("a positive number of seconds"). */
  number(name: Name, check: (x: number) => boolean, what: string): number | undefined {
    const raw = this.value(name);
    return raw === undefined ? undefined : numberValue(this.command, name, raw, check, what);
  }

  /** Every value of a `values` option read as a number and checked. */
  numbers(name: Name, check: (x: number) => boolean, what: string): number[] {
    return this.values(name).map((raw) => numberValue(this.command, name, raw, check, what));
  }

  /** A `value` option that must be one of a few words; `fallback` when it was not given. */
  choice<T extends string>(name: Name, allowed: readonly T[], fallback: T): T {
    const raw = this.value(name);
    if (raw === undefined) return fallback;
    if ((allowed as readonly string[]).includes(raw)) return raw as T;
    const list = allowed.length === 2 ? `${allowed[0]} or ${allowed[1]}` : `${allowed.slice(0, -1).join(', ')} or ${allowed[allowed.length - 1]}`;
    throw new InputError(`rateline ${this.command}: --${name} ${raw} is not known; use ${list}.`);
  }
}

/** A number given on the command line (an option's value, or part of one such as X in FILE=X), checked where it is read. */
export function numberValue(command: string, name: string, raw: string, check: (x: number) => boolean, what: string): number {
  const x = Number(raw);
  if (raw.trim() === '' || !Number.isFinite(x) || !check(x)) {
    throw new InputError(`rateline ${command}: --${name} ${raw} is not ${what}; give ${what}.`);
  }
  return x;
}

/** Reads a command's arguments against its option table; throws InputError for the first mistake. */
export function parseCommandArguments<T extends OptionTable>(command: string, argv: readonly string[], table: T): CommandArguments<keyof T & string> {
  const seeHelp = `run "rateline ${command} --help" for the options`;
  const kindOf = (name: string): OptionKind | undefined => (Object.hasOwn(table, name) ? table[name] : undefined);

  // First pass: each option that takes values gets them joined on (--name=value).
  const joined: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i]!;
    if (arg === '--') { joined.push(...argv.slice(i)); break; }
    const kind = arg.startsWith('--') && !arg.includes('=') ? kindOf(arg.slice(2)) : undefined;
    if (kind !== 'value' && kind !== 'values') { joined.push(arg); continue; }
    const values: string[] = [];
    while (i + 1 < argv.length && argv[i + 1] !== '--' && !looksLikeOption(argv[i + 1]!) && (kind === 'values' || values.length === 0)) values.push(argv[++i]!);
    if (values.length === 0) {
      const next = argv[i + 1];
      const dash = next !== undefined && next !== '--' ? ` (to give a value that begins with a dash, write ${arg}=${next})` : '';
      throw new InputError(`rateline ${command}: ${arg} needs a value${dash}; ${seeHelp}.`);
    }
    for (const v of values) joined.push(`${arg}=${v}`);
  }

  const options: Record<string, { type: 'string' | 'boolean'; multiple?: boolean; short?: string }> = {};
  for (const [name, kind] of Object.entries(table)) options[name] = kind === 'flag' ? { type: 'boolean' } : { type: 'string', multiple: true };
  options.help = { type: 'boolean', short: 'h' };
  // Not strict: unknown options come back as tokens, so that the sentence can name them.
  const { tokens, positionals } = parseArgs({ args: joined, options, strict: false, allowPositionals: true, tokens: true });

  let help = false;
  const flags = new Set<string>();
  const lists = new Map<string, string[]>();
  for (const t of tokens) {
    if (t.kind !== 'option') continue;
    if (t.name === 'help' || t.rawName === '-h') { help = true; continue; }
    const kind = kindOf(t.name);
    if (!kind || !t.rawName.startsWith('--')) throw new InputError(`rateline ${command}: unknown option ${t.rawName}; ${seeHelp}.`);
    if (kind === 'flag') {
      if (t.value !== undefined) throw new InputError(`rateline ${command}: ${t.rawName} takes no value; write it alone.`);
      flags.add(t.name);
      continue;
    }
    if (t.value === undefined || t.value === '') throw new InputError(`rateline ${command}: ${t.rawName} needs a value; ${seeHelp}.`);
    const list = lists.get(t.name) ?? [];
    if (kind === 'value' && list.length > 0) throw new InputError(`rateline ${command}: ${t.rawName} is given twice; give it once.`);
    list.push(t.value);
    lists.set(t.name, list);
  }
  return new CommandArguments(command, positionals, help, flags, lists);
}
