/**
 * The absorbance maximum of a band sampled at whole pixels (a spectrum, or any y(x)):
 * where the signal is largest and least sensitive to a small error in the wavelength
 * setting (the slope dA/dλ is zero there). The true maximum lies between two pixels; a
 * parabola through the highest pixel and its two neighbours puts it to a fraction of a
 * pixel (three-point parabolic interpolation), and on a noisy band a least-squares
 * parabola over the top of the band (`bandMaximum`) holds it steadier. Pure: arrays in,
 * result out; a spectrum frame of the instrument becomes absorbance in
 * acquisition/protocol/frameMaximum.ts.
 */

export type PeakResult =
  | {
      ok: true;
      wavelength_nm: number;
      /** Absorbance at the interpolated maximum. */
      absorbance: number;
      /** Index of the highest pixel. */
      index: number;
      /** The highest pixel is at an end of the frame, so no neighbour on one side: not interpolated, maybe not a true maximum. */
      atEdge: boolean;
    }
  | { ok: false; problem: string };

/**
 * Maximum of y(x) with parabolic refinement. x need not be evenly spaced: the vertex of
 * the parabola through (x0,y0), (x1,y1), (x2,y2) is
 *   x* = x1 − ½ [ (x1−x0)² (y1−y2) − (x1−x2)² (y1−y0) ] / [ (x1−x0)(y1−y2) − (x1−x2)(y1−y0) ].
 */
export function absorbanceMaximum(wavelengths_nm: ArrayLike<number>, absorbance: ArrayLike<number>, range_nm?: [number, number]): PeakResult {
  const n = Math.min(wavelengths_nm.length, absorbance.length);
  let best = -1;
  for (let i = 0; i < n; i++) {
    const x = wavelengths_nm[i]!, y = absorbance[i]!;
    if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
    if (range_nm && (x < range_nm[0] || x > range_nm[1])) continue;
    if (best < 0 || y > absorbance[best]!) best = i;
  }
  if (best < 0) return { ok: false, problem: 'the spectrum has no finite points in the range' };
  const lo = best - 1, hi = best + 1;
  const inRange = (i: number) => i >= 0 && i < n && Number.isFinite(absorbance[i]!) && (!range_nm || (wavelengths_nm[i]! >= range_nm[0] && wavelengths_nm[i]! <= range_nm[1]));
  if (!inRange(lo) || !inRange(hi)) return { ok: true, wavelength_nm: wavelengths_nm[best]!, absorbance: absorbance[best]!, index: best, atEdge: true };
  const x0 = wavelengths_nm[lo]!, x1 = wavelengths_nm[best]!, x2 = wavelengths_nm[hi]!;
  const y0 = absorbance[lo]!, y1 = absorbance[best]!, y2 = absorbance[hi]!;
  const a = x1 - x0, b = x1 - x2;
  const num = a * a * (y1 - y2) - b * b * (y1 - y0);
  const den = a * (y1 - y2) - b * (y1 - y0);
  // A flat top (three equal pixels) has no vertex: keep the pixel.
  if (!(Math.abs(den) > 0)) return { ok: true, wavelength_nm: x1, absorbance: y1, index: best, atEdge: false };
  const xv = x1 - 0.5 * num / den;
  // Lagrange form of the same parabola, evaluated at the vertex.
  const yv = y0 * ((xv - x1) * (xv - x2)) / ((x0 - x1) * (x0 - x2))
    + y1 * ((xv - x0) * (xv - x2)) / ((x1 - x0) * (x1 - x2))
    + y2 * ((xv - x0) * (xv - x1)) / ((x2 - x0) * (x2 - x1));
  return { ok: true, wavelength_nm: xv, absorbance: yv, index: best, atEdge: false };
}

export type BandPeak = Extract<PeakResult, { ok: true }> & {
  /** 'fit': least-squares parabola over the top of the band; 'threePoint': too few points for a fit; 'pixel': at an edge or a flat top. */
  method: 'fit' | 'threePoint' | 'pixel';
  /** Points the parabola was fitted to (3 for the three-point vertex, 1 for a pixel). */
  points: number;
  /** Wavelength of the highest pixel, for comparison. */
  pixel_nm: number;
};

/**
 * The band maximum of a noisy spectrum. Near its top a band is flat, so a single noisy
 * pixel can outrank its neighbours and three points alone give a vertex that moves with
 * the noise. Here a parabola is fitted by least squares to every point of the contiguous
 * top of the band, from the highest pixel out on each side while the absorbance stays
 * within `topFraction` of the band's height above the lowest point (default the top 10 %).
 * With fewer than five such points it falls back to the three-point vertex.
 */
export function bandMaximum(wavelengths_nm: ArrayLike<number>, absorbance: ArrayLike<number>, topFraction = 0.1): { ok: false; problem: string } | BandPeak {
  const three = absorbanceMaximum(wavelengths_nm, absorbance);
  if (!three.ok) return three;
  const pixel_nm = wavelengths_nm[three.index]!;
  if (three.atEdge) return { ...three, method: 'pixel', points: 1, pixel_nm };
  const n = Math.min(wavelengths_nm.length, absorbance.length);
  let low = Infinity;
  for (let i = 0; i < n; i++) if (Number.isFinite(absorbance[i]!) && absorbance[i]! < low) low = absorbance[i]!;
  const top = absorbance[three.index]!;
  const threshold = top - topFraction * (top - low);
  const keep = (i: number) => i >= 0 && i < n && Number.isFinite(absorbance[i]!) && Number.isFinite(wavelengths_nm[i]!) && absorbance[i]! >= threshold;
  let lo = three.index, hi = three.index;
  while (keep(lo - 1)) lo--;
  while (keep(hi + 1)) hi++;
  const count = hi - lo + 1;
  const threePoint = { ...three, method: three.wavelength_nm === pixel_nm ? 'pixel' as const : 'threePoint' as const, points: 3, pixel_nm };
  if (count < 5) return threePoint;
  // y = c0 + c1 u + c2 u², u = x − x̄ (centred for conditioning); normal equations solved by Cramer's rule.
  let xm = 0;
  for (let i = lo; i <= hi; i++) xm += wavelengths_nm[i]!;
  xm /= count;
  let s0 = 0, s1 = 0, s2 = 0, s3 = 0, s4 = 0, t0 = 0, t1 = 0, t2 = 0;
  for (let i = lo; i <= hi; i++) {
    const u = wavelengths_nm[i]! - xm, y = absorbance[i]!, u2 = u * u;
    s0 += 1; s1 += u; s2 += u2; s3 += u2 * u; s4 += u2 * u2;
    t0 += y; t1 += u * y; t2 += u2 * y;
  }
  const det3 = (a: number, b: number, c: number, d: number, e: number, f: number, g: number, hh: number, k: number) =>
    a * (e * k - f * hh) - b * (d * k - f * g) + c * (d * hh - e * g);
  const D = det3(s0, s1, s2, s1, s2, s3, s2, s3, s4);
  if (!(Math.abs(D) > 0)) return threePoint;
  const c0 = det3(t0, s1, s2, t1, s2, s3, t2, s3, s4) / D;
  const c1 = det3(s0, t0, s2, s1, t1, s3, s2, t2, s4) / D;
  const c2 = det3(s0, s1, t0, s1, s2, t1, s2, s3, t2) / D;
  const uv = -c1 / (2 * c2);
  const xv = xm + uv;
  // A parabola that opens upward, or a vertex outside the points fitted, is no maximum of them.
  if (!(c2 < 0) || xv < wavelengths_nm[lo]! || xv > wavelengths_nm[hi]!) return threePoint;
  return { ok: true, wavelength_nm: xv, absorbance: c0 + c1 * uv + c2 * uv * uv, index: three.index, atEdge: false, method: 'fit', points: count, pixel_nm };
}
