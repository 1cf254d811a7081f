/**
 * A serial run end to end: a socat pty pair, `rateline emulate` playing the instrument
 * on one end, the real `rateline serve` reading the other, and the screen in Chromium
 * choosing the port, starting, watching the readings, and stopping. The record on disk
 * holds every reading the screen counted.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openChromium, type OpenBrowser } from './chromium';
import { ROOT, startServe, type ServeChild } from './serveProcess';

function recordFiles(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    const p = join(dir, name);
    if (statSync(p).isDirectory()) out.push(...recordFiles(p));
    else if (readFileSync(p, 'utf8').slice(0, 200).includes('rateline-run-record')) out.push(p);
  }
  return out;
}

async function waitFor(check: () => boolean, timeout_ms: number, what: string): Promise<void> {
  const until = Date.now() + timeout_ms;
  while (!check()) {
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

function stopChild(child: ChildProcess | undefined): Promise<void> {
  return new Promise((resolve) => {
    if (!child || child.exitCode !== null || child.signalCode !== null) return resolve();
    child.once('exit', () => resolve());
    child.kill('SIGTERM');
    setTimeout(() => { if (child.exitCode === null) child.kill('SIGKILL'); }, 5000).unref();
  });
}

function countIn(text: string | null): number {
  const m = /(\d+) readings/.exec(text ?? '');
  return m ? Number(m[1]) : -1;
}

describe('serial run through a pty pair', () => {
  let dir: string;
  let socat: ChildProcess;
  let emulator: ChildProcess;
  let serve: ServeChild;
  let browser: OpenBrowser;
  let emulatorOut = '';
  const problems: string[] = [];

  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'rateline-serial-e2e-'));
    const dev = join(dir, 'dev'), host = join(dir, 'host');
    socat = spawn('socat', ['-d', '-d', `pty,raw,echo=0,link=${dev}`, `pty,raw,echo=0,link=${host}`], { stdio: 'ignore' });
    await waitFor(() => existsSync(dev) && existsSync(host), 10_000, 'the socat pty pair');
    emulator = spawn(process.execPath, [join(ROOT, 'bin', 'rateline.js'), 'emulate', '--port', dev, '--baud', '115200', '--speed', '50'], { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
    emulator.stdout!.on('data', (d) => { emulatorOut += String(d); });
    emulator.stderr!.on('data', (d) => { emulatorOut += String(d); });
    serve = await startServe(['--data-dir', join(dir, 'runs')]);
    browser = await openChromium({ width: 1280, height: 800 });
    browser.page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
    browser.page.on('console', (m) => { if (m.type() === 'error') problems.push(`console: ${m.text()}`); });
  }, 120_000);

  afterAll(async () => {
    await browser?.close();
    await serve?.stop();
    await stopChild(emulator);
    await stopChild(socat);
    if (dir) rmSync(dir, { recursive: true, force: true });
  });

  it('connects to the emulated instrument, records a run, and the record holds every reading counted', async () => {
    const { page } = browser;
    await page.goto(serve.url);
    await page.getByText('Service: connected').waitFor({ timeout: 20_000 });
    await page.getByRole('radio', { name: 'Serial port' }).check();
    await page.getByRole('combobox', { name: 'Serial port' }).fill(join(dir, 'host'));
    await page.getByLabel('Baud rate').selectOption('115200');
    await page.getByTestId('use-source').click();
    await expect.poll(async () => page.getByTestId('source-status').textContent(), { timeout: 20_000 }).toMatch(/^Connected/);
    await expect(page.getByTestId('demo-banner').isVisible()).resolves.toBe(false);

    await page.getByRole('button', { name: /^Start/ }).click();
    await page.getByText(/^Recording: \d+ readings/).waitFor({ timeout: 20_000 });
    await expect.poll(async () => countIn(await page.getByTestId('drawn').textContent()), { timeout: 40_000 }).toBeGreaterThan(60);
    await expect.poll(async () => page.getByTestId('k').textContent(), { timeout: 30_000 }).toMatch(/±/);
    await expect(page.getByTestId('rejects').textContent()).resolves.toMatch(/none|: \d+/);

    mkdirSync(join(ROOT, 'test-artifacts'), { recursive: true });
    await page.screenshot({ path: join(ROOT, 'test-artifacts', 'serial-run.png') });
    await page.getByRole('button', { name: /^Stop/ }).click();
    await page.getByText(/^Stopped: \d+ readings recorded/).waitFor({ timeout: 20_000 });
    await page.waitForTimeout(500);
    const screenCount = countIn(await page.getByText(/^Stopped: \d+ readings recorded/).textContent());
    const files = recordFiles(join(dir, 'runs'));
    expect(files).toHaveLength(1);
    const readings = readFileSync(files[0]!, 'utf8').split('\n').filter((l) => l.startsWith('['));
    expect(readings.length).toBe(screenCount);
    // The emulator plays the demo reaction, already under way when the run starts (the
    // device measures from its own start): the dye fades, within 0 to A0 = 0.65 plus noise.
    const rows = readings.map((l) => JSON.parse(l) as number[]);
    for (const r of rows) { expect(r[1]!).toBeGreaterThan(-0.01); expect(r[1]!).toBeLessThan(0.7); }
    for (let i = 1; i < rows.length; i++) expect(rows[i]![0]!).toBeGreaterThan(rows[i - 1]![0]!);
    expect(rows[0]![1]!).toBeGreaterThan(rows[rows.length - 1]![1]!);
    expect(problems, emulatorOut).toEqual([]);
  }, 180_000);
});
