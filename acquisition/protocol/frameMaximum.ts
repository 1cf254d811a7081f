/**
 * The absorbance maximum of a full-spectrum frame from the instrument, for choosing the
 * measuring wavelength. A frame of raw counts becomes absorbance against the blank frame
 * first; the maximum itself is kinetics/bandMaximum.ts.
 */
import type { SpectrumFrame } from '../sources/sourceTypes';
import { absorbanceFromTransmittance } from './absorbance';
import { absorbanceMaximum, type PeakResult } from '../../kinetics/bandMaximum';

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
