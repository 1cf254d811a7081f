import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { decimateMinMax, emptyDecimated, lowerBound } from './decimate';

/** Per pixel column of the full series: min and max y (finite only), by brute force. */
function columnExtremes(x: Float64Array, y: Float64Array, xMin: number, xMax: number, cols: number) {
  const min = new Float64Array(cols).fill(Infinity);
  const max = new Float64Array(cols).fill(-Infinity);
  for (let i = 0; i < x.length; i++) {
    const xi = x[i]!;
    if (xi < xMin || xi > xMax || !Number.isFinite(y[i]!)) continue;
    const c = Math.min(cols - 1, Math.floor((xi - xMin) * (cols / (xMax - xMin))));
    min[c] = Math.min(min[c]!, y[i]!);
    max[c] = Math.max(max[c]!, y[i]!);
  }
  return { min, max };
}

/** Does the reduced series hold every column's min and max of the full one? */
function keepsShape(
  x: Float64Array, y: Float64Array, rx: Float64Array, ry: Float64Array, rn: number,
  xMin: number, xMax: number, cols: number,
): boolean {
  const full = columnExtremes(x, y, xMin, xMax, cols);
  const red = columnExtremes(rx.subarray(0, rn), ry.subarray(0, rn), xMin, xMax, cols);
  for (let c = 0; c < cols; c++) {
    if (full.min[c] !== red.min[c] || full.max[c] !== red.max[c]) return false;
  }
  return true;
}

function noisyDecay(n: number, seed: number) {
  // A first-order decay with noise and a few one-point spikes (bubbles), the shape a run has.
  let s = seed >>> 0;
  const rnd = () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = i * 0.5;
    y[i] = 0.005 + 0.645 * Math.exp(-3.5e-3 * x[i]!) + 0.002 * (rnd() - 0.5);
  }
  for (let k = 0; k < 5; k++) y[Math.floor(rnd() * n)]! += 0.2;
  return { x, y };
}

describe('min/max per pixel column', () => {
  it('keeps every column\'s min and max of a long noisy run with spikes', () => {
    const { x, y } = noisyDecay(200_000, 7);
    const cols = 1200;
    const r = decimateMinMax(x, y, x.length, 0, x[x.length - 1]!, cols);
    expect(r.count).toBeLessThanOrEqual(4 * cols + 2);
    expect(r.count).toBeGreaterThan(2 * cols); // at least min and max in each column
    expect(keepsShape(x, y, r.x, r.y, r.count, 0, x[x.length - 1]!, cols)).toBe(true);
    // The spikes survive: the reduced maximum is the full maximum.
    let fullMax = -Infinity, redMax = -Infinity;
    for (const v of y) fullMax = Math.max(fullMax, v);
    for (let i = 0; i < r.count; i++) redMax = Math.max(redMax, r.y[i]!);
    expect(redMax).toBe(fullMax);
  });

  // Negative control: the shape check does fail a stride subsampling of the same size.
  it('the shape check rejects a stride subsampling (negative control)', () => {
    const { x, y } = noisyDecay(200_000, 7);
    const cols = 1200;
    const stride = Math.ceil(x.length / (4 * cols));
    const sx: number[] = [], sy: number[] = [];
    for (let i = 0; i < x.length; i += stride) { sx.push(x[i]!); sy.push(y[i]!); }
    expect(keepsShape(x, y, Float64Array.from(sx), Float64Array.from(sy), sx.length, 0, x[x.length - 1]!, cols)).toBe(false);
  });

  it('keeps points in time order and points back to the source index', () => {
    const { x, y } = noisyDecay(50_000, 3);
    const r = decimateMinMax(x, y, x.length, 1000, 20_000, 400);
    for (let i = 1; i < r.count; i++) expect(r.x[i]!).toBeGreaterThanOrEqual(r.x[i - 1]!);
    for (let i = 0; i < r.count; i++) {
      expect(r.x[i]).toBe(x[r.index[i]!]);
      expect(r.y[i]).toBe(y[r.index[i]!]);
    }
    // One neighbour outside each edge so the line reaches the plot edges.
    expect(r.x[0]!).toBeLessThan(1000);
    expect(r.x[r.count - 1]!).toBeGreaterThan(20_000);
  });

  it('passes a short series through whole', () => {
    const x = Float64Array.from([0, 1, 2, 3, 4]);
    const y = Float64Array.from([0.6, 0.5, 0.4, 0.35, 0.3]);
    const r = decimateMinMax(x, y, 5, 0, 4, 800);
    expect(Array.from(r.y.subarray(0, r.count))).toEqual([0.6, 0.5, 0.4, 0.35, 0.3]);
  });

  it('leaves out non-finite readings and handles empty and degenerate ranges', () => {
    const x = Float64Array.from([0, 1, 2]);
    const y = Float64Array.from([0.5, NaN, 0.4]);
    expect(decimateMinMax(x, y, 3, 0, 2, 10).count).toBe(2);
    expect(decimateMinMax(x, y, 0, 0, 2, 10).count).toBe(0);
    expect(decimateMinMax(x, y, 3, 2, 0, 10).count).toBe(0);
    expect(decimateMinMax(x, y, 3, NaN, 2, 10).count).toBe(0);
  });

  it('reuses the output buffers it is given', () => {
    const { x, y } = noisyDecay(100_000, 9);
    const out = emptyDecimated(8192);
    const buf = out.x;
    decimateMinMax(x, y, x.length, 0, x[x.length - 1]!, 1000, out);
    expect(out.x).toBe(buf);
  });

  it('holds for any sorted series, range and width (property)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.tuple(fc.double({ min: 0, max: 1000, noNaN: true }), fc.double({ min: -5, max: 5, noNaN: true })), { minLength: 1, maxLength: 3000 }),
        fc.integer({ min: 1, max: 300 }),
        fc.double({ min: 0, max: 500, noNaN: true }),
        fc.double({ min: 1, max: 600, noNaN: true }),
        (pts, cols, a, w) => {
          pts.sort((p, q) => p[0] - q[0]);
          const x = Float64Array.from(pts.map((p) => p[0]));
          const y = Float64Array.from(pts.map((p) => p[1]));
          const r = decimateMinMax(x, y, x.length, a, a + w, cols);
          expect(r.count).toBeLessThanOrEqual(Math.max(x.length, 4 * cols + 2));
          expect(keepsShape(x, y, r.x, r.y, r.count, a, a + w, cols)).toBe(true);
        },
      ),
      { numRuns: 300 },
    );
  });

  it('binary search finds the first point at or after a time', () => {
    const x = Float64Array.from([0, 1, 1, 2, 5]);
    expect(lowerBound(x, 5, 1)).toBe(1);
    expect(lowerBound(x, 5, 1.5)).toBe(3);
    expect(lowerBound(x, 5, -1)).toBe(0);
    expect(lowerBound(x, 5, 9)).toBe(5);
  });
});
