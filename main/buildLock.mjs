// One build at a time into a folder that several processes may want at once: the screens'
// build (main/web/rendererBuild.ts) and the command's bundle (bin/commandBundle.js).
// Plain JavaScript because the command's bundle is built with it before any TypeScript
// has been compiled. The lock is a folder (mkdir is atomic) holding the builder's pid, so
// a waiter can tell a build in progress from one left behind by a killed process.
import { mkdir, readFile, rm, stat, writeFile } from 'node:fs/promises';
import { join } from 'node:path';

/** A lock older than this is taken as left over even when its owner cannot be checked. */
const STALE_LOCK_MS = 5 * 60_000;
const POLL_MS = 100;

const sleep = (ms) => new Promise((resolve) => setTimeout(resolve, ms));

/** True when the lock's owner is known to be gone (its pid file names a process that no longer runs) or the lock is old. */
async function lockLeftOver(lockDir) {
  const pid = Number(await readFile(join(lockDir, 'pid'), 'utf8').catch(() => ''));
  if (Number.isInteger(pid) && pid > 0) {
    try {
      process.kill(pid, 0);
    } catch (err) {
      if (err.code === 'ESRCH') return true;
    }
  }
  const age_ms = await stat(lockDir).then((s) => Date.now() - s.mtimeMs, () => 0);
  return age_ms > STALE_LOCK_MS;
}

/**
 * Runs `build(reason)` when `staleReason()` gives a reason, holding `lockDir` while it
 * builds; a process that finds the lock taken waits, then checks again, so that two
 * launches at once make one build. Resolves to true when this process built.
 */
export async function buildUnderLock(lockDir, staleReason, build) {
  for (;;) {
    if ((await staleReason()) === null) return false;
    try {
      await mkdir(lockDir);
      break;
    } catch (err) {
      if (err.code !== 'EEXIST') throw err;
      if (await lockLeftOver(lockDir)) await rm(lockDir, { recursive: true, force: true });
      else await sleep(POLL_MS);
    }
  }
  try {
    await writeFile(join(lockDir, 'pid'), String(process.pid));
    const reason = await staleReason();
    if (reason === null) return false;
    await build(reason);
    return true;
  } finally {
    await rm(lockDir, { recursive: true, force: true });
  }
}
