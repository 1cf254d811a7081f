/**
 * The run screen end to end: the real `rateline serve` (simulated instrument, fast),
 * Debian's Chromium, a person's actions (keys and a drag), and the run record on disk.
 */
import { mkdirSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT } from './serveProcess';
import { useScreenSession } from './screenSession';

const ARTIFACTS = join(ROOT, 'test-artifacts');

/** Every run-record file under a folder (found by content, not by name). */
function recordFiles(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    const p = join(dir, name);
    if (statSync(p).isDirectory()) out.push(...recordFiles(p));
    else if (readFileSync(p, 'utf8').slice(0, 200).includes('rateline-run-record')) out.push(p);
  }
  return out;
}

/** The record read plainly as JSON Lines, independent of the program's own reader. */
function readRecord(path: string) {
  const lines = readFileSync(path, 'utf8').split('\n').filter((l) => l.trim());
  const values = lines.map((l) => JSON.parse(l) as unknown);
  const readings = values.filter((v): v is number[] => Array.isArray(v));
  const events = values.filter((v): v is Record<string, unknown> => !Array.isArray(v) && typeof v === 'object' && v !== null);
  return { header: events[0]!, readings, events };
}

function countIn(text: string | null): number {
  const m = /(\d+) readings/.exec(text ?? '');
  return m ? Number(m[1]) : -1;
}

describe('run screen against the real bench service', () => {
  const session = useScreenSession('rateline-e2e-', 100);

  it('runs a simulated run from start to the stop advice, and the record holds every reading the screen counted', async () => {
    const { page } = session.browser;
    await page.goto(session.serve.url);
    await page.getByText('Service: connected').waitFor({ timeout: 20_000 });
    await expect(page.getByTestId('demo-banner').isVisible()).resolves.toBe(true);

    // Sample details before the run, saved into the record's header.
    await page.getByLabel('Sample', { exact: true }).fill('brilliant blue FCF, 5.0 µM (demo)');
    await page.getByLabel('Operator').fill('e2e');
    await page.getByLabel('Temperature in °C').fill('25.0');
    await page.getByRole('button', { name: 'Save details' }).click();
    await page.getByText(/^Saved /).waitFor();

    // Start by its shortcut, with the focus on the page, not in a field.
    await page.locator('body').click({ position: { x: 640, y: 790 } });
    await page.keyboard.press('s');
    // A fresh screen asks before it connects and records, naming the source it would use.
    const confirm = page.getByRole('dialog');
    await expect.poll(() => confirm.textContent(), { timeout: 10_000 }).toMatch(/Start a run from simulated instrument \(demo data\)/);
    await expect(countIn(await page.getByTestId('drawn').textContent())).toBe(0);
    await page.getByRole('button', { name: 'Connect and record' }).click();
    await page.getByText(/^Recording: \d+ readings/).waitFor({ timeout: 20_000 });
    await expect.poll(async () => countIn(await page.getByTestId('drawn').textContent()), { timeout: 20_000 }).toBeGreaterThan(30);

    // Mark an event with a note, by the shortcut.
    await page.getByLabel('Note for the next mark').fill('bubble seen');
    await page.locator('body').click({ position: { x: 640, y: 790 } });
    await page.keyboard.press('m');
    await page.getByText(/: bubble seen$/).waitFor({ timeout: 10_000 });

    // The fitted results appear with their units and evidence.
    await expect.poll(async () => page.getByTestId('k').textContent(), { timeout: 30_000 }).toMatch(/±/);
    await expect(page.getByTestId('verdict').textContent()).resolves.toMatch(/Order: (first order|undecided so far)/);

    // Drag across the chart from about a fifth of the way to its end: the fit window follows.
    const over = page.locator('.chart-main .u-over');
    const box = (await over.boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.2, box.y + box.height / 2);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.6, box.y + box.height / 2, { steps: 5 });
    await page.mouse.move(box.x + box.width - 1, box.y + box.height / 2, { steps: 5 });
    await page.mouse.up();
    await expect.poll(async () => page.getByTestId('fit-window').textContent(), { timeout: 10_000 }).toMatch(/^Fit window: \d+ s to the latest reading/);

    // The advice reaches the stop, in words.
    await page.getByTestId('advice').getByText('Far enough: stop now').waitFor({ timeout: 60_000 });
    await expect(page.getByTestId('half-lives').textContent()).resolves.toMatch(/^\d\.\d\d$/);
    mkdirSync(ARTIFACTS, { recursive: true });
    await page.mouse.move(5, 790); // the cursor off the chart, so its crosshair is not in the picture
    await page.waitForTimeout(300);
    await page.screenshot({ path: join(ARTIFACTS, 'run-screen.png') });

    await page.locator('body').click({ position: { x: 640, y: 790 } });
    await page.keyboard.press('x');
    await page.getByText(/^Stopped: \d+ readings recorded/).waitFor({ timeout: 20_000 });
    // Let any last batch land, then take the count the screen shows.
    await page.waitForTimeout(500);
    const screenCount = countIn(await page.getByText(/^Stopped: \d+ readings recorded/).textContent());
    expect(screenCount).toBeGreaterThan(30);
    expect(countIn(await page.getByTestId('drawn').textContent())).toBe(screenCount);

    const files = recordFiles(session.dataDir);
    expect(files).toHaveLength(1);
    const rec = readRecord(files[0]!);
    expect(rec.readings.length).toBe(screenCount);
    expect(JSON.stringify(rec.events)).toContain('bubble seen');
    expect(JSON.stringify(rec.events)).toContain('brilliant blue FCF, 5.0 µM (demo)');
    // The readings are the screen's: time runs forward, absorbance starts near the demo's A0 = 0.65.
    for (let i = 1; i < rec.readings.length; i++) expect(rec.readings[i]![0]!).toBeGreaterThan(rec.readings[i - 1]![0]!);
    expect(rec.readings[0]![1]!).toBeGreaterThan(0.55);
    expect(rec.readings[0]![1]!).toBeLessThan(0.75);
    expect(session.problems).toEqual([]);
  }, 180_000);

  it('exports the run as CSV with every reading, and says so', async () => {
    const { page } = session.browser;
    const count = countIn(await page.getByTestId('drawn').textContent());
    await page.getByRole('button', { name: 'Export CSV' }).click();
    const msg = page.locator('.message.info');
    await msg.waitFor({ timeout: 10_000 });
    const path = /to (\/.+\.csv)/.exec((await msg.textContent()) ?? '')?.[1];
    expect(path).toBeTruthy();
    const rows = readFileSync(path!, 'utf8').split('\n').filter((l) => /^-?\d/.test(l));
    expect(rows.length).toBe(count);
  });

  it('refuses a port that is not there in one sentence, and keeps what was recorded', async () => {
    const { page } = session.browser;
    const before = countIn(await page.getByTestId('drawn').textContent());
    await page.getByRole('radio', { name: 'Serial port' }).check();
    await page.getByRole('combobox', { name: 'Serial port' }).fill('/nonexistent/rateline-port');
    await page.getByTestId('use-source').click();
    const err = page.locator('.message.error').last();
    await err.waitFor({ timeout: 20_000 });
    const text = (await err.textContent()) ?? '';
    expect(text).toContain('/nonexistent/rateline-port');
    expect(text).not.toMatch(/\n\s+at /); // no stack trace
    await page.screenshot({ path: join(ARTIFACTS, 'refused-port.png') });
    expect(countIn(await page.getByTestId('drawn').textContent())).toBe(before);
    expect(recordFiles(session.dataDir)).toHaveLength(1);
    await page.getByRole('radio', { name: 'Simulated (demo)' }).check();
  });

  it('catches up after a reload in mid-run: every reading so far, none twice', async () => {
    const { page } = session.browser;
    await page.getByRole('radio', { name: 'Simulated (demo)' }).check();
    await page.getByTestId('use-source').click();
    await expect.poll(async () => page.getByTestId('source-status').textContent(), { timeout: 20_000 }).toMatch(/^Connected/);
    await page.getByRole('button', { name: /^Start/ }).click();
    await expect.poll(async () => countIn(await page.getByTestId('drawn').textContent()), { timeout: 20_000 }).toBeGreaterThan(100);
    await page.reload();
    await page.getByText('Service: connected').waitFor({ timeout: 20_000 });
    await expect.poll(async () => countIn(await page.getByTestId('drawn').textContent()), { timeout: 20_000 }).toBeGreaterThan(100);
    await page.getByRole('button', { name: /^Stop/ }).click();
    await page.getByText(/^Stopped: \d+ readings recorded/).waitFor({ timeout: 20_000 });
    await page.waitForTimeout(500);
    const screenCount = countIn(await page.getByText(/^Stopped: \d+ readings recorded/).textContent());
    expect(countIn(await page.getByTestId('drawn').textContent())).toBe(screenCount);
    const files = recordFiles(session.dataDir).sort((a, b) => statSync(a).mtimeMs - statSync(b).mtimeMs);
    expect(files).toHaveLength(2);
    expect(readRecord(files[1]!).readings.length).toBe(screenCount);
    expect(session.problems).toEqual([]);
  }, 120_000);

  it('plays a recorded run back and fits it again', async () => {
    const { page } = session.browser;
    const [first] = recordFiles(session.dataDir).sort((a, b) => statSync(a).mtimeMs - statSync(b).mtimeMs);
    const recorded = readRecord(first!).readings.length;
    await page.getByRole('radio', { name: 'Recorded run' }).check();
    const name = first!.split('/').pop()!;
    await expect.poll(async () => page.getByRole('combobox', { name: 'Recorded run' }).locator('option').allTextContents(), { timeout: 10_000 }).toContain(name);
    await page.getByRole('combobox', { name: 'Recorded run' }).selectOption(name);
    await page.getByLabel('Replay speed').selectOption('max');
    await page.getByTestId('use-source').click();
    await page.getByText('Instrument connected: ready to start').waitFor({ timeout: 20_000 });
    // Connected but not started: nothing of the last run is on the screen (it would give the answer away).
    expect(countIn(await page.getByTestId('drawn').textContent())).toBe(0);
    await expect(page.getByTestId('k').textContent()).resolves.not.toMatch(/±/);
    await page.getByRole('button', { name: /^Start/ }).click();
    // Played as fast as possible, the whole record arrives and the run ends by itself or by Stop.
    await expect.poll(async () => countIn(await page.getByTestId('drawn').textContent()), { timeout: 30_000 }).toBe(recorded);
    await expect.poll(async () => page.getByTestId('k').textContent(), { timeout: 30_000 }).toMatch(/±/);
    // The replay may end by itself at any moment: Stop is pressed only while it is still enabled
    // (a click on a button that has just been disabled would wait for it in vain).
    await page.getByRole('button', { name: /^Stop/ }).click({ timeout: 1_000 }).catch(() => {});
    await page.getByText(/^Stopped: \d+ readings recorded/).waitFor({ timeout: 20_000 });
    await expect(page.getByTestId('advice').textContent()).resolves.toMatch(/^Stopped/);
    expect(session.problems).toEqual([]);
  }, 120_000);

  it('switches to the linearised views and back, saying what each shows', async () => {
    const { page } = session.browser;
    const caption = page.getByTestId('view-caption');
    await page.getByRole('tab', { name: 'ln(A − A∞) against t' }).click();
    await expect.poll(() => caption.textContent()).toMatch(/straight line means first order/);
    await expect(page.getByRole('tab', { name: 'ln(A − A∞) against t' }).getAttribute('aria-selected')).resolves.toBe('true');
    await page.screenshot({ path: join(ARTIFACTS, 'run-screen-ln.png') });
    await page.getByRole('tab', { name: '1/(A − A∞) against t' }).click();
    await expect.poll(() => caption.textContent()).toMatch(/straight line means second order/);
    await page.getByRole('tab', { name: 'A against t' }).click();
    await expect.poll(() => caption.textContent()).toMatch(/^Absorbance against time/);
    expect(session.problems).toEqual([]);
  });

  it('keeps k whole at 1000 px wide and grows every text, the chart axes too, in the large-text mode', async () => {
    const { page } = session.browser;
    await expect.poll(async () => page.getByTestId('k').textContent(), { timeout: 20_000 }).toMatch(/±/);
    const whole = async () => page.evaluate(() => {
      const k = document.querySelector('[data-testid="k"]')!;
      const panel = k.closest('.panel')!;
      const a = k.getBoundingClientRect(), b = panel.getBoundingClientRect();
      return a.left >= b.left && a.right <= b.right + 0.5;
    });
    for (const width of [1000, 1024, 1280]) {
      await page.setViewportSize({ width, height: 768 });
      await page.waitForTimeout(300);
      expect(await whole(), `k inside its panel at ${width} px`).toBe(true);
    }
    const rootPx = () => page.evaluate(() => parseFloat(getComputedStyle(document.documentElement).fontSize));
    const normal = await rootPx();
    await page.getByRole('button', { name: 'Large text' }).click();
    expect(await rootPx()).toBeGreaterThan(normal * 1.3);
    await page.waitForTimeout(500);
    expect(await whole()).toBe(true);
    await page.screenshot({ path: join(ARTIFACTS, 'run-screen-large-text.png') });
    await page.getByRole('button', { name: 'Large text' }).click();
    expect(await rootPx()).toBe(normal);
    await page.setViewportSize({ width: 1280, height: 800 });
  });

  // Last: it ends the service.
  it('says plainly when the bench service goes away, and keeps what it shows', async () => {
    const { page } = session.browser;
    const before = countIn(await page.getByTestId('drawn').textContent());
    await session.serve.stop();
    await page.getByText('Service: LOST, reload the page').waitFor({ timeout: 10_000 });
    await expect(page.getByText('Bench service lost: reload the page').isVisible()).resolves.toBe(true);
    expect(countIn(await page.getByTestId('drawn').textContent())).toBe(before);
  });
});
