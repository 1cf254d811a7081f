/**
 * The one argument layer, through the real `rateline` command: negative numbers as
 * option values, options that take several values, and every argument mistake of every
 * command answered by one sentence naming the option, exit 2.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { copyFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ROOT, ratelineIn, type CommandRun } from './ratelineCli';
import { readRunRecord } from '../../acquisition/record/journalReader';

const { dir, rateline } = ratelineIn('rateline-arguments-');

/** One line on stderr, naming the command, exit 2, and nothing of the parser's own wording. */
function refused(r: CommandRun, pattern: RegExp): void {
  expect(r.code, r.err).toBe(2);
  const text = r.err.trimEnd();
  expect(text.split('\n'), text).toHaveLength(1);
  expect(text).toMatch(pattern);
  expect(text).toMatch(/[.)]$/);
  expect(text).not.toMatch(/ambiguous|ERR_PARSE_ARGS|Option '|TypeError|\bat .*\.ts:\d+/);
}

beforeAll(() => {
  expect(rateline('simulate', '--out', 'demo.csv').code).toBe(0);
  copyFileSync(join(ROOT, 'test', 'fixtures', 'demo-standards.csv'), join(dir, 'standards.csv'));
}, 60_000);

describe('negative numbers and lists as option values', () => {
  it('analyze --a-inf -0.02 holds A∞ at −0.02, the same as --a-inf=-0.02', () => {
    const spaced = rateline('analyze', 'demo.csv', '--a-inf', '-0.02', '--format', 'json');
    const joined = rateline('analyze', 'demo.csv', '--a-inf=-0.02', '--format', 'json');
    expect(spaced.code, spaced.err).toBe(0);
    expect(spaced.out).toBe(joined.out);
    const first = JSON.parse(spaced.out).models.first;
    expect(first).toMatchObject({ aInf: -0.02, aInfFixed: true });
    // control: without the option A∞ is fitted, near the demo's 0.005 rather than at −0.02
    const fitted = JSON.parse(rateline('analyze', 'demo.csv', '--format', 'json').out).models.first.aInf;
    expect(Math.abs(fitted - -0.02)).toBeGreaterThan(0.01);
  });

  it('record --temperature-c -5 keeps −5 °C in the header', () => {
    const r = rateline('record', '--simulate', '--speed', 'max', '--max-seconds', '5', '--temperature-c', '-5', '--out', 'cold.jsonl', '--progress', 'json');
    expect(r.code, r.err).toBe(0);
    expect(readRunRecord(join(dir, 'cold.jsonl')).header.run.temperature_C).toBe(-5);
  });

  it('calibrate --predict takes every value up to the next option, negative ones too', () => {
    const r = rateline('calibrate', 'standards.csv', '--predict', '0.21', '0.43', '-0.01', '--format', 'json');
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out).predictions.map((p: { absorbance: number }) => p.absorbance)).toEqual([0.21, 0.43, -0.01]);
  });

  it('emulate reads --counts as a flag among the other options', () => {
    // --counts with --plain is refused by emulate itself: proof that the flag was read.
    refused(rateline('emulate', '--port', join(dir, 'no-port'), '--counts', '--plain', 'time=1,time-unit=s,signal=2,signal-unit=A,delimiter=tab'), /^rateline emulate: --counts and --plain do not go together; /);
  });
});

describe('every argument mistake is one sentence and exit 2', () => {
  const COMMANDS = ['analyze', 'simulate', 'calibrate', 'combine', 'emulate', 'record', 'export', 'serve', 'start'];

  it('an unknown option, for every command', () => {
    for (const c of COMMANDS) refused(rateline(c, '--colour', 'blue'), new RegExp(`^rateline ${c}: unknown option --colour; run "rateline ${c} --help" for the options\\.$`));
  });

  it('an option without its value, and a value that begins with a dash', () => {
    refused(rateline('analyze', 'demo.csv', '--from'), /^rateline analyze: --from needs a value; /);
    refused(rateline('simulate', '--out'), /^rateline simulate: --out needs a value; /);
    refused(rateline('record', '--simulate', '--note', '-careful', '--out', 'x.jsonl'), /^rateline record: --note needs a value \(to give a value that begins with a dash, write --note=-careful\); /);
    refused(rateline('serve', '--port'), /^rateline serve: --port needs a value; /);
    refused(rateline('combine', 'demo.csv', '--by'), /^rateline combine: --by needs a value; /);
    refused(rateline('export', 'demo.csv', '--to', 'csv', '--out'), /^rateline export: --out needs a value; /);
  });

  it('a flag given a value, an option given twice, a number that is not one', () => {
    refused(rateline('calibrate', 'standards.csv', '--intercept=yes'), /^rateline calibrate: --intercept takes no value; write it alone\.$/);
    refused(rateline('emulate', '--counts=1'), /^rateline emulate: --counts takes no value; /);
    refused(rateline('analyze', 'demo.csv', '--from', '1', '--from', '2'), /^rateline analyze: --from is given twice; give it once\.$/);
    refused(rateline('record', '--simulate', '--temperature-c', 'cold', '--out', 'x.jsonl'), /^rateline record: --temperature-c cold is not a temperature in °C from -100 to 500; give a temperature in °C from -100 to 500\.$/);
    refused(rateline('start', '--speed', '-5'), /^rateline start: --speed -5 is not a speed from 0\.1 to 10000; /);
    refused(rateline('analyze', 'demo.csv', '--format', 'xml'), /^rateline analyze: --format xml is not known; use text or json\.$/);
  });

  it('keeps --help working for every command', () => {
    for (const c of COMMANDS) {
      const r = rateline(c, '--help');
      expect(r.code, `${c}: ${r.err}`).toBe(0);
      expect(r.out).toMatch(new RegExp(`usage: rateline ${c}`));
    }
  });

  it('the old hand-rolled parsers are gone: one module reads every command line', () => {
    for (const c of COMMANDS) {
      const src = readFileSync(join(ROOT, 'main', 'cli', 'commands', `${c}.ts`), 'utf8');
      expect(src, c).not.toMatch(/\bargv\[|argv\.(filter|includes|indexOf|slice)|from 'node:util'/);
    }
  });
}, 120_000);
