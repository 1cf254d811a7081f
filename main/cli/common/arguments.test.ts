import { describe, expect, it } from 'vitest';
import { parseArgs } from 'node:util';
import { looksLikeOption, parseCommandArguments } from './arguments';
import { InputError } from './cliErrors';

const TABLE = { out: 'value', 'a-inf': 'value', predict: 'values', intercept: 'flag', value: 'values' } as const;
const parse = (...argv: string[]) => parseCommandArguments('try', argv, TABLE);

function refusal(argv: string[]): string {
  try {
    parse(...argv);
  } catch (err) {
    expect(err).toBeInstanceOf(InputError);
    return (err as Error).message;
  }
  throw new Error(`accepted: ${argv.join(' ')}`);
}

describe('the argument layer', () => {
  it('reads a negative number as a value, where parseArgs alone refuses it', () => {
    // The control: node's parseArgs in strict mode calls this ambiguous (the message users saw).
    expect(() => parseArgs({ args: ['--a-inf', '-0.02'], options: { 'a-inf': { type: 'string' } }, strict: true })).toThrow(/ambiguous/);
    expect(parse('--a-inf', '-0.02').number('a-inf', () => true, 'a number')).toBe(-0.02);
    expect(parse('--a-inf=-0.02').value('a-inf')).toBe('-0.02');
    expect(parse('--a-inf', '-.5').value('a-inf')).toBe('-.5');
    expect(parse('--a-inf', '-1e-3').value('a-inf')).toBe('-1e-3');
  });

  it('takes every value up to the next option for a list option, and repeats', () => {
    const a = parse('f.csv', '--predict', '0.21', '-0.01', '0.43', '--intercept', '--value', 'a=1', 'b=2', '--value', 'c=3');
    expect(a.positionals).toEqual(['f.csv']);
    expect(a.values('predict')).toEqual(['0.21', '-0.01', '0.43']);
    expect(a.values('value')).toEqual(['a=1', 'b=2', 'c=3']);
    expect(a.flag('intercept')).toBe(true);
    expect(a.given('out')).toBe(false);
  });

  it('takes one value for a single option and leaves the rest as positionals; -- ends the options', () => {
    const a = parse('--out', 'x.csv', 'y.csv', '--', '--intercept');
    expect(a.value('out')).toBe('x.csv');
    expect(a.positionals).toEqual(['y.csv', '--intercept']);
    expect(a.flag('intercept')).toBe(false);
    expect(parse('-h').help).toBe(true);
  });

  it('refuses every mistake in one sentence naming the option', () => {
    expect(refusal(['--colour', 'blue'])).toBe('rateline try: unknown option --colour; run "rateline try --help" for the options.');
    expect(refusal(['-x'])).toBe('rateline try: unknown option -x; run "rateline try --help" for the options.');
    expect(refusal(['--out'])).toBe('rateline try: --out needs a value; run "rateline try --help" for the options.');
    expect(refusal(['--out='])).toBe('rateline try: --out needs a value; run "rateline try --help" for the options.');
    expect(refusal(['--out', '--intercept'])).toMatch(/^rateline try: --out needs a value \(to give a value that begins with a dash, write --out=--intercept\); /);
    expect(refusal(['--predict', '--out', 'x'])).toMatch(/^rateline try: --predict needs a value/);
    expect(refusal(['--intercept=yes'])).toBe('rateline try: --intercept takes no value; write it alone.');
    expect(refusal(['--out', 'a', '--out', 'b'])).toBe('rateline try: --out is given twice; give it once.');
    expect(() => parse('--a-inf', 'x').number('a-inf', () => true, 'an absorbance')).toThrow('rateline try: --a-inf x is not an absorbance; give an absorbance.');
    expect(() => parse('--out', 'tsv').choice('out', ['text', 'json'], 'text')).toThrow('rateline try: --out tsv is not known; use text or json.');
  });

  it('tells a negative number from an option', () => {
    for (const v of ['-5', '-0.02', '-.5', '-1e-3', '+2', '-']) expect(looksLikeOption(v), v).toBe(false);
    for (const v of ['--out', '-h', '-x', '-e5', '--5']) expect(looksLikeOption(v), v).toBe(true);
  });
});
