/**
 * A study on the screen against the real `rateline serve`: three records at 0.010, 0.020
 * and 0.040 M hypochlorite (made by `rateline record`, simulated instrument, demo data),
 * ticked in the run library and combined by concentration, then saved as a study file;
 * `rateline combine` of that saved study file prints the same report, digit for digit.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT } from './serveProcess';
import { useScreenSession } from './screenSession';

const ARTIFACTS = join(ROOT, 'test-artifacts');
const rateline = (cwd: string, ...args: string[]) => spawnSync(process.execPath, [join(ROOT, 'bin', 'rateline.js'), ...args], { cwd, encoding: 'utf8' });
/** The report's lines that carry numbers, with run paths reduced to file names (the screen names runs by their full path). */
const numbers = (text: string) => text.split('\n').filter((l) => /\d/.test(l))
  .map((l) => l.replace(/\/[^\s,;:)]*\/([^/\s,;:)]+\.jsonl)/g, '$1').replace(/\s+(record header|study file|study)$/, '').replace(/\s+/g, ' ').trim())
  // where the study came from is the one thing the two say differently
  .filter((l) => !/^(Study|study|Saved the study)\b/.test(l));

describe('a study on the screen', () => {
  const session = useScreenSession('rateline-study-e2e-', 100);

  it('combines ticked runs as rateline combine does, and saves a study file that combine reads back to the same digits', async () => {
    const dir = session.dataDir;
    const made: string[] = [];
    for (const [i, c] of ['0.010', '0.020', '0.040'].entries()) {
      const name = `bleach-${c}.jsonl`;
      const r = rateline(dir, 'record', '--simulate', '--speed', 'max', '--max-seconds', '900', '--seed', String(11 + i), '--out', name, '--progress-ms', '60000',
        '--conc', `hypochlorite=${c} M`, '--conc', 'dye=5.0 uM', '--temperature-c', '25.0');
      expect(r.status, r.stderr).toBe(0);
      made.push(name);
    }
    const { page } = session.browser;
    await page.goto(session.serve.url);
    await page.getByText('Service: connected').waitFor({ timeout: 20_000 });
    await page.getByRole('button', { name: 'Run library' }).click();
    const table = page.getByTestId('library');
    await expect.poll(async () => table.locator('tbody tr').count(), { timeout: 60_000 }).toBe(3);
    for (const name of made) await page.getByLabel(`In the study: ${name}`).check();
    await page.getByLabel('Excess reagent').fill('hypochlorite');
    await page.getByLabel('Followed species').fill('dye');
    await page.getByLabel('Study name').fill('bleach-series');
    await page.getByLabel('Safety note for the reagents').fill('Dilute sodium hypochlorite: eye protection and gloves; never with acids or ammonia (demo).');
    await page.getByRole('button', { name: 'Combine and save as a study' }).click();
    const report = page.getByTestId('study-report');
    await expect.poll(async () => report.textContent(), { timeout: 120_000 }).toMatch(/order/i);
    const shown = (await report.textContent()) ?? '';
    await expect(page.getByTestId('study-runs').locator('tbody tr').count()).resolves.toBe(3);
    await expect(page.locator('.study-plot circle').count()).resolves.toBe(3);
    mkdirSync(ARTIFACTS, { recursive: true });
    await page.screenshot({ path: join(ARTIFACTS, 'study-screen.png') });
    await page.locator('.study').screenshot({ path: join(ARTIFACTS, 'study-result.png') });

    const studies = readdirSync(dir).filter((n) => n.endsWith('.study.json'));
    expect(studies).toEqual(['bleach-series.v1.study.json']);
    const fromFile = rateline(dir, 'combine', studies[0]!);
    expect(fromFile.status, fromFile.stderr).toBe(0);
    const cli = numbers(fromFile.stdout);
    const screen = numbers(shown);
    expect(cli.length).toBeGreaterThan(3);
    expect(screen).toEqual(cli);
    // negative control: another series (two of the runs) does not print the same numbers
    const other = rateline(dir, 'combine', made[0]!, made[2]!, '--by', 'concentration', '--reagent', 'hypochlorite');
    expect(other.status, other.stderr).toBe(0);
    expect(numbers(other.stdout)).not.toEqual(cli);
    expect(session.problems).toEqual([]);
  }, 300_000);

  it('says in one sentence why a study cannot be combined', async () => {
    const { page } = session.browser;
    await page.getByLabel('Excess reagent').fill('ammonia');
    await page.getByRole('button', { name: 'Combine', exact: true }).click();
    const problem = page.locator('.study-problem');
    await expect.poll(async () => problem.textContent(), { timeout: 60_000 }).toMatch(/ammonia/);
    expect((await problem.textContent())!).not.toMatch(/\n\s+at /);
  }, 120_000);
});
