/**
 * The bench service under a long run: a 10⁵-reading record replayed as fast as it goes
 * through the real service (replay source, RunAnalyzer, journal), as the screen would
 * receive it. Prints, from one run: readings per second against the demo's 1 reading/s
 * (the ratio), how many results and batches the screen was sent per second (the
 * throttle: at most 20 results/s), and the longest the event loop was held (the host's
 * IPC and socket wait that long at worst).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { monitorEventLoopDelay } from 'node:perf_hooks';
import { DEMO_RUN, simulateRun } from '../../kinetics/reactionModel';
import { createBenchService } from '../../main/bench/benchWiring';
import { openJournalSink } from '../../main/bench/journalSink';
import type { BridgeEvent } from '../../main/bridge/contract';

const N = 100_000;
const dir = mkdtempSync(join(tmpdir(), 'rateline-service-bench-'));

async function writeRecord(): Promise<string> {
  // The demo run sampled 10⁵ times over its 900 s (invented demo data).
  const run = simulateRun({ ...DEMO_RUN, dt_s: DEMO_RUN.duration_s / (N - 1), seed: 7 });
  const path = join(dir, 'long-demo.jsonl');
  const sink = await openJournalSink({ path, started: new Date(), details: { sample: 'demo' }, wavelength_nm: 630, source: { kind: 'simulated' }, demo: true });
  for (let i = 0; i < N; i++) {
    sink.reading({ deviceTime_s: run.time_s[i]!, hostTime_ms: i, absorbance: run.absorbance[i]!, wavelength_nm: 630, cellTemperature_C: null, flags: 0 });
  }
  await sink.close({ reason: 'user', detail: 'bench record', rejected: {} });
  return 'long-demo.jsonl';
}

async function main(): Promise<void> {
  const file = await writeRecord();
  const svc = createBenchService({ host: 'web', dataDir: dir });
  let results = 0;
  let batches = 0;
  let readings = 0;
  let done: () => void = () => undefined;
  const finished = new Promise<void>((r) => (done = r));
  let closed = false;
  svc.subscribe((e: BridgeEvent) => {
    if (e.type === 'analysis') { results++; if (closed && e.atCount === N) done(); }
    if (e.type === 'readings') { batches++; readings += e.time_s.length; }
    if (e.type === 'record' && e.status === 'closed') closed = true;
  });
  await svc.handle({ type: 'chooseSource', source: { kind: 'replay', file, speed: 'max' } });
  const t0 = performance.now();
  const startHold = performance.now();
  await svc.handle({ type: 'start' }); // reads and checks the whole record before it plays
  const opened_ms = performance.now() - startHold;
  const delay = monitorEventLoopDelay({ resolution: 5 });
  delay.enable();
  await finished;
  const seconds = (performance.now() - t0) / 1000;
  delay.disable();
  await svc.dispose();
  rmSync(dir, { recursive: true, force: true });

  if (readings !== N) throw new Error(`the screen was sent ${readings} readings of ${N}`);
  const perSecond = N / seconds;
  console.log(`bench service, ${N} readings replayed through analyzer and journal: ${seconds.toFixed(2)} s`);
  console.log(`  readings/s ${perSecond.toFixed(0)}  =  ${(perSecond / 1).toFixed(0)}× the demo's 1 reading/s`);
  console.log(`  results sent ${(results / seconds).toFixed(1)}/s (throttle ≤ 20/s: ${results / seconds <= 20.5 ? 'held' : 'BROKEN'}), batches ${(batches / seconds).toFixed(1)}/s`);
  console.log(`  opening the record (read and checked whole): ${opened_ms.toFixed(0)} ms`);
  console.log(`  while playing: longest event-loop hold ${(delay.max / 1e6).toFixed(1)} ms, p99 ${(delay.percentile(99) / 1e6).toFixed(1)} ms`);
  if (results / seconds > 20.5) process.exitCode = 1;
}

await main();
