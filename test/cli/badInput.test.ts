/**
 * Every bad input gets a sentence, through the real `rateline` command: files that are
 * well-formed but make no sense as a run (absurd values, times that do not advance or lie
 * before mixing, a flat signal, a swapped blank, times of 1e300 s), files saved in other
 * encodings, text that would drive the terminal, and careless options. Each is one line
 * on stderr that names what and where and says what to do, exit 2, nothing on stdout,
 * and no stack trace; and each has its control: the good file or option right beside it
 * is answered.
 */
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { ratelineIn, type CommandRun } from './ratelineCli';

const { dir, rateline } = ratelineIn('rateline-bad-input-');
const file = (name: string, text: string | Buffer): string => {
  writeFileSync(join(dir, name), text);
  return name;
};
const decay = (t: number): number => 0.05 + 0.6 * Math.exp(-0.01 * t);
/** A run CSV of `n` readings from the rows the function gives. */
const csv = (n: number, row: (i: number) => [number | string, number | string]): string =>
  'time_s,absorbance\n' + Array.from({ length: n }, (_, i) => row(i).join(',')).join('\n') + '\n';

/** One line on stderr, exit 2, nothing on stdout, no stack trace, no raw control character. */
function refused(r: CommandRun, pattern: RegExp): string {
  expect(r.code, r.err + r.out).toBe(2);
  expect(r.out).toBe('');
  const text = r.err.trimEnd();
  expect(text.split('\n'), text).toHaveLength(1);
  expect(text).toMatch(pattern);
  expect(text).toMatch(/\.$/);
  expect(text).not.toMatch(/\bat .*\.(ts|js):\d+|internal fault|TypeError/);
  expect(text).not.toMatch(/[\u0000-\u0008\u000b-\u001f\u007f-\u009f\u202a-\u202e]/);
  return text;
}

beforeAll(() => {
  file('good.csv', csv(300, (i) => [i, decay(i).toFixed(5)]));
}, 60_000);

describe('a run that makes no sense is refused in one sentence, not fitted', () => {
  it('the control: a good run is fitted, exit 0', () => {
    const r = rateline('analyze', 'good.csv', '--format', 'json');
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out).models.first.k).toBeCloseTo(0.01, 4);
  });

  it('±1e300 absorbances: outside what a photometer reads, named by line', () => {
    refused(rateline('analyze', file('huge.csv', csv(50, (i) => [i, i % 2 ? '1e300' : '-1e300']))),
      /^huge\.csv line 2: absorbance -1e\+300 AU is outside what a photometer can read \(-1 to 10 AU\); check that the column holds absorbance \(not %T or counts\), or fix or remove the line\.$/);
    refused(rateline('analyze', file('inf.csv', csv(50, (i) => [i, i === 7 ? '1e999' : decay(i)]))),
      /^inf\.csv line 9: "1e999" in column absorbance is too large to be a number a computer holds; fix or remove the line\.$/);
  });

  it('every time before time zero', () => {
    refused(rateline('analyze', file('negative.csv', csv(50, (i) => [i - 100, decay(i)]))),
      /^negative\.csv: every reading is before time zero \(from -100 s to -51 s\), but times are seconds after mixing; shift them so that mixing is at 0 s\.$/);
  });

  it('the same checks when runs are combined', () => {
    expect(rateline('simulate', '--out', 'combine-a.csv').code).toBe(0);
    const before = file('before-mixing.csv', csv(50, (i) => [i - 100, decay(i)]));
    refused(rateline('combine', 'combine-a.csv', before, '--by', 'concentration', '--value', 'combine-a.csv=0.01', `${before}=0.02`),
      /^before-mixing\.csv: every reading is before time zero/);
  });

  it('every time the same', () => {
    refused(rateline('analyze', file('sametime.csv', csv(50, (i) => [5, decay(i)]))),
      /^sametime\.csv: every reading is at the same time \(5 s\), so the time column does not advance; check that it holds each reading's time in seconds\.$/);
  });

  it('times of 1e300 s, which gave "k ±2.9e295%"', () => {
    refused(rateline('analyze', file('hugetimes.csv', csv(50, (i) => [`${i + 1}e300`, decay(i)]))),
      /^hugetimes\.csv: the readings span 4\.90e\+301 s, longer than any run \(1e\+8 s is about three years\); check the time column and that it is in seconds\.$/);
  });

  it('every absorbance below −0.05 AU: the blank and the sample swapped', () => {
    refused(rateline('analyze', file('swapped.csv', csv(50, (i) => [i, -decay(i)]))),
      /^swapped\.csv: every absorbance is below -0\.05 AU \(-0\.650 to -0\.4\d\d AU\), so the blank absorbed more than the sample, as when the blank and the sample cuvettes are swapped; take the blank again/);
  });

  it('a flat signal: nothing seems to be reacting, in the analyzer\'s words', () => {
    // The demo run with a rate constant a million times too small: noise about a constant.
    expect(rateline('simulate', '--k', '1e-9', '--out', 'flat.csv').code).toBe(0);
    refused(rateline('analyze', 'flat.csv'), /^flat\.csv: nothing seems to be reacting: the signal has changed by .* over 900 s, less than 3× the noise .*; check the mixing and the wavelength\.$/);
    refused(rateline('analyze', 'flat.csv', '--format', 'json'), /^flat\.csv: nothing seems to be reacting/);
    // A signal exactly constant: no fit at all, said as such (or as nothing reacting).
    refused(rateline('analyze', file('constant.csv', csv(50, (i) => [i, 0.5]))), /^constant\.csv: nothing seems to be reacting/);
  });

  it('a comma-separated file with decimal commas is refused, not read as absorbance 0', () => {
    refused(rateline('analyze', file('commas.csv', 'time_s,absorbance\n' + Array.from({ length: 50 }, (_, i) => `${i},${decay(i).toFixed(3).replace('.', ',')}`).join('\n') + '\n')),
      /^commas\.csv line 2: 0,0,650 has 3 fields where the header names 2 columns, as when numbers with a decimal comma are separated by commas; use a decimal point, or separate the columns with semicolons\.$/);
  });
});

describe('files as editors and spreadsheets save them', () => {
  const good = (): string => readFileSync(join(dir, 'good.csv'), 'utf8');
  const kOf = (r: CommandRun): number => {
    expect(r.code, r.err).toBe(0);
    return JSON.parse(r.out).models.first.k;
  };

  it('reads UTF-16 (either byte order, with or without its mark) and UTF-8 with a mark as the same run', () => {
    const k = kOf(rateline('analyze', 'good.csv', '--format', 'json'));
    const be = Buffer.from('\ufeff' + good(), 'utf16le');
    be.swap16();
    for (const [name, bytes] of [
      ['utf16le.csv', Buffer.from('\ufeff' + good(), 'utf16le')],
      ['utf16be.csv', be],
      ['utf16-nomark.csv', Buffer.from(good(), 'utf16le')],
      ['utf8-bom.csv', Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(good())])],
    ] as const) {
      expect(kOf(rateline('analyze', file(name, bytes), '--format', 'json')), name).toBe(k);
    }
  });

  it('reads a run record an editor saved with a byte-order mark', () => {
    expect(rateline('record', '--simulate', '--speed', 'max', '--max-seconds', '300', '--out', 'rec.jsonl', '--progress-ms', '60000').code).toBe(0);
    const plain = kOf(rateline('analyze', 'rec.jsonl', '--format', 'json'));
    file('rec-bom.jsonl', Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), readFileSync(join(dir, 'rec.jsonl'))]));
    const r = rateline('analyze', 'rec-bom.jsonl', '--format', 'json');
    expect(kOf(r)).toBe(plain);
    expect(r.err).toBe(''); // a clean record, not a recovered one
    // and one renamed to .txt is still found to be a record
    file('rec-bom.txt', readFileSync(join(dir, 'rec-bom.jsonl')));
    expect(kOf(rateline('analyze', 'rec-bom.txt', '--format', 'json'))).toBe(plain);
  }, 60_000);

  it('refuses a binary file (a spreadsheet, a program) in one sentence', () => {
    const zip = Buffer.concat([Buffer.from('PK\u0003\u0004', 'latin1'), Buffer.alloc(30), Buffer.from('xl/workbook.xml')]);
    refused(rateline('analyze', file('run.xlsx', zip)), /^run\.xlsx: is not a text file \(it holds binary data, as a spreadsheet's \.xlsx or an instrument's own format does\); save the run as CSV text and give that file\.$/);
    refused(rateline('calibrate', 'run.xlsx'), /^run\.xlsx: is not a text file/);
  });
});

describe('text from a file or a person never drives the terminal', () => {
  it('shows escape sequences and direction overrides in a file as escapes, in errors and in names', () => {
    const evil = file('esc.csv', 'time_s,absorbance\n1,0.5\n2,\u001b[31mred\u001b]0;pwned\u0007\n');
    const text = refused(rateline('analyze', evil), /^esc\.csv line 3: "\\u001b\[31mred\\u001b\]0;pwned\\u0007" in column absorbance is not a number; fix or remove the line\.$/);
    expect(text).not.toContain('\u001b');
    // A file name carrying them (here one that does not exist), and a right-to-left override.
    const name = 'run\u001b[2J\u202egpj.csv';
    const r = refused(rateline('analyze', name), /^run\\u001b\[2J\\u202egpj\.csv: no such file; check the path\.$/);
    expect(r).not.toContain('\u202e');
    // The header's names too.
    refused(rateline('analyze', file('header.csv', 'time_s,\u001b[8mhidden\n1,2\n')), /the header has "time_s", "\\u001b\[8mhidden"/);
  });
});

describe('careless options are refused before anything is written', () => {
  it('simulate --out never overwrites, like every other command', () => {
    file('kept.csv', 'precious\n');
    refused(rateline('simulate', '--out', 'kept.csv'), /^rateline simulate: kept\.csv is already a file, and a file is never overwritten; choose another --out name\.$/);
    expect(readFileSync(join(dir, 'kept.csv'), 'utf8')).toBe('precious\n');
    refused(rateline('simulate', '--out', '.'), /^rateline simulate: \. is already a folder/);
    expect(rateline('simulate', '--out', 'new.csv').code).toBe(0); // control
  });

  it('numbers past any bench value: an exponent slip is refused, not believed', () => {
    refused(rateline('simulate', '--duration', '1e300', '--dt', '1e299', '--out', 'long.csv'), /^rateline simulate: --duration 1e300 is not a duration in seconds above 0 and at most 1e\+8 s/);
    refused(rateline('simulate', '--seed', '1e300', '--out', 'seed.csv'), /^rateline simulate: --seed 1e300 is not a whole number from 0 to 4294967295/);
    refused(rateline('simulate', '--spikes', '5000', '--out', 'spikes.csv'), /^rateline simulate: --spikes 5000 is more than the 901 readings of the run; give at most 901\.$/);
    refused(rateline('analyze', 'good.csv', '--from', '-1e300'), /^rateline analyze: --from -1e300 is not a time in seconds within ±1e\+8 s/);
    refused(rateline('record', '--simulate', '--out', 'r.jsonl', '--temperature-c', '2500'), /^rateline record: --temperature-c 2500 is not a temperature in °C from -100 to 500/);
    refused(rateline('record', '--simulate', '--out', 'r.jsonl', '--wavelength-nm', '6.3e9'), /^rateline record: --wavelength-nm 6\.3e9 is not a wavelength in nm from 100 to 5000/);
    refused(rateline('record', '--simulate', '--out', 'r.jsonl', '--speed', '1e-300'), /^rateline record: --speed 1e-300 is not a speed factor from 0\.01 to 10000, or max/);
    refused(rateline('record', '--simulate', '--out', 'r.jsonl', '--progress-ms', '1e300'), /^rateline record: --progress-ms 1e300 is not from 50 ms to an hour/);
    refused(rateline('record', '--simulate', '--out', 'r.jsonl', '--half-lives', '1e300'), /^rateline record: --half-lives 1e300 is not a number of half-lives above 0 and at most 20/);
    refused(rateline('emulate', '--port', '/dev/null', '--speed', '1e-300'), /^rateline emulate: --speed 1e-300 is not a speed factor from 0\.01 to 10000/);
    expect(existsSync(join(dir, 'r.jsonl'))).toBe(false);
    expect(rateline('simulate', '--out', 'demo2.csv', '--k', '0.007').code).toBe(0);
    refused(rateline('combine', 'good.csv', 'demo2.csv', '--by', 'temperature', '--value', 'good.csv=25', 'demo2.csv=1e300'), /^rateline combine: --value 1e300 is not a temperature in °C from -100 to 500 \(for demo2\.csv\)/);
    refused(rateline('combine', 'good.csv', 'demo2.csv', '--by', 'concentration', '--value', 'good.csv=0.01', 'demo2.csv=1e300'), /^rateline combine: --value 1e300 is not a concentration in mol\/L above 0 and at most 100 \(for demo2\.csv\)/);
  }, 90_000);

  it('standards with an absorbance no photometer reads', () => {
    refused(rateline('calibrate', file('std.csv', 'concentration_uM,absorbance\n1,1e300\n2,0.26\n3,0.39\n')), /^std\.csv line 2: absorbance 1e\+300 AU is outside what a photometer can read \(-1 to 10 AU\)/);
  });

  it('a port that is a plain file, and an export without --to', () => {
    refused(rateline('record', '--port', '/dev/null', '--out', 'null.jsonl'), /^rateline record: \/dev\/null is not a serial port \(a file or another kind of device\); choose the instrument's port/);
    expect(existsSync(join(dir, 'null.jsonl'))).toBe(false);
    refused(rateline('export', 'good.csv', '--out', 'x.jdx'), /^rateline export: no --to given; say which format, --to jcamp or --to csv\.$/);
  });
});
