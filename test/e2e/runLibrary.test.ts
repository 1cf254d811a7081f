/**
 * The run library in Chromium against the real `rateline serve`: records made by
 * `rateline record` and one damaged record, all listed (the damaged one with its reason),
 * k as `rateline analyze` prints it for the same record, search, and playing a run back.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT } from './serveProcess';
import { useScreenSession } from './screenSession';
import { formatPlusMinus, ciHalfWidth } from '../../renderer/numberFormat';

const ARTIFACTS = join(ROOT, 'test-artifacts');
const rateline = (cwd: string, ...args: string[]) => spawnSync(process.execPath, [join(ROOT, 'bin', 'rateline.js'), ...args], { cwd, encoding: 'utf8' });

describe('the run library on the screen', () => {
  const session = useScreenSession('rateline-library-e2e-', 100);

  it('lists every record, a damaged one with its reason, finds runs by search and plays one back', async () => {
    const dir = session.dataDir;
    for (const [name, sample, operator] of [['a.jsonl', 'dye A (demo)', 'Ada'], ['b.jsonl', 'dye B (demo)', 'Ben']]) {
      const r = rateline(dir, 'record', '--simulate', '--speed', 'max', '--max-seconds', '300', '--out', name!, '--progress-ms', '60000', '--sample', sample!, '--operator', operator!);
      expect(r.status, r.stderr).toBe(0);
    }
    writeFileSync(join(dir, 'broken.jsonl'), readFileSync(join(dir, 'a.jsonl'), 'utf8').replace(/^.*\n/, 'not a header\n'));
    writeFileSync(join(dir, 'a.notes.jsonl'), '');
    const analyzed = JSON.parse(rateline(dir, 'analyze', 'b.jsonl', '--format', 'json').stdout);
    const kB = analyzed.models[analyzed.drivingModel];

    const { page } = session.browser;
    await page.goto(session.serve.url);
    await page.getByText('Service: connected').waitFor({ timeout: 20_000 });
    await page.getByRole('button', { name: 'Run library' }).click();
    const table = page.getByTestId('library');
    await expect.poll(async () => table.locator('tbody tr').count(), { timeout: 30_000 }).toBe(3);
    const text = (await table.textContent()) ?? '';
    expect(text).toContain('dye A (demo)');
    expect(text).toContain('Ben');
    expect(text).toMatch(/Cannot be listed: .*broken\.jsonl/);
    expect(text).not.toContain('notes');
    // k of b as analyze gives it, in the screen's digits
    const rowB = table.locator('tbody tr', { hasText: 'dye B' });
    expect(await rowB.textContent()).toContain(formatPlusMinus(kB.k, ciHalfWidth(kB.kCI95)));
    await page.setViewportSize({ width: 1280, height: 800 });
    await page.screenshot({ path: (mkdirSync(ARTIFACTS, { recursive: true }), join(ARTIFACTS, 'run-library.png')) });

    await page.getByLabel('Search the runs').fill('ada');
    await expect.poll(async () => table.locator('tbody tr').count()).toBe(1);
    await page.getByLabel('Search the runs').fill('nobody-here');
    await expect.poll(async () => table.locator('tbody tr').count()).toBe(0);
    await page.getByLabel('Search the runs').fill('dye b');
    await rowB.getByRole('button', { name: 'Play back' }).click();
    await page.getByText('Instrument connected: ready to start').waitFor({ timeout: 20_000 });
    await expect(page.getByRole('dialog', { name: 'Run library' }).isHidden()).resolves.toBe(true);
    expect(session.problems).toEqual([]);
  }, 180_000);
});
