import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { readRunRecord } from '../../../acquisition/record/journalReader';
import { InputError } from '../common/cliErrors';
import { run } from './record';

let dir: string;
beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'rateline-record-cmd-'));
});
afterEach(() => {
  vi.restoreAllMocks();
  rmSync(dir, { recursive: true, force: true });
});

async function inputError(argv: string[]): Promise<string> {
  try {
    await run(argv);
  } catch (err) {
    expect(err).toBeInstanceOf(InputError);
    return (err as Error).message;
  }
  throw new Error('no InputError');
}

describe('rateline record: bad input is one clear line', () => {
  it('refuses to overwrite an existing --out file and leaves it as it was', async () => {
    const out = join(dir, 'run.jsonl');
    writeFileSync(out, 'an earlier run\n');
    expect(await inputError(['--simulate', '--out', out])).toBe(
      `rateline record: ${out} is already a file, and a run record is never overwritten; choose another --out name.`,
    );
    expect(readFileSync(out, 'utf8')).toBe('an earlier run\n');
  });

  it.each([
    [['--out', 'x.jsonl'], 'no --port given'],
    [['--simulate'], 'no --out given'],
    [['--simulate', '--out', 'x.jsonl', '--max-seconds', '0'], '--max-seconds 0 is not a positive number of seconds; give a positive number of seconds.'],
    [['--simulate', '--out', 'x.jsonl', '--max-seconds=-5'], '--max-seconds -5 is not a positive number of seconds'],
    [['--simulate', '--out', 'x.jsonl', '--speed', 'fast'], '--speed fast is not a speed factor from 0.01 to 10000, or max'],
    [['--simulate', '--out', 'x.jsonl', '--conc', 'hypochlorite'], '--conc "hypochlorite" is not NAME=VALUE UNIT'],
    [['--simulate', '--out', 'x.jsonl', '--colour', 'blue'], 'unknown option --colour; run "rateline record --help" for the options.'],
    [['--port', '/dev/ttyUSB0', '--out', 'x.jsonl', '--seed', '3'], 'for the simulated instrument only'],
  ])('%j', async (argv, what) => {
    const message = await inputError(argv);
    expect(message).toContain(what);
    expect(message.startsWith('rateline record: ')).toBe(true);
    expect(message.split('\n')).toHaveLength(1);
  });

  it('names a missing serial port, lists what exists, and leaves no empty record behind', async () => {
    const out = join(dir, 'serial.jsonl');
    const errors: string[] = [];
    vi.spyOn(console, 'error').mockImplementation((m: unknown) => void errors.push(String(m)));
    vi.spyOn(process.stdout, 'write').mockImplementation(() => true);
    expect(await run(['--port', join(dir, 'no-such-port'), '--out', out])).toBe(2);
    expect(errors).toHaveLength(1);
    expect(errors[0]).toMatch(/^rateline record: serial port .*no-such-port not found/);
    expect(existsSync(out)).toBe(false);
  });

  it('records the simulated instrument to its limit with the run details in the header', async () => {
    const out = join(dir, 'sim.jsonl');
    const lines: string[] = [];
    vi.spyOn(process.stdout, 'write').mockImplementation((chunk: unknown) => (lines.push(String(chunk)), true));
    const code = await run(['--simulate', '--speed', 'max', '--max-seconds', '60', '--out', out, '--operator', 'demo', '--temperature-c', '25.0', '--ph', '7.0', '--buffer', 'phosphate (demo)', '--volume', 'dye stock=0.30', '--progress', 'json']);
    expect(code).toBe(0);
    const summary = JSON.parse(lines.at(-1)!) as Record<string, unknown>;
    expect(summary).toMatchObject({ stopped: 'limit', readings: 60, record: out });
    const rec = readRunRecord(out);
    expect(rec.header.demo).toBe(true);
    expect(rec.header.program.version).toBe((JSON.parse(readFileSync(join(import.meta.dirname, '..', '..', '..', 'package.json'), 'utf8')) as { version: string }).version);
    expect(rec.header.started).toMatch(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}(Z|[+-]\d\d:\d\d)$/);
    expect(rec.header.run).toMatchObject({ operator: 'demo', temperature_C: 25, pH: 7, buffer: 'phosphate (demo)', volumes: [{ name: 'dye stock', value_mL: 0.3 }] });
    expect(rec.readings.count).toBe(60);
    expect(rec.events.at(-1)!.event).toMatchObject({ ev: 'stop', reason: 'limit' });
  });
});
