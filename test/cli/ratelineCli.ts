/**
 * The real `rateline` command for the command tests: `node bin/rateline.js ARGS` run as
 * a child process in a folder of the test's own, with its exit code and both streams.
 * bin/rateline.js runs the command's compiled bundle (dist/cli/, bin/commandBundle.js),
 * so these tests run what a user runs.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, mkdtempSync, symlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export const ROOT = join(import.meta.dirname, '..', '..');

export interface CommandRun {
  code: number | null;
  out: string;
  err: string;
}

/** A fresh temporary folder and the command running in it. */
export function ratelineIn(tempPrefix: string): { dir: string; rateline: (...args: string[]) => CommandRun } {
  const dir = mkdtempSync(join(tmpdir(), tempPrefix));
  const rateline = (...args: string[]): CommandRun => {
    const r = spawnSync(process.execPath, [join(ROOT, 'bin', 'rateline.js'), ...args], { cwd: dir, encoding: 'utf8' });
    return { code: r.status, out: r.stdout, err: r.stderr };
  };
  return { dir, rateline };
}

/** What the command is built from, copied into a scratch project (tests and bench files left out). */
const COMMAND_SOURCES = ['bin', 'main', 'acquisition', 'kinetics', 'package.json', 'tsconfig.json'];

/**
 * A copy of the project as a fresh clone has it after `npm install` (the sources, no
 * dist/; node_modules linked to the project's), for tests and benchmarks that build the
 * command's bundle or edit a source without touching the project's own.
 */
export function scratchProject(tempPrefix: string): string {
  const dir = mkdtempSync(join(tmpdir(), tempPrefix));
  for (const f of COMMAND_SOURCES) {
    cpSync(join(ROOT, f), join(dir, f), { recursive: true, filter: (src) => !/\.test\.ts$/.test(src) });
  }
  symlinkSync(join(ROOT, 'node_modules'), join(dir, 'node_modules'), 'dir');
  return dir;
}
