// The `rateline` command's bundle: main/cli/index.ts and everything it reaches, compiled
// by esbuild into dist/cli/ (git-ignored). It is built on the first run and again when any
// file it was built from has changed, under the same lock folder as the screens' build
// (main/buildLock.mjs), so a fresh clone needs nothing beyond `npm install` and no
// TypeScript loader runs when a command starts.
//
// dist/cli/manifest.json names the current build and, for every file it was built from,
// the modification time and size seen at build time; a run compares them with a stat per
// file (about a hundred, well under a millisecond) and loads esbuild only to rebuild. Each
// build goes into a folder of its own and the manifest is replaced by a rename, so a
// command starting while another rebuilds loads either the old build or the new one whole;
// dist/cli/builds.log says when each build was made, how long it took and why.
import { existsSync, readFileSync, statSync } from 'node:fs';
import { appendFile, mkdir, readdir, rename, rm, writeFile } from 'node:fs/promises';
import { join, sep } from 'node:path';
import { pathToFileURL } from 'node:url';

/** Bumped when the manifest's shape or the bundle's layout changes, so older builds are rebuilt. */
const MANIFEST_FORMAT = 1;
const ENTRY = 'main/cli/index.ts';

/**
 * Packages loaded from node_modules at run time rather than bundled: serialport's native
 * binding (and its parser), ws (CommonJS, with optional native helpers), vite and esbuild
 * (the builders, loaded only to build), electron, and playwright-core (tests only). The
 * rest (zod) is pure ES modules and is bundled, which loads faster than its many files.
 */
const EXTERNAL = ['serialport', '@serialport/*', 'ws', 'bufferutil', 'utf-8-validate', 'vite', 'esbuild', 'electron', 'playwright-core'];

/** Files that shape the bundle besides its sources: this builder, the TypeScript settings esbuild reads, esbuild itself. */
const BUILD_INPUTS = ['bin/commandBundle.js', 'tsconfig.json', 'node_modules/esbuild/package.json'];

export function commandBundleDir(root) {
  return join(root, 'dist', 'cli');
}

function readManifest(root) {
  try {
    const m = JSON.parse(readFileSync(join(commandBundleDir(root), 'manifest.json'), 'utf8'));
    return m && m.format === MANIFEST_FORMAT ? m : null;
  } catch {
    return null;
  }
}

/** Why the bundle must be built, or null when dist/cli/ matches every file it was built from. */
export function commandBundleStaleReason(root) {
  const m = readManifest(root);
  if (m === null) return 'not built yet';
  if (!existsSync(join(commandBundleDir(root), m.entry))) return 'its build folder is gone';
  for (const [file, [mtime_ms, size]] of Object.entries(m.inputs)) {
    let s;
    try {
      s = statSync(join(root, file));
    } catch {
      return `${file} is gone`;
    }
    if (s.mtimeMs !== mtime_ms || s.size !== size) return `${file} changed`;
  }
  return null;
}

/** A file the bundle was built from, as the manifest keeps it: a bundled package by its package.json. */
function trackedPath(input) {
  const parts = input.split(/[\\/]/);
  const at = parts.lastIndexOf('node_modules');
  if (at < 0) return parts.join('/');
  const scoped = parts[at + 1]?.startsWith('@');
  return [...parts.slice(0, at + (scoped ? 3 : 2)), 'package.json'].join('/');
}

/** One line for a build that failed: the first error esbuild reports, where it is. */
function failureLine(err) {
  const first = err && Array.isArray(err.errors) ? err.errors[0] : null;
  if (!first) return `rateline: the command could not be compiled into dist/cli/ (${String(err?.message ?? err).split('\n')[0]}); check that the project folder can be written to.`;
  const where = first.location ? `${first.location.file.split(sep).join('/')} line ${first.location.line}: ` : '';
  const more = err.errors.length > 1 ? ` (and ${err.errors.length - 1} more)` : '';
  return `rateline: the command could not be compiled: ${where}${first.text}${more}; fix the source and run the command again.`;
}

async function build(root, reason) {
  const { build: esbuild } = await import('esbuild');
  const dir = commandBundleDir(root);
  const previous = readManifest(root);
  const id = `${Date.now().toString(36)}-${process.pid}`;
  const outdir = join(dir, id);
  const started_ms = Date.now();
  let result;
  try {
    result = await esbuild({
      absWorkingDir: root,
      entryPoints: { rateline: ENTRY },
      outdir,
      bundle: true,
      splitting: true, // each command's import() becomes a chunk of its own, loaded only when it runs
      format: 'esm',
      platform: 'node',
      target: 'node20',
      sourcemap: 'linked', // used when RATELINE_DEBUG asks for stack traces (bin/rateline.js)
      metafile: true,
      logLevel: 'silent',
      external: EXTERNAL,
    });
  } catch (err) {
    await rm(outdir, { recursive: true, force: true });
    throw new CommandBundleError(failureLine(err));
  }
  const finished_ms = Date.now();
  const inputs = {};
  for (const file of [...new Set([...Object.keys(result.metafile.inputs).map(trackedPath), ...BUILD_INPUTS])].sort()) {
    const s = statSync(join(root, file));
    // A file saved while esbuild was reading may not be what went into the bundle: record it
    // as unseen so that the next run builds again.
    inputs[file] = s.mtimeMs >= started_ms && s.mtimeMs <= finished_ms ? [-1, -1] : [s.mtimeMs, s.size];
  }
  const manifest = join(dir, 'manifest.json');
  await writeFile(`${manifest}.${process.pid}`, JSON.stringify({ format: MANIFEST_FORMAT, entry: `${id}/rateline.js`, built: new Date(finished_ms).toISOString(), inputs }, null, 1));
  await rename(`${manifest}.${process.pid}`, manifest);
  await appendFile(join(dir, 'builds.log'), `${new Date(finished_ms).toISOString()} ${id} ${finished_ms - started_ms} ms, ${reason}\n`);
  // Keep this build and the one before it (a command still running may load a chunk of it later).
  const keep = new Set([id, previous?.entry.split('/')[0]]);
  for (const e of await readdir(dir, { withFileTypes: true })) {
    if (e.isDirectory() && !keep.has(e.name)) await rm(join(dir, e.name), { recursive: true, force: true });
  }
}

export class CommandBundleError extends Error {}

/**
 * The bundle's entry as a file URL, built first when it is missing or stale. `say` gets
 * one line when this process builds. Throws CommandBundleError (one line) when the
 * sources do not compile.
 */
export async function commandBundle(root, say = () => undefined) {
  if (commandBundleStaleReason(root) !== null) {
    try {
      const { buildUnderLock } = await import('../main/buildLock.mjs');
      await mkdir(join(root, 'dist'), { recursive: true });
      await buildUnderLock(join(root, 'dist', '.cli-build.lock'), async () => commandBundleStaleReason(root), async (reason) => {
        say(`rateline: compiling the command (${reason})…`);
        await build(root, reason);
      });
    } catch (err) {
      // A folder that cannot be written, a disk that is full: one line too.
      throw err instanceof CommandBundleError ? err : new CommandBundleError(failureLine(err));
    }
  }
  const m = readManifest(root);
  if (m === null) throw new CommandBundleError('rateline: the command\'s bundle in dist/cli/ could not be read after building it; delete dist/cli/ and run the command again.');
  return pathToFileURL(join(commandBundleDir(root), m.entry)).href;
}
