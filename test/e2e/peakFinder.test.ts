/**
 * Finding the measuring wavelength on the screen, against the real `rateline serve`
 * (simulated instrument): asked before connecting, it says to connect; connected, it
 * shows the spectrum with its maximum marked and offers it, and accepting it sets the
 * wavelength field and the bench. A picture of the panel goes to test-artifacts/.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { defaultInstrumentSettings } from '../../acquisition/sources/simulatedInstrument';
import { DEMO_RUN } from '../../kinetics/reactionModel';
import { ROOT } from './serveProcess';
import { useScreenSession } from './screenSession';

const ARTIFACTS = join(ROOT, 'test-artifacts');

describe('find the peak on the screen', () => {
  const session = useScreenSession('rateline-peak-e2e-', 50);

  it('offers the absorbance maximum of the sample and sets the wavelength from it', async () => {
    const { page } = session.browser;
    await page.goto(session.serve.url);
    await page.getByText('Service: connected').waitFor({ timeout: 20_000 });
    const sentence = page.getByTestId('peak-sentence');

    // Nothing connected yet: one sentence, no chart, nothing offered.
    await page.getByTestId('find-peak').click();
    await expect.poll(() => sentence.textContent(), { timeout: 10_000 }).toBe('find the peak: no instrument is connected; press connect first.');
    await expect(page.getByTestId('use-peak').isVisible()).resolves.toBe(false);

    await page.getByTestId('use-source').click();
    await page.getByText(/^Connected: /).waitFor({ timeout: 20_000 });
    await page.getByTestId('find-peak').click();
    await expect.poll(() => sentence.textContent(), { timeout: 20_000 }).toMatch(/^Absorbance maximum at \d+\.\d nm \(from the spectrum of the sample\); use it\?$/);
    const offered = Number(/at (\d+\.\d) nm/.exec((await sentence.textContent())!)![1]);
    // reference: the band centre of the demo instrument the service runs (its settings, not a number typed here)
    const centre = defaultInstrumentSettings({ order: DEMO_RUN.order, k: DEMO_RUN.k, a0: DEMO_RUN.a0, aInf: DEMO_RUN.aInf }).bandCentre_nm;
    expect(Math.abs(offered - centre)).toBeLessThan(1);
    await expect(page.locator('[data-testid="peak-chart"] canvas').count()).resolves.toBe(1);

    // Type another wavelength first, so that the change to the offered one is seen.
    const field = page.getByTestId('wavelength');
    await field.fill('600');
    const use = page.getByTestId('use-peak');
    await expect(use.textContent()).resolves.toBe(`Use ${offered.toFixed(1)} nm`);
    await use.click();
    await expect.poll(() => field.inputValue(), { timeout: 10_000 }).toBe(String(offered));
    await expect.poll(() => page.getByTestId('peak-done').textContent(), { timeout: 10_000 }).toBe(`Measuring wavelength set to ${offered.toFixed(1)} nm.`);
    // the bench holds it too: a fresh page shows it in the field
    const again = await session.browser.context.newPage();
    await again.goto(session.serve.url);
    await again.getByText('Service: connected').waitFor({ timeout: 20_000 });
    await expect.poll(() => again.getByTestId('wavelength').inputValue(), { timeout: 10_000 }).toBe(String(offered));
    await again.close();

    // Ask once more, for the picture: the chart, the marked maximum and the offer.
    await page.getByTestId('find-peak').click();
    await expect.poll(() => use.isVisible(), { timeout: 20_000 }).toBe(true);
    mkdirSync(ARTIFACTS, { recursive: true });
    await page.mouse.move(5, 790);
    await page.waitForTimeout(200);
    await page.screenshot({ path: join(ARTIFACTS, 'peak-finder-screen.png') });
    // The setup column scrolls on an 800-pixel screen; a taller window shows the whole panel in one picture.
    await page.setViewportSize({ width: 1280, height: 1300 });
    await page.waitForTimeout(300);
    await page.locator('section.panel.source').screenshot({ path: join(ARTIFACTS, 'peak-finder.png') });
    expect(session.problems).toEqual([]);
  }, 180_000);
});
