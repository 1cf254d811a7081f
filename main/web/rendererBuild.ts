/**
 * The built screens (dist/renderer/), built on demand with vite's JS API when the
 * output is missing or older than any source the screens are made from. A lock folder
 * keeps two launches from building into the same folder at once.
 */
import { mkdir, readdir, rm, stat } from 'node:fs/promises';
import { join } from 'node:path';

/**
 * Folders and files that go into the screens' bundle: the renderer imports the contract
 * and kinetics helpers, and the contract the reject reasons and source status.
 */
const SOURCE_DIRS = ['renderer', 'main/bridge', 'kinetics'];
const SOURCE_FILES = ['acquisition/sources/sourceStatus.ts'];
const STALE_LOCK_MS = 5 * 60_000;

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

const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));

/** Builds the screens if needed; resolves to the output folder. `log` gets one line when a build runs. */
export async function ensureRendererBuilt(root: string, log: (line: string) => void = () => undefined): Promise<string> {
  const out = rendererOutDir(root);
  const lock = join(root, 'dist', '.renderer-build.lock');
  await mkdir(join(root, 'dist'), { recursive: true });
  for (;;) {
    if ((await rendererBuildReason(root)) === null) return out;
    try {
      await mkdir(lock);
      break;
    } catch {
      // Another launch is building: wait for it, unless its lock is left over from a crash.
      const age = await stat(lock).then((s) => Date.now() - s.mtimeMs, () => 0);
      if (age > STALE_LOCK_MS) await rm(lock, { recursive: true, force: true });
      else await sleep(250);
    }
  }
  try {
    const reason = await rendererBuildReason(root);
    if (reason === null) return out;
    log(`building the screens (${reason})…`);
    const { build } = await import('vite');
    await build({ configFile: join(root, 'renderer', 'vite.config.ts'), logLevel: 'warn' });
    return out;
  } finally {
    await rm(lock, { recursive: true, force: true });
  }
}
