/**
 * How fast the `rateline` command starts, now that it runs a compiled bundle
 * (bin/commandBundle.js) instead of compiling TypeScript on every start.
 *  - `rateline --help` against `node -e 0` (Node starting and doing nothing), run
 *    interleaved, one after the other, so that the machine's load falls on both alike:
 *    median, min and max of each, and the ratio of the medians. Target: ≤ 2×.
 *  - `rateline analyze --help`, for scale: a command that loads its chunk and zod.
 *  - The cold first run, separately: a fresh copy of the project with no dist/, whose first
 *    `rateline --help` builds the bundle (wall time, and esbuild's part as builds.log has it).
 * Ratios are measured in this one run.
 * Run: node --import tsx test/bench/commandStart.bench.ts
 */
import { spawnSync } from 'node:child_process';
import { readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { ROOT, scratchProject } from '../cli/ratelineCli';

const TARGET_RATIO = 2;
const REPS = 11;
const COLD_REPS = 5;

/** Wall time of one child process, in ms; throws when it fails. */
function wall_ms(args: string[], cwd: string = ROOT): number {
  const t0 = performance.now();
  const r = spawnSync(process.execPath, args, { cwd, stdio: ['ignore', 'ignore', 'pipe'], encoding: 'utf8' });
  const ms = performance.now() - t0;
  if (r.status !== 0) throw new Error(`node ${args.join(' ')} exited ${r.status}: ${r.stderr}`);
  return ms;
}

const median = (xs: number[]): number => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2;
};
const summary = (xs: number[]): string => `median ${median(xs).toFixed(0)} ms (min ${Math.min(...xs).toFixed(0)}, max ${Math.max(...xs).toFixed(0)}, n = ${xs.length})`;

const bin = join(ROOT, 'bin', 'rateline.js');
// Warm up: build the project's bundle if it is stale, and bring the files into the page cache.
for (let i = 0; i < 2; i++) { wall_ms(['-e', '0']); wall_ms([bin, '--help']); wall_ms([bin, 'analyze', '--help']); }

const bare: number[] = [];
const help: number[] = [];
const analyzeHelp: number[] = [];
for (let i = 0; i < REPS; i++) {
  bare.push(wall_ms(['-e', '0']));
  help.push(wall_ms([bin, '--help']));
  analyzeHelp.push(wall_ms([bin, 'analyze', '--help']));
}

const cold: number[] = [];
const esbuild: number[] = [];
const project = scratchProject('rateline-bench-cold-');
try {
  for (let i = 0; i < COLD_REPS; i++) {
    rmSync(join(project, 'dist'), { recursive: true, force: true });
    cold.push(wall_ms([join(project, 'bin', 'rateline.js'), '--help'], project));
    const log = readFileSync(join(project, 'dist', 'cli', 'builds.log'), 'utf8');
    esbuild.push(Number(/ (\d+) ms,/.exec(log)![1]));
  }
} finally {
  rmSync(project, { recursive: true, force: true });
}

const ratio = median(help) / median(bare);
console.log(`node -e 0                      ${summary(bare)}`);
console.log(`rateline --help                ${summary(help)}`);
console.log(`rateline analyze --help        ${summary(analyzeHelp)}   (loads its chunk and zod; no target)`);
console.log(`first run on a fresh clone     ${summary(cold)}   (builds dist/cli/; esbuild's part ${summary(esbuild)})`);
console.log(`\nratios measured in this run (medians, ${REPS} interleaved repetitions):`);
console.log(`  rateline --help / node -e 0          ${ratio.toFixed(2)}×   target ≤ ${TARGET_RATIO}×   ${ratio <= TARGET_RATIO ? 'PASS' : 'MISS'}`);
console.log(`  rateline analyze --help / node -e 0  ${(median(analyzeHelp) / median(bare)).toFixed(2)}×`);
console.log(`  first run / later runs               ${(median(cold) / median(help)).toFixed(1)}×`);
