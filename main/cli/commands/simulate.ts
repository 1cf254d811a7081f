/**
 * `rateline simulate [--order zero|first|second|N] [--k K] [--a0 A] [--a-inf A] [--noise-t S]
 * [--dt S] [--duration S] [--seed N] [--spikes N] --out FILE.csv` writes a synthetic run from
 * the physical model in kinetics/reactionModel.ts (transmittance noise, so σ_A grows with
 * absorbance). Defaults are the demo scenario (DEMO.md), and the file says it is demo data.
 */
import { statSync } from 'node:fs';
import { writeFile } from 'node:fs/promises';
import { InputError } from '../common/cliErrors';
import { parseCommandArguments } from '../common/arguments';
import { SEED_WORDS, seedCheck } from '../common/benchRanges';
import { LONGEST_RUN_S } from '../../../acquisition/files/runPlausibility';
import { DEMO_RUN, simulateRun, type SimulatedOrder, type SimulatedRunSpec } from '../../../kinetics/reactionModel';
import { halfLife } from '../../../kinetics/halfLife';

const HELP = `usage: rateline simulate [options] --out FILE.csv

  --order O      zero, first, second or a number (default first)
  --k K          rate constant (default: the demo's 3.5e-3 s^-1 for first order; for other
                 orders, the k that gives the demo's half-life at the same A0 and A∞)
  --a0 A         absorbance at mixing (default 0.65)
  --a-inf A      end absorbance (default 0.005; above --a0 for a product-forming run)
  --noise-t S    transmittance noise σ_T (default 0.001)
  --dt S         sampling interval in s (default 1)
  --duration S   run length in s (default 900)
  --seed N       random seed (default 1)
  --spikes N     bubble spikes to add (default 0)
  --out FILE     where to write the CSV (time_s,absorbance)`;

function parseOrder(raw: string | undefined): SimulatedOrder {
  if (raw === undefined) return DEMO_RUN.order;
  if (raw === 'zero' || raw === 'first' || raw === 'second') return raw;
  const n = Number(raw);
  if (raw.trim() === '' || !Number.isFinite(n) || n < 0 || n > 3) {
    throw new InputError(`rateline simulate: --order ${raw} is not an order; use zero, first, second or a number from 0 to 3.`);
  }
  return n;
}

/** k giving the demo's half-life (ln2 / 3.5e-3 s ≈ 198 s) for another order, so the defaults stay comparable. */
function demoK(order: SimulatedOrder, a0: number, aInf: number): number {
  if (order === 'first' || order === 1) return DEMO_RUN.k;
  const target = Math.LN2 / DEMO_RUN.k;
  const model = order === 'zero' ? 'zero' : order === 'second' ? 'second' : 'nth';
  const n = typeof order === 'number' ? order : order === 'zero' ? 0 : 2;
  const p = Float64Array.from([1, a0, aInf, n]);
  const hlAtUnitK = halfLife(model, p); // t½ ∝ 1/k for every order
  return hlAtUnitK === null ? DEMO_RUN.k : hlAtUnitK / target;
}

export async function run(argv: string[]): Promise<number> {
  const cmd = 'simulate';
  const args = parseCommandArguments(cmd, argv, {
    order: 'value', k: 'value', a0: 'value', 'a-inf': 'value', 'noise-t': 'value', dt: 'value', duration: 'value', seed: 'value', spikes: 'value', out: 'value',
  });
  if (args.help) { console.log(HELP); return 0; }
  if (args.positionals.length > 0) throw new InputError(`rateline simulate: unexpected argument "${args.positionals[0]}"; the output file goes after --out.`);
  const out = args.value('out');
  if (!out) throw new InputError('rateline simulate: no --out FILE.csv given; say where to write the run.');
  const order = parseOrder(args.value('order'));
  const a0 = args.number('a0', (x) => x > 0 && x < 5, 'an absorbance between 0 and 5') ?? DEMO_RUN.a0;
  const aInf = args.number('a-inf', (x) => x >= 0 && x < 5, 'an absorbance between 0 and 5') ?? DEMO_RUN.aInf;
  // Above --a0 is a product-forming run (the absorbance rises to its plateau); equal is no reaction at all.
  if (aInf === a0) throw new InputError(`rateline simulate: --a-inf ${aInf} equals --a0 ${a0}; nothing would react: give an end absorbance below (reactant used up) or above (product formed) the start.`);
  const k = args.number('k', (x) => x > 0, 'a positive rate constant') ?? demoK(order, a0, aInf);
  const sigmaT = args.number('noise-t', (x) => x >= 0 && x < 0.1, 'a transmittance noise between 0 and 0.1') ?? DEMO_RUN.sigmaT;
  const dt_s = args.number('dt', (x) => x > 0, 'a positive interval in seconds') ?? DEMO_RUN.dt_s;
  const duration_s = args.number('duration', (x) => x > 0 && x <= LONGEST_RUN_S, `a duration in seconds above 0 and at most ${LONGEST_RUN_S.toExponential(0)} s`) ?? DEMO_RUN.duration_s;
  if (duration_s / dt_s > 2e7) throw new InputError(`rateline simulate: ${Math.round(duration_s / dt_s)} readings is too many; use a larger --dt or a shorter --duration (at most 2e7 readings).`);
  const seed = args.number('seed', seedCheck, SEED_WORDS) ?? DEMO_RUN.seed;
  const spikes = args.number('spikes', (x) => Number.isInteger(x) && x >= 0, 'a whole number of spikes') ?? 0;
  const readings = Math.floor(duration_s / dt_s + 1e-9) + 1;
  if (spikes > readings) throw new InputError(`rateline simulate: --spikes ${spikes} is more than the ${readings} readings of the run; give at most ${readings}.`);
  const spec: SimulatedRunSpec = { order, k, a0, aInf, sigmaT, dt_s, duration_s, seed, spikes };
  const runData = simulateRun(spec);
  const lines = [
    `# simulated run (demo data): order ${order}, k ${k}, a0 ${a0}, a_inf ${aInf}, sigma_T ${sigmaT}, dt ${dt_s} s, seed ${seed}, spikes ${spikes}`,
    'time_s,absorbance',
  ];
  for (let i = 0; i < runData.time_s.length; i++) {
    lines.push(`${+runData.time_s[i].toPrecision(12)},${runData.absorbance[i].toFixed(6)}`);
  }
  try {
    // 'wx': an existing file is never overwritten, as with every other command that writes one.
    await writeFile(out, lines.join('\n') + '\n', { flag: 'wx' });
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'EEXIST') {
      const what = statSync(out, { throwIfNoEntry: false })?.isDirectory() ? 'a folder' : 'a file';
      throw new InputError(`rateline simulate: ${out} is already ${what}, and a file is never overwritten; choose another --out name.`);
    }
    throw new InputError(`rateline simulate: cannot write ${out} (${code === 'ENOENT' ? 'no such folder' : code ?? String(err)}); choose another --out path.`);
  }
  console.log(`wrote ${runData.time_s.length} readings (0 to ${duration_s} s, demo data) to ${out}`);
  return 0;
}
