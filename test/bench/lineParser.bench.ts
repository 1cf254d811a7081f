/**
 * The line protocol parser under load: a capture of typical lines (absorbance and
 * counts readings, temperature lines, a few spectra, and one bad line in fifty, as a
 * noisy cable gives) parsed again and again. Targets:
 *  - at least 200,000 lines per second;
 *  - compared with the physical rate of a 115200-baud line: 10 bits a byte (start, 8
 *    data, stop) give 11,520 bytes/s, and a short reading line of about 40 bytes comes to
 *    ~290 lines/s; we take 1,000 lines/s as a generous ceiling, so the parser should run
 *    over 100× faster than any line can feed it.
 * Ratios are measured in this one run.
 * Run: node --expose-gc --import tsx test/bench/lineParser.bench.ts
 */
import { performance } from 'node:perf_hooks';
import { LineParser } from '../../acquisition/protocol/lineProtocol';
import { formatAbsorbance, formatCounts, formatSpectrum, formatTemperature } from '../../acquisition/protocol/lineFormat';
import { seededRandom } from '../../kinetics/random';

const TARGET_LINES_PER_S = 200_000;
const LINE_RATE_115200 = 1_000;
const N = 20_000;

// Lines of one long run (demo kinetics, invented), in device-time order.
const rng = seededRandom(5);
const lines: string[] = [];
let bytes = 0;
for (let i = 0; i < N; i++) {
  const t = i * 0.1;
  const a = 0.005 + 0.645 * Math.exp(-0.0035 * t) + 0.001 * rng.normal();
  let line: string;
  if (i % 50 === 49) line = formatAbsorbance(t, 630, a, 25).replace('^', '^F'); // broken trailer: refused
  else if (i % 500 === 250) line = formatSpectrum(t, 'absorbance', 500, 2, Array.from({ length: 131 }, (_, j) => Math.exp(-0.5 * ((500 + 2 * j - 630) / 25) ** 2)))!;
  else if (i % 10 === 5) line = formatTemperature(t, 25 + 0.01 * rng.normal());
  else line = formatAbsorbance(t, 630, a, 25.0 + 0.01 * rng.normal());
  lines.push(line);
  bytes += line.length;
}
const countsLines = Array.from({ length: N }, (_, i) => formatCounts(false, i * 0.1, 630, 20000 + Math.round(1000 * rng.normal()), 800, 25));

function gc(): void {
  (globalThis as { gc?: () => void }).gc?.();
}

let sink = 0;
function linesPerSecond(label: string, capture: string[], rounds: number): number {
  for (let w = 0; w < 3; w++) { const p = new LineParser(); for (const l of capture) sink += p.parse(l).kind.length; } // warm the JIT
  gc();
  const start = performance.now();
  let parsed = 0;
  for (let r = 0; r < rounds; r++) {
    const p = new LineParser(); // a fresh parser per round: the capture's device time starts again
    for (const l of capture) { sink += p.parse(l).kind.length; parsed++; }
  }
  const s = (performance.now() - start) / 1000;
  const rate = parsed / s;
  console.log(`${label.padEnd(40)} ${(rate / 1000).toFixed(0)} k lines/s (${parsed} lines in ${s.toFixed(3)} s)`);
  return rate;
}

const mixed = linesPerSecond('mixed capture (2% bad lines)', lines, 15);
const counts = linesPerSecond('counts readings', countsLines, 15);
const check = new LineParser();
for (const l of lines) check.parse(l);
console.log(`capture: ${N} lines, ${(bytes / N).toFixed(0)} characters per line on average; refused ${check.rejected.checksum + check.rejected.malformed}, accepted ${check.accepted}`);

const slowest = Math.min(mixed, counts);
console.log(`\nratios measured in this run:`);
console.log(`  parser / target (200,000 lines/s)            ${(slowest / TARGET_LINES_PER_S).toFixed(2)}×`);
console.log(`  parser / 115200-baud line (~1,000 lines/s)   ${(slowest / LINE_RATE_115200).toFixed(0)}×`);
if (sink === 42) console.log('');

if (slowest < TARGET_LINES_PER_S) {
  console.log(`FAIL: ${slowest.toFixed(0)} lines/s < ${TARGET_LINES_PER_S}`);
  process.exitCode = 1;
} else console.log('PASS');
