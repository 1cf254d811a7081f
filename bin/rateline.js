#!/usr/bin/env node
// The `rateline` command. The sources are TypeScript; tsx loads them directly, so the
// command runs on a fresh clone after `npm install` with no build step.
import { tsImport } from 'tsx/esm/api';

const cli = await tsImport('../main/cli/index.ts', import.meta.url);
process.exitCode = await cli.main(process.argv.slice(2));
