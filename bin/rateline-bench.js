#!/usr/bin/env node
// `npm run bench`: every benchmark under test/bench/, one after the other, in one process
// per file so that one's garbage does not bill the next. Prints ratios measured in one run.
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const dir = join(root, 'test', 'bench');
const only = process.argv.slice(2);
const files = readdirSync(dir)
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => only.length === 0 || only.some((o) => f.includes(o)))
  .sort();
let failed = 0;
for (const f of files) {
  console.log(`\n=== ${f}`);
  const r = spawnSync(process.execPath, ['--expose-gc', '--import', 'tsx', join(dir, f)], { stdio: 'inherit', cwd: root });
  if (r.status !== 0) failed++;
}
console.log(`\n${files.length - failed} benchmarks ran, ${failed} failed`);
process.exitCode = failed ? 1 : 0;
