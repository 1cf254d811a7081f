/**
 * Reduce a long series to what a chart of a given pixel width can show.
 *
 * A line drawn through a million points on a 1200-pixel chart covers each pixel
 * column with a vertical stroke from the column's lowest to its highest value, and
 * it enters the column at its first point and leaves at its last. Keeping just
 * those four points of each column (first, min, max, last, in time order) draws the
 * same picture as the whole series: no spike is lost, no noise band narrowed. That
 * is why this is a min/max reduction and not a stride (every n-th point), which
 * drops single-point spikes and thins the noise band.
 *
 * Pure: typed arrays in, typed arrays out; the caller may pass an output to reuse,
 * so that a redraw at 60 Hz allocates nothing.
 */

export interface DecimatedSeries {
  x: Float64Array;
  y: Float64Array;
  /** Index of each kept point in the source series (to look up flags such as outliers). */
  index: Int32Array;
  count: number;
}

export function emptyDecimated(capacity = 0): DecimatedSeries {
  return { x: new Float64Array(capacity), y: new Float64Array(capacity), index: new Int32Array(capacity), count: 0 };
}

/** First index i in [0, count) with x[i] >= value (x non-decreasing); count if none. */
export function lowerBound(x: Float64Array, count: number, value: number): number {
  let lo = 0;
  let hi = count;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (x[mid]! < value) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

function ensureCapacity(out: DecimatedSeries, needed: number): void {
  if (out.x.length >= needed) return;
  let cap = Math.max(16, out.x.length);
  while (cap < needed) cap *= 2;
  out.x = new Float64Array(cap);
  out.y = new Float64Array(cap);
  out.index = new Int32Array(cap);
}

function push(out: DecimatedSeries, x: Float64Array, y: Float64Array, i: number): void {
  const k = out.count++;
  out.x[k] = x[i]!;
  out.y[k] = y[i]!;
  out.index[k] = i;
}

/**
 * Min/max-per-column reduction of (x, y)[0, count) over the visible x range
 * [xMin, xMax] drawn `columns` pixels wide. x must be non-decreasing (time).
 * Points with a non-finite y are left out. One point just outside each edge is
 * kept so that the line runs to the edge of the plot. When the visible points are
 * few enough to draw as they are (at most 4 per column on average), all are kept.
 */
export function decimateMinMax(
  x: Float64Array,
  y: Float64Array,
  count: number,
  xMin: number,
  xMax: number,
  columns: number,
  out: DecimatedSeries = emptyDecimated(),
): DecimatedSeries {
  out.count = 0;
  const n = Math.min(count, x.length, y.length);
  if (n === 0 || !(xMax >= xMin) || !Number.isFinite(xMin) || !Number.isFinite(xMax)) return out;
  const cols = Math.max(1, Math.floor(columns));
  let from = lowerBound(x, n, xMin);
  let to = lowerBound(x, n, xMax);
  while (to < n && x[to]! <= xMax) to++; // include points equal to xMax
  // The neighbours just outside the range carry the line to the plot's edges.
  if (from > 0) from--;
  if (to < n) to++;
  const visible = to - from;
  ensureCapacity(out, Math.min(visible, 4 * cols + 2));
  if (visible <= 4 * cols) {
    for (let i = from; i < to; i++) if (Number.isFinite(y[i]!)) push(out, x, y, i);
    return out;
  }
  const span = xMax - xMin;
  const scale = span > 0 ? cols / span : 0;
  let col = -2;
  let first = -1, last = -1, lo = -1, hi = -1;
  const flush = (): void => {
    if (first < 0) return;
    // Emit the column's (up to) four points in time order, each once.
    const a = first, b = Math.min(lo, hi), c = Math.max(lo, hi), d = last;
    push(out, x, y, a);
    if (b !== a) push(out, x, y, b);
    if (c !== b && c !== a) push(out, x, y, c);
    if (d !== c && d !== b && d !== a) push(out, x, y, d);
  };
  for (let i = from; i < to; i++) {
    const yi = y[i]!;
    if (!Number.isFinite(yi)) continue;
    const xi = x[i]!;
    // Points outside the range (the two edge neighbours) get columns of their own.
    const c = xi < xMin ? -1 : xi > xMax ? cols : Math.min(cols - 1, Math.floor((xi - xMin) * scale));
    if (c !== col) {
      flush();
      col = c;
      first = last = lo = hi = i;
      continue;
    }
    last = i;
    if (yi < y[lo]!) lo = i;
    if (yi > y[hi]!) hi = i;
  }
  flush();
  return out;
}
