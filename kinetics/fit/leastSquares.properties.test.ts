import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { fitLeastSquares } from './leastSquares';
import type { FitResult } from './fitTypes';

const firstOrder = (t: number, p: Float64Array): number => p[1]! + (p[0]! - p[1]!) * Math.exp(-p[2]! * t);
const firstOrderJacobian = (t: number, p: Float64Array, out: Float64Array): void => {
  const e = Math.exp(-p[2]! * t);
  out[0] = e;
  out[1] = 1 - e;
  out[2] = -(p[0]! - p[1]!) * t * e;
};

const finite = (lo: number, hi: number) => fc.double({ min: lo, max: hi, noNaN: true, noDefaultInfinity: true });

/** Every number a successful fit reports is finite or null: never NaN. */
function noSilentNaN(fit: FitResult): boolean {
  if (!fit.ok) return fit.warnings.length > 0;
  const nums = [fit.chiSquare, fit.rss, fit.dof, fit.n, ...fit.parameters.map((p) => p.value)];
  for (const p of fit.parameters) {
    if (p.stdErr !== null) nums.push(p.stdErr);
    if (p.ci) nums.push(...p.ci);
  }
  if (fit.residualSd !== null) nums.push(fit.residualSd);
  if (fit.aicc !== null) nums.push(fit.aicc);
  if (fit.covariance) nums.push(...fit.covariance);
  return nums.every((v) => Number.isFinite(v));
}

describe('fitLeastSquares properties (fast-check)', () => {
  it('bounds are always respected', () => {
    fc.assert(
      fc.property(
        fc.array(finite(-5, 5), { minLength: 4, maxLength: 40 }),
        finite(-3, 3),
        finite(0, 2),
        finite(-3, 3),
        fc.constantFrom<'none' | 'huber' | 'tukey'>('none', 'huber', 'tukey'),
        (ys, lo, width, start, robust) => {
          const y = Float64Array.from(ys);
          const x = Float64Array.from(ys, (_, i) => i / 4);
          const fit = fitLeastSquares({
            parameters: [
              { name: 'a', value: start, min: lo, max: lo + width },
              { name: 'b', value: 0.5, min: 0 },
              { name: 'c', value: 0.3, min: -1, max: 1 },
            ],
            x,
            y,
            model: (t, p) => p[0]! + p[2]! * Math.exp(-p[1]! * t),
            options: { robust },
          });
          const [a, b, c] = fit.parameters.map((p) => p.value);
          return a! >= lo && a! <= lo + width && b! >= 0 && c! >= -1 && c! <= 1 && noSilentNaN(fit);
        },
      ),
      { numRuns: 150 },
    );
  });

  it('fixed parameters never move', () => {
    fc.assert(
      fc.property(fc.array(finite(-2, 2), { minLength: 3, maxLength: 30 }), finite(-10, 10), finite(0, 1), (ys, held, k) => {
        const y = Float64Array.from(ys);
        const x = Float64Array.from(ys, (_, i) => i);
        const fit = fitLeastSquares({
          parameters: [{ name: 'a0', value: 1 }, { name: 'aInf', value: held, fixed: true }, { name: 'k', value: k, fixed: true }],
          x,
          y,
          model: firstOrder,
        });
        return Object.is(fit.byName.aInf!.value, held) && Object.is(fit.byName.k!.value, k) && fit.freeNames.length === 1;
      }),
      { numRuns: 150 },
    );
  });

  it('noise-free first-order data are recovered from a perturbed start', () => {
    fc.assert(
      fc.property(
        finite(0.1, 2),
        finite(0, 0.05),
        finite(1e-3, 1e-1),
        finite(0.7, 1.4),
        fc.boolean(),
        (a0, aInf, k, factor, analytic) => {
          // three half-lives or more of data, so every parameter is determined
          const n = 120;
          const span = 4 / k;
          const x = Float64Array.from({ length: n }, (_, i) => (i * span) / (n - 1));
          const truth = Float64Array.of(a0, aInf, k);
          const y = Float64Array.from(x, (t) => firstOrder(t, truth));
          const fit = fitLeastSquares({
            parameters: [
              { name: 'a0', value: a0 * factor },
              { name: 'aInf', value: 0 },
              { name: 'k', value: k / factor, min: 0 },
            ],
            x,
            y,
            model: firstOrder,
            ...(analytic ? { jacobian: firstOrderJacobian } : {}),
          });
          const close = (got: number, want: number, scale: number): boolean => Math.abs(got - want) <= 1e-6 * scale;
          return fit.ok && close(fit.byName.a0!.value, a0, a0) && close(fit.byName.aInf!.value, aInf, a0) && close(fit.byName.k!.value, k, k);
        },
      ),
      { numRuns: 150 },
    );
  });

  it('never throws on random finite input, and never reports a silent NaN', () => {
    fc.assert(
      fc.property(
        fc.array(fc.tuple(fc.double({ noNaN: true, noDefaultInfinity: true }), fc.double({ noNaN: true, noDefaultInfinity: true })), { maxLength: 25 }),
        fc.array(fc.double({ noNaN: true, noDefaultInfinity: true }), { minLength: 3, maxLength: 3 }),
        fc.constantFrom<'none' | 'huber' | 'tukey'>('none', 'huber', 'tukey'),
        fc.option(fc.array(fc.double({ noNaN: true, noDefaultInfinity: true }), { maxLength: 25 }), { nil: undefined }),
        (pts, start, robust, ws) => {
          const x = Float64Array.from(pts, (p) => p[0]);
          const y = Float64Array.from(pts, (p) => p[1]);
          const problem = {
            parameters: start.map((v, i) => ({ name: `p${i}`, value: v })),
            x,
            y,
            model: firstOrder,
            options: { robust, maxIterations: 50 },
            ...(ws ? { weights: Float64Array.from(ws) } : {}),
          };
          const fit = fitLeastSquares(problem);
          return noSilentNaN(fit);
        },
      ),
      { numRuns: 300 },
    );
  });

  it('negative control: the NaN detector does catch a NaN', () => {
    const fit = fitLeastSquares({ parameters: [{ name: 'a', value: 1 }], x: Float64Array.of(1, 2, 3), y: Float64Array.of(1, 2, 3), model: (t, p) => p[0]! * t });
    expect(noSilentNaN(fit)).toBe(true);
    expect(noSilentNaN({ ...fit, chiSquare: NaN })).toBe(false);
  });
});
