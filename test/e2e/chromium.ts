/**
 * Debian's Chromium driven by playwright-core, the way every browser test here opens
 * it: headless, no sandbox (the test machines run as root), no GPU, no background
 * traffic, and a fresh profile folder per launch that is removed afterwards.
 */
import { mkdtempSync, readFileSync, rmSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { extname, join, normalize } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

export const CHROMIUM = '/usr/bin/chromium';

export interface OpenBrowser {
  context: BrowserContext;
  page: Page;
  close(): Promise<void>;
}

export async function openChromium(viewport = { width: 1280, height: 800 }): Promise<OpenBrowser> {
  const profile = mkdtempSync(join(tmpdir(), 'rateline-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    viewport,
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--no-first-run'],
  });
  // tsx names functions with an `__name` helper; functions handed to the page carry the
  // call with them, so the page gets a do-nothing helper of that name.
  await context.addInitScript({ content: 'globalThis.__name = globalThis.__name || ((f) => f);' });
  const page = context.pages()[0] ?? (await context.newPage());
  return {
    context,
    page,
    async close() {
      await context.close().catch(() => {});
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8', '.js': 'text/javascript', '.css': 'text/css', '.map': 'application/json', '.svg': 'image/svg+xml',
};

/**
 * Serve a built folder to the page under a made-up origin, from inside the browser
 * driver (no socket, no network): for tests that give the page a fake bridge.
 */
export async function serveFolder(page: Page, dir: string, origin = 'http://rateline.invalid'): Promise<string> {
  if (!existsSync(join(dir, 'index.html'))) throw new Error(`${dir}/index.html is missing: run "npm run build:renderer" first.`);
  await page.route(`${origin}/**`, async (route) => {
    const path = new URL(route.request().url()).pathname;
    const file = normalize(join(dir, path === '/' ? 'index.html' : path));
    if (!file.startsWith(dir) || !existsSync(file)) return route.fulfill({ status: 404, body: 'not found' });
    return route.fulfill({ status: 200, contentType: TYPES[extname(file)] ?? 'application/octet-stream', body: readFileSync(file) });
  });
  return `${origin}/`;
}
