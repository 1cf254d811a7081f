/**
 * One screen session for a browser test file: a real `rateline serve` child on a fresh
 * data folder, a headless Chromium page on it at 1280 × 800, and a list of the page's
 * errors (uncaught exceptions, console errors such as CSP violations) that each test can
 * require to stay empty. Registers its own beforeAll/afterAll.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll } from 'vitest';
import { openChromium, type OpenBrowser } from './chromium';
import { startServe, type ServeChild } from './serveProcess';

export interface ScreenSession {
  dataDir: string;
  serve: ServeChild;
  browser: OpenBrowser;
  /** Page errors and console errors seen so far. */
  problems: string[];
}

export function useScreenSession(tempPrefix: string, speed: number): ScreenSession {
  const session = { problems: [] as string[] } as ScreenSession;
  beforeAll(async () => {
    session.dataDir = mkdtempSync(join(tmpdir(), tempPrefix));
    session.serve = await startServe(['--data-dir', session.dataDir, '--speed', String(speed)]);
    session.browser = await openChromium({ width: 1280, height: 800 });
    session.browser.page.on('pageerror', (e) => session.problems.push(`page error: ${e.message}`));
    session.browser.page.on('console', (m) => { if (m.type() === 'error') session.problems.push(`console: ${m.text()}`); });
  }, 120_000);
  afterAll(async () => {
    await session.browser?.close();
    await session.serve?.stop();
    if (session.dataDir) rmSync(session.dataDir, { recursive: true, force: true });
  });
  return session;
}
