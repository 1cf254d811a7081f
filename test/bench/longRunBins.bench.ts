/**
 * Binned fits on long runs (demo kinetics, invented: first order, k = 3.5e-3 s⁻¹, 900 s
 * however many readings): at 10⁶ and 10⁷ readings the analyzer's first-order k, most
 * readings in bins, against the exact fit of every reading with no bins
 * (test/fixtures/longRunBinning.ts). Targets: with demo noise (σ_T 0.001), k within
 * 0.1 SE of the exact fit; noise-free, k within 1e-6 relative of the truth (the
 * simulator's k). The 10⁵ case is in npm test (kinetics/readingBins.longRun.test.ts).
 * Run: node --expose-gc --import tsx test/bench/longRunBins.bench.ts
 */
import { performance } from 'node:perf_hooks';
import { binnedAgainstExact } from '../fixtures/longRunBinning';

const rows: [string, string, string, string][] = [];
const target = (name: string, value: string, goal: string, pass: boolean) => rows.push([name, value, goal, pass ? 'PASS' : 'MISS']);

for (const n of [1e6, 1e7]) {
  for (const noisy of [true, false]) {
    const t0 = performance.now();
    const r = binnedAgainstExact(n, noisy);
    const s = ((performance.now() - t0) / 1000).toFixed(1);
    const label = `${n.toExponential(0)} readings, ${noisy ? 'demo noise' : 'noise-free'}`;
    console.log(`${label}: ${r.bins} bins; k binned ${r.kBinned.toPrecision(10)} ± ${r.seBinned.toPrecision(3)}, exact ${r.kExact.toPrecision(10)} ± ${r.seExact.toPrecision(3)} (${s} s${noisy ? ', exact fit included' : ''})`);
    if (noisy) target(`${label}: |k binned − k exact| / SE`, r.differenceInSe.toPrecision(2), '≤ 0.1', r.differenceInSe <= 0.1);
    else target(`${label}: |k binned / k true − 1|`, r.relativeErrorBinned.toExponential(1), '≤ 1e-6', r.relativeErrorBinned <= 1e-6);
  }
}

const w = [0, 1, 2, 3].map((j) => Math.max(...rows.map((r) => r[j].length), ['target', 'measured', 'goal', ''][j].length));
console.log('\n' + ['target', 'measured', 'goal', 'result'].map((h, j) => h.padEnd(w[j])).join('  '));
for (const r of rows) console.log(r.map((c, j) => c.padEnd(w[j])).join('  '));
if (rows.some((r) => r[3] !== 'PASS')) {
  console.log('FAIL: a binned fit strayed from the exact fit or the truth');
  process.exitCode = 1;
}
