/**
 * The built screens (dist/renderer/), built on demand with vite's JS API when the
 * output is missing or older than any source the screens are made from. A lock folder
 * (main/buildLock.mjs) keeps two launches from building into the same folder at once.
 */
import { mkdir, readdir, stat } from 'node:fs/promises';
import { join } from 'node:path';
import { buildUnderLock } from '../buildLock.mjs';

/**
 * Folders and files that go into the screens' bundle: the renderer imports the contract
 * and kinetics helpers, and the contract the reject reasons and source status.
 */
const SOURCE_DIRS = ['renderer', 'main/bridge', 'kinetics'];
const SOURCE_FILES = ['acquisition/sources/sourceStatus.ts'];

export function rendererOutDir(root: string): string {
  return join(root, 'dist', 'renderer');
}

async function newestSource_ms(dir: string): Promise<number> {
  let newest = 0;
  let entries;
  try {
    entries = await readdir(dir, { withFileTypes: true });
  } catch {
    return 0;
  }
  for (const e of entries) {
    const p = join(dir, e.name);
    if (e.isDirectory()) newest = Math.max(newest, await newestSource_ms(p));
    else if (/\.(ts|html|css|json)$/.test(e.name) && !/\.test\.ts$/.test(e.name)) newest = Math.max(newest, (await stat(p)).mtimeMs);
  }
  return newest;
}

/** Why the screens need building, or null when dist/renderer/ is up to date. */
export async function rendererBuildReason(root: string): Promise<string | null> {
  let built_ms: number;
  try {
    built_ms = (await stat(join(rendererOutDir(root), 'index.html'))).mtimeMs;
  } catch {
    return 'not built yet';
  }
  let newest = 0;
  for (const d of SOURCE_DIRS) newest = Math.max(newest, await newestSource_ms(join(root, d)));
  for (const f of SOURCE_FILES) newest = Math.max(newest, await stat(join(root, f)).then((s) => s.mtimeMs, () => 0));
  return newest > built_ms ? 'sources changed since the last build' : null;
}

/** Builds the screens if needed; resolves to the output folder. `log` gets one line when a build runs. */
export async function ensureRendererBuilt(root: string, log: (line: string) => void = () => undefined): Promise<string> {
  await mkdir(join(root, 'dist'), { recursive: true });
  await buildUnderLock(join(root, 'dist', '.renderer-build.lock'), () => rendererBuildReason(root), async (reason) => {
    log(`building the screens (${reason})…`);
    const { build } = await import('vite');
    await build({ configFile: join(root, 'renderer', 'vite.config.ts'), logLevel: 'warn' });
  });
  return rendererOutDir(root);
}
