/**
 * Redraw cost of the run chart in Chromium, timed with the browser's own performance
 * marks (the screen marks each chart redraw as "rateline:chart"). The built screen is
 * fed through an in-page stand-in for the bench service, so only the screen's work is
 * timed: reduce to pixel columns, build the frame, draw readings, curves, residuals.
 * Targets: 10⁵ readings redraw in ≤ 16 ms (median), and 10⁶ readings, reduced, still
 * within one 16 ms frame. For scale, a bare uPlot drawing 10⁵ points unreduced.
 * Run: node --expose-gc --import tsx test/bench/redraw.bench.ts
 */
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { openChromium, serveFolder } from '../e2e/chromium';
import { benchState, demoAnalysis, installFakeBridge } from '../e2e/fakeBridge';

const root = join(import.meta.dirname, '..', '..');
const FRAME_MS = 16;
const REDRAWS = 40;

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2;
}
function quantile(xs: number[], q: number): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor(q * s.length))]!;
}

async function main(): Promise<number> {
  execFileSync(process.execPath, [join(root, 'node_modules/vite/bin/vite.js'), 'build', '--config', 'renderer/vite.config.ts', '--logLevel', 'error'], { cwd: root, stdio: 'inherit' });
  const browser = await openChromium({ width: 1280, height: 800 });
  let failed = 0;
  try {
    const { page } = browser;
    await page.addInitScript(installFakeBridge, benchState(0));
    const url = await serveFolder(page, join(root, 'dist', 'renderer'));
    await page.goto(url);
    await page.waitForSelector('.chart-main canvas');
    const rows: string[] = [];
    for (const n of [10_000, 100_000, 1_000_000]) {
      const analysis = demoAnalysis(n, 900);
      const [times, growing]: [number[], number[]] = await page.evaluate(async ({ n, analysis, redraws }) => {
        const fake = window.__ratelineFake!;
        const runId = `bench-${n}`;
        fake.emit({ type: 'state', state: { ...fake.state, runId, pointCount: 0 } });
        const dt = 900 / n;
        let seed = 12345;
        const rnd = () => ((seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0) / 2 ** 32);
        for (let from = 0; from < n; from += 4096) {
          const m = Math.min(4096, n - from);
          const time_s = new Array<number>(m), absorbance = new Array<number>(m), flags = new Array<number>(m).fill(0);
          for (let j = 0; j < m; j++) {
            const t = (from + j) * dt;
            time_s[j] = t;
            absorbance[j] = 0.005 + 0.645 * Math.exp(-3.5e-3 * t) + 0.004 * (rnd() - 0.5);
          }
          fake.emit({ type: 'readings', runId, fromIndex: from, time_s, absorbance, flags });
        }
        const frame = () => new Promise<void>((r) => requestAnimationFrame(() => r()));
        await frame(); await frame();
        performance.clearMeasures('rateline:chart');
        for (let i = 0; i < redraws; i++) {
          // A fresh result object: the chart redraws everything, as when a new fit arrives.
          fake.emit({ type: 'analysis', runId, atCount: n, result: { ...analysis } });
          await frame();
        }
        await frame();
        const fitOnly = performance.getEntriesByName('rateline:chart').map((e) => e.duration);
        // The live case: 20 new readings arrive before each redraw, so the whole run is reduced again.
        performance.clearMeasures('rateline:chart');
        let at = n;
        for (let i = 0; i < redraws; i++) {
          const time_s: number[] = [], absorbance: number[] = [], flags: number[] = [];
          for (let j = 0; j < 20; j++, at++) { time_s.push(at * dt); absorbance.push(0.005 + 0.645 * Math.exp(-3.5e-3 * at * dt)); flags.push(0); }
          fake.emit({ type: 'readings', runId, fromIndex: at - 20, time_s, absorbance, flags });
          await frame();
        }
        await frame();
        return [fitOnly, performance.getEntriesByName('rateline:chart').map((e) => e.duration)];
      }, { n, analysis, redraws: REDRAWS });
      const drawn = await page.textContent('[data-testid=drawn]');
      const med = median(times), p95 = quantile(times, 0.95);
      const gmed = median(growing), gp95 = quantile(growing, 0.95);
      rows.push(`${String(n).padStart(9)} readings, new fit:      median ${med.toFixed(2)} ms  p95 ${p95.toFixed(2)} ms  median/frame ${(med / FRAME_MS).toFixed(3)}  (${times.length} redraws)`);
      rows.push(`${String(n).padStart(9)} readings, new readings: median ${gmed.toFixed(2)} ms  p95 ${gp95.toFixed(2)} ms  median/frame ${(gmed / FRAME_MS).toFixed(3)}  (${growing.length} redraws; ${drawn})`);
      if (n >= 100_000 && !(med <= FRAME_MS && gmed <= FRAME_MS)) failed++;
    }

    // For scale: a bare uPlot drawing 10⁵ points as a line, nothing reduced.
    const raw = await browser.context.newPage();
    await raw.route('http://raw.invalid/**', (r) => r.fulfill({ status: 200, contentType: 'text/html', body: '<!doctype html><body></body>' }));
    await raw.goto('http://raw.invalid/');
    await raw.addScriptTag({ content: readFileSync(join(root, 'node_modules/uplot/dist/uPlot.iife.min.js'), 'utf8') });
    const rawTimes: number[] = await raw.evaluate(async ({ n, redraws }) => {
      const x = new Float64Array(n), y = new Float64Array(n);
      for (let i = 0; i < n; i++) { x[i] = i * (900 / n); y[i] = 0.005 + 0.645 * Math.exp(-3.5e-3 * x[i]!) + 0.004 * (Math.random() - 0.5); }
      const U = (window as unknown as { uPlot: new (o: object, d: unknown, el: HTMLElement) => { setData(d: unknown): void; batch(f: () => void): void } }).uPlot;
      const u = new U({ width: 800, height: 420, scales: { x: { time: false } }, series: [{}, { stroke: '#000' }] }, [x, y], document.body);
      const out: number[] = [];
      for (let i = 0; i < redraws; i++) {
        y[0] = 0.65 + i * 1e-6;
        performance.mark('raw-start');
        // batch() commits (and draws) synchronously, so the mark spans the drawing too.
        u.batch(() => u.setData([x, y]));
        out.push(performance.measure('raw', 'raw-start').duration);
        await new Promise((r) => requestAnimationFrame(r));
      }
      return out;
    }, { n: 100_000, redraws: 20 });
    rows.push(`   100000 readings, bare uPlot line, unreduced: median ${median(rawTimes).toFixed(2)} ms  median/frame ${(median(rawTimes) / FRAME_MS).toFixed(3)}`);
    console.log('Run chart redraw in Chromium (performance marks), 1280×800 window:');
    for (const r of rows) console.log('  ' + r);
    console.log(failed ? `target missed in ${failed} case(s): redraw over ${FRAME_MS} ms` : `targets met: 10⁵ and 10⁶ readings redraw within one ${FRAME_MS} ms frame`);
  } finally {
    await browser.close();
  }
  return failed ? 1 : 0;
}

process.exitCode = await main();
