/**
 * The real `rateline` command for the command tests: `node bin/rateline.js ARGS` run as
 * a child process in a folder of the test's own, with its exit code and both streams.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export const ROOT = join(__dirname, '..', '..');

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
