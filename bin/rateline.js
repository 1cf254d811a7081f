#!/usr/bin/env node
// The `rateline` command. The sources are TypeScript; it runs their compiled bundle
// (dist/cli/, bin/commandBundle.js), built on the first run and whenever a source has
// changed, so the command works on a fresh clone after `npm install` with no build step
// and starts without compiling anything.
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { CommandBundleError, commandBundle } from './commandBundle.js';

const EXIT_BAD_INPUT = 2;
const root = join(dirname(fileURLToPath(import.meta.url)), '..');

let entry;
try {
  entry = await commandBundle(root, (line) => { if (process.stderr.isTTY) console.error(line); });
} catch (err) {
  if (!(err instanceof CommandBundleError)) throw err;
  console.error(err.message);
  process.exitCode = EXIT_BAD_INPUT;
}
if (entry) {
  if (process.env.RATELINE_DEBUG) process.setSourceMapsEnabled(true);
  const cli = await import(entry);
  process.exitCode = await cli.main(process.argv.slice(2));
}
