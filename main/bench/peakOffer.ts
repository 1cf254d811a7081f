/**
 * The measuring wavelength offered from a spectrum of the sample: the frame is asked
 * for with a `scan` command, awaited here (with a time limit, and given up if the source
 * closes), turned into absorbance and searched for the band maximum.
 */
import type { SpectrumFrame } from '../../acquisition/sources/sourceTypes';
import { bandMaximum } from '../../kinetics/bandMaximum';
import { LIMITS, type PeakOffer } from '../bridge/contract';
import { Refusal } from './refusal';

/** Below this the band is too weak for its maximum to stand clear of the noise (a rule of thumb, not a bound). */
const WEAK_BAND_AU = 0.05;

type Waiter = { done: (f: SpectrumFrame | Error, recorded: boolean) => void };

/** Frames asked for and not yet come. */
export class SpectrumWaiters {
  private readonly waiting = new Set<Waiter>();

  /** A frame to wait for; `cancel` withdraws it silently (the command was refused). */
  expect(timeout_ms: number): { frame: Promise<{ frame: SpectrumFrame; recorded: boolean }>; cancel: () => void } {
    let waiter!: Waiter;
    let timer: ReturnType<typeof setTimeout> | null = null;
    const frame = new Promise<{ frame: SpectrumFrame; recorded: boolean }>((resolve, reject) => {
      waiter = {
        done: (f, recorded) => {
          if (timer) clearTimeout(timer);
          this.waiting.delete(waiter);
          if (f instanceof Error) reject(f); else resolve({ frame: f, recorded });
        },
      };
      timer = setTimeout(() => waiter.done(new Refusal(
        `find the peak: the instrument took the scan command but sent no spectrum within ${Number((timeout_ms / 1000).toPrecision(2))} s; check that it can send full spectra.`), false), timeout_ms);
    });
    this.waiting.add(waiter);
    return {
      frame,
      cancel: () => {
        if (timer) clearTimeout(timer);
        this.waiting.delete(waiter);
        frame.catch(() => undefined);
      },
    };
  }

  arrived(frame: SpectrumFrame, recorded: boolean): void {
    for (const w of [...this.waiting]) w.done(frame, recorded);
  }

  failAll(why: string): void {
    for (const w of [...this.waiting]) w.done(new Refusal(why), false);
  }
}

/** Absorbance of a frame; a counts frame cannot be turned into absorbance without a blank spectrum, which is not kept. */
export function frameAbsorbance(frame: SpectrumFrame): Float64Array {
  if (frame.kind === 'counts') {
    throw new Refusal('find the peak: the instrument sent its spectrum as raw counts, and without a blank spectrum they cannot be turned into absorbance; set the wavelength by hand.');
  }
  return frame.values;
}

export function peakOffer(frame: SpectrumFrame, recorded: boolean): PeakOffer {
  const a = frameAbsorbance(frame);
  const n = Math.min(frame.wavelengths_nm.length, a.length);
  if (n > LIMITS.maxSpectrumPoints) throw new Refusal(`find the peak: the spectrum has ${n} points, more than the ${LIMITS.maxSpectrumPoints} the screen takes.`);
  const wl = Array.from(frame.wavelengths_nm.subarray(0, n));
  const values = Array.from(a.subarray(0, n), (v) => (Number.isFinite(v) ? v : null));
  const base = { deviceTime_s: frame.deviceTime_s, wavelengths_nm: wl, absorbance: values, recorded };
  const found = bandMaximum(frame.wavelengths_nm.subarray(0, n), a.subarray(0, n));
  if (!found.ok) return { ...base, peak: null, suggested_nm: null, sentence: `No absorbance maximum could be found: ${found.problem}.`, caution: null };
  const peak = { wavelength_nm: found.wavelength_nm, absorbance: found.absorbance, pixel_nm: found.pixel_nm, method: found.method, points: found.points, atEdge: found.atEdge };
  const lo = Math.min(...wl), hi = Math.max(...wl);
  if (found.atEdge) {
    return {
      ...base, peak, suggested_nm: null, caution: null,
      sentence: `The absorbance is highest at the end of the spectrum (${found.wavelength_nm.toFixed(1)} nm), so the band's maximum may lie outside ${lo.toFixed(0)}–${hi.toFixed(0)} nm; set the wavelength by hand.`,
    };
  }
  const suggested = Math.round(found.wavelength_nm * 10) / 10;
  const offerable = suggested >= 190 && suggested <= 1100;
  return {
    ...base, peak, suggested_nm: offerable ? suggested : null,
    sentence: offerable
      ? `Absorbance maximum at ${suggested.toFixed(1)} nm (from the spectrum of the sample); use it?`
      : `Absorbance maximum at ${suggested.toFixed(1)} nm, outside the 190–1100 nm the instrument can be set to.`,
    caution: found.absorbance < WEAK_BAND_AU
      ? `The sample absorbs little (at most ${found.absorbance.toFixed(3)} AU), so this maximum is uncertain; a stronger sample gives a surer one.`
      : null,
  };
}
