/**
 * Hands a rate law to the general fitting core (kinetics/fit). The core sees
 * x = the index of a pseudo-point, so the model can predict the bin mean (with its
 * curvature correction) rather than the value at the bin's mean time. The core is
 * given c = |A0 − A∞| instead of A0, with the run's direction (falling or rising) held, so
 * that "A∞ on the far side of A0" is the box bound c ≥ 0.
 * The reported statistics are then computed by finishFit like every other model's.
 */
import { fitLeastSquares } from '../fit/leastSquares';
import type { ParameterSpec } from '../fit/fitTypes';
import type { ModelName } from '../analysisTypes';
import { AINF as AINF_INDEX, A0 as A0_INDEX, K as K_INDEX, ORDER as ORDER_INDEX, type FitSeries, type ModelFit, type ModelOptions, type RateLaw } from './modelTypes';
import { aInfAtBoundWarning, binMean, failedModelFit, finishFit } from './rateLawStatistics';
// The parameter indices read once into module constants: an imported binding is a property
// read through a getter in some module loaders (the test runner's, tsx's), and these are
// read for every reading at every iteration.
const AINF = AINF_INDEX, A0 = A0_INDEX, K = K_INDEX, ORDER = ORDER_INDEX;

export interface CoreBounds {
  /** Extra parameter bounds beyond k ≥ 0, C ≥ 0, A∞ ≥ aInfMin (for the order n). */
  orderMin?: number;
  orderMax?: number;
  /** The order a law of three parameters carries in its k (2 for second order); the n-th order law's is its fitted n. */
  rateOrder?: number;
}

/**
 * Fits run by the core, their iterations and how many stopped at the iteration cap, per
 * model (for tests and the benchmark: a refit that hits the cap is wasted work and a
 * sign of a stop test that does not recognise a minimum).
 */
export interface CoreFitTally { fits: number; iterations: number; capHits: number }
export const CORE_MAX_ITERATIONS = 60;
export const coreFitTally: Record<string, CoreFitTally> = {};
export function resetCoreFitTally(): void { for (const k of Object.keys(coreFitTally)) delete coreFitTally[k]; }

const indexCache: { x: Float64Array } = { x: new Float64Array(0) };

function indices(count: number): Float64Array {
  if (indexCache.x.length < count) {
    const x = new Float64Array(Math.max(count, indexCache.x.length * 2));
    for (let i = 0; i < x.length; i++) x[i] = i;
    indexCache.x = x;
  }
  return indexCache.x;
}

export function fitWithCore(
  model: ModelName, law: RateLaw, s: FitSeries, start: Float64Array, opts: ModelOptions, bounds: CoreBounds = {},
): ModelFit {
  const np = start.length;
  const aInfFixed = opts.fixedAInf !== undefined;
  const dir = opts.direction ?? 1;
  const aInfMax = opts.aInfMax ?? Number.POSITIVE_INFINITY;
  const aInf0 = aInfFixed ? (opts.fixedAInf as number) : Math.min(aInfMax, Math.max(opts.aInfMin, start[AINF]));
  const c0 = Math.max(dir * (start[A0] - aInf0), 1e-12);
  const finiteOr = (v: number): number | undefined => (Number.isFinite(v) ? v : undefined);
  // The core fits the rate scale u = k·c^(n−1) (the initial fractional rate, s⁻¹) in place of
  // k. For a fixed u the law is linear in c and A∞, so the long k–c–A∞ valley of a run that
  // has not shown its end becomes a straight one, which Gauss–Newton steps follow at once;
  // in k itself the valley is curved (k·c is what the readings fix) and the iteration creeps
  // along it by shortened steps, often to its cap. The minimum is the same point.
  const orderOf = (q: Float64Array): number => (np > ORDER ? q[3] : bounds.rateOrder ?? 1);
  const n0 = np > ORDER ? start[ORDER] : bounds.rateOrder ?? 1;
  const specs: ParameterSpec[] = [
    { name: 'k', value: Math.max(start[K] * Math.pow(c0, n0 - 1), 1e-30), min: 0 },
    { name: 'c', value: c0, min: 0 },
    { name: 'aInf', value: aInf0, fixed: aInfFixed, min: finiteOr(opts.aInfMin), max: finiteOr(aInfMax) },
  ];
  if (np > ORDER) specs.push({ name: 'n', value: start[ORDER], min: bounds.orderMin, max: bounds.orderMax });
  // Core parameters q = (u, c, A∞[, n]) → rate-law parameters p = (k = u·c^(1−n), A0 = A∞ ± c, A∞[, n]).
  const p = new Float64Array(np);
  const g = new Float64Array(np);
  const toP = (q: Float64Array): Float64Array => {
    const c = q[1];
    p[K] = c > 0 ? q[0] * Math.pow(c, 1 - orderOf(q)) : 0;
    p[A0] = q[2] + dir * c; p[AINF] = q[2];
    if (np > ORDER) p[ORDER] = q[3];
    return p;
  };
  const predict = binMean; // a local, not an imported binding, on the per-reading path
  const result = fitLeastSquares({
    parameters: specs,
    x: indices(s.count),
    y: s.y,
    weights: s.w,
    count: s.count,
    model: (x, q) => { const i = x | 0; return predict(law, s.tau_s[i], s.v[i], toP(q)); },
    jacobian: (x, q, out) => {
      const pp = toP(q);
      law.gradient(s.tau_s[x | 0], pp, g);
      const c = q[1], k = pp[K], n = orderOf(q);
      // Chain rule through k = u·c^(1−n): ∂k/∂u = c^(1−n), ∂k/∂c = (1−n)k/c, ∂k/∂n = −k ln c.
      out[0] = c > 0 ? g[K] * Math.pow(c, 1 - n) : 0;
      out[1] = dir * g[A0] + (c > 0 ? g[K] * (1 - n) * k / c : 0);
      out[2] = g[A0] + g[AINF];
      if (np > ORDER) out[3] = g[ORDER] - (c > 0 ? g[K] * k * Math.log(c) : 0);
    },
    options: { maxIterations: CORE_MAX_ITERATIONS, tolerance: 1e-10 },
  });
  const tally = (coreFitTally[model] ??= { fits: 0, iterations: 0, capHits: 0 });
  tally.fits++;
  tally.iterations += result.iterations;
  if (!result.converged && result.iterations >= CORE_MAX_ITERATIONS) tally.capHits++;
  const q = Float64Array.from(result.parameters.map((fp) => fp.value));
  const final = Float64Array.from(toP(q));
  const byName = result.byName;
  const held = (name: string): boolean => !byName[name] || byName[name].fixed || byName[name].atBound;
  // k or C left on their bound (no decay) is reported as held: its SE would not mean
  // anything. A∞ pinned on its floor stays free for the covariance, so that k's CI
  // still carries the doubt about where the curve ends (see firstOrder.ts); the core
  // has already said in a warning that it sits on its bound.
  const free = [!held('k'), !held('c'), !aInfFixed];
  if (np > ORDER) free.push(!held('n'));
  const warnings = result.warnings.map((w) => `${model} order: ${w}`);
  if (held('c')) return failedModelFit(model, `${model} order: no change found (A0 − A∞ fitted as zero)`, warnings);
  const a = byName.aInf;
  const side = !aInfFixed && a && a.atBound ? (a.value <= opts.aInfMin ? 'lower' : 'upper') : null;
  if (side) warnings.push(aInfAtBoundWarning(model, a!.value, side));
  if (!result.ok) return failedModelFit(model, `${model} order: ${result.warnings.at(-1) ?? 'the fit could not be run'}`, warnings);
  return finishFit(model, law, s, final, free, result.converged, warnings, side);
}
