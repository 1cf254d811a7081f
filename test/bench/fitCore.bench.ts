/**
 * The general fitting core under the engine's load: a weighted three-parameter
 * first-order fit of 3000 points (demo kinetics, invented), warm-started from the
 * previous answer as the streaming engine does, cold from rough starting values,
 * and robust (Huber). Targets:
 *  - four such warm fits (one per model) at least 10 times a second, i.e. a warm fit
 *    in ≤ 25 ms, with room to spare on a shared 2-core machine;
 *  - no allocation per point per iteration: the bytes a fit allocates do not grow
 *    with the number of iterations (cold fit with many iterations vs warm with few).
 * Ratios are measured in this one run.
 * Run: node --expose-gc --import tsx test/bench/fitCore.bench.ts
 */
import { performance } from 'node:perf_hooks';
import { fitLeastSquares } from '../../kinetics/fit/leastSquares';
import type { FitProblem } from '../../kinetics/fit/fitTypes';
import { DEMO_RUN, absorbanceSigma, simulateRun } from '../../kinetics/reactionModel';

const N = 3000;
const WARM_TARGET_MS = 25;

const run = simulateRun({ ...DEMO_RUN, dt_s: 900 / (N - 1), duration_s: 900, seed: 17 });
const weights = Float64Array.from(run.absorbance, (a) => 1 / absorbanceSigma(Math.max(a, 0), DEMO_RUN.sigmaT) ** 2);

const model = (t: number, p: Float64Array): number => p[1]! + (p[0]! - p[1]!) * Math.exp(-p[2]! * t);
const jacobian = (t: number, p: Float64Array, out: Float64Array): void => {
  const e = Math.exp(-p[2]! * t);
  out[0] = e;
  out[1] = 1 - e;
  out[2] = -(p[0]! - p[1]!) * t * e;
};

function problem(start: [number, number, number], extra: Partial<FitProblem> = {}): FitProblem {
  return {
    parameters: [
      { name: 'a0', value: start[0] },
      { name: 'aInf', value: start[1] },
      { name: 'k', value: start[2], min: 0 },
    ],
    x: run.time_s,
    y: run.absorbance,
    weights,
    model,
    jacobian,
    ...extra,
  };
}

function gc(): void {
  (globalThis as { gc?: () => void }).gc?.();
}

function timeEach(label: string, make: () => FitProblem, repeats: number): { ms: number; iterations: number } {
  for (let i = 0; i < 40; i++) fitLeastSquares(make()); // warm the JIT
  gc();
  let iterations = 0;
  const start = performance.now();
  for (let i = 0; i < repeats; i++) iterations = fitLeastSquares(make()).iterations;
  const ms = (performance.now() - start) / repeats;
  console.log(`${label.padEnd(34)} ${ms.toFixed(3)} ms per fit, ${iterations} iteration(s)`);
  return { ms, iterations };
}

/** Heap bytes one fit leaves behind before any collection (a single fit stays below the scavenge threshold). */
function bytesPerFit(make: () => FitProblem): number {
  const samples: number[] = [];
  for (let k = 0; k < 15; k++) {
    const p = make();
    gc();
    const before = process.memoryUsage().heapUsed;
    const fit = fitLeastSquares(p);
    const after = process.memoryUsage().heapUsed;
    if (!fit.ok) throw new Error('fit failed');
    samples.push(after - before);
  }
  samples.sort((a, b) => a - b);
  return samples[Math.floor(samples.length / 2)]!;
}

const answer = fitLeastSquares(problem([0.6, 0.01, 0.003]));
const warmStart: [number, number, number] = [answer.byName.a0!.value, answer.byName.aInf!.value, answer.byName.k!.value];
const coldStart: [number, number, number] = [0.3, 0.2, 0.05];

// One pass of the model over all points: the unit of work.
const p0 = Float64Array.from(warmStart);
let sink = 0;
const passStart = performance.now();
for (let r = 0; r < 2000; r++) for (let i = 0; i < N; i++) sink += model(run.time_s[i]!, p0);
const passMs = (performance.now() - passStart) / 2000;
console.log(`one model pass over ${N} points      ${passMs.toFixed(4)} ms`);

const warm = timeEach('warm start (analytic Jacobian)', () => problem(warmStart), 200);
const cold = timeEach('cold start (analytic Jacobian)', () => problem(coldStart), 100);
const fd = timeEach('warm start (finite differences)', () => {
  const p = problem(warmStart);
  delete p.jacobian;
  return p;
}, 200);
const robust = timeEach('warm start, robust Huber', () => problem(warmStart, { options: { robust: 'huber' } }), 100);

const warmBytes = bytesPerFit(() => problem(warmStart));
const coldBytes = bytesPerFit(() => problem(coldStart));
console.log(`heap per fit: warm ${(warmBytes / 1024).toFixed(0)} KiB (${warm.iterations} it), cold ${(coldBytes / 1024).toFixed(0)} KiB (${cold.iterations} it)`);

const fitsPerSecondOfFour = 1000 / (4 * warm.ms);
const allocRatio = coldBytes / warmBytes;
console.log(`\nratios measured in this run:`);
console.log(`  warm fit / model pass            ${(warm.ms / passMs).toFixed(1)}×`);
console.log(`  cold fit / warm fit              ${(cold.ms / warm.ms).toFixed(1)}×`);
console.log(`  finite differences / analytic    ${(fd.ms / warm.ms).toFixed(1)}×`);
console.log(`  robust / plain                   ${(robust.ms / warm.ms).toFixed(1)}×`);
console.log(`  four-model refits per second     ${fitsPerSecondOfFour.toFixed(0)} (target ≥ ${1000 / (4 * WARM_TARGET_MS)})`);
console.log(`  heap per fit, cold / warm        ${allocRatio.toFixed(2)} (target ≤ 1.5 despite ${cold.iterations} vs ${warm.iterations} iterations)`);
console.log(`  heap per fit ÷ points            ${(coldBytes / N).toFixed(0)} bytes (buffers and result; not per iteration)`);
if (sink === 42) console.log('');

const failures: string[] = [];
if (warm.ms > WARM_TARGET_MS) failures.push(`warm fit ${warm.ms.toFixed(1)} ms > ${WARM_TARGET_MS} ms`);
if (allocRatio > 1.5) failures.push(`allocation grows with iterations (${allocRatio.toFixed(2)}×)`);
if (failures.length) {
  console.log(`FAIL: ${failures.join('; ')}`);
  process.exitCode = 1;
} else console.log('PASS');
