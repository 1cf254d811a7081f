/**
 * Choosing the measuring wavelength from a full-spectrum frame of the sample: the
 * absorbance maximum, where the signal is largest and least sensitive to a small error
 * in the wavelength setting (the slope dA/dλ is zero there).
 *
 * The spectrometer samples the band at whole pixels; the true maximum lies between two
 * of them. A parabola through the highest pixel and its two neighbours puts it to a
 * fraction of a pixel (three-point parabolic interpolation).
 */
import type { SpectrumFrame } from './sourceTypes';
import { absorbanceFromTransmittance } from './absorbance';

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

/**
 * The maximum of a frame. A frame of raw counts needs the blank frame (same grid) and
 * the dark level to become absorbance first.
 */
export function frameMaximum(frame: SpectrumFrame, blank?: SpectrumFrame, dark_counts = 0, range_nm?: [number, number]): PeakResult {
  if (frame.kind === 'absorbance') return absorbanceMaximum(frame.wavelengths_nm, frame.values, range_nm);
  if (!blank || blank.values.length !== frame.values.length) return { ok: false, problem: 'a counts spectrum needs a blank spectrum on the same wavelengths; take a blank spectrum first' };
  const a = new Float64Array(frame.values.length);
  for (let i = 0; i < a.length; i++) {
    const t = (frame.values[i]! - dark_counts) / (blank.values[i]! - dark_counts);
    a[i] = absorbanceFromTransmittance(t) ?? NaN; // opaque pixels drop out of the search
  }
  return absorbanceMaximum(frame.wavelengths_nm, a, range_nm);
}
