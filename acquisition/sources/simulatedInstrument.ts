/**
 * A virtual single-wavelength instrument that speaks the Rateline protocol: it answers
 * commands and, asked for a reading at a moment of its clock, writes the line it would
 * send. The chemistry and the noise are the engine's physical model
 * (kinetics/reactionModel.ts); this file adds only the optics of the instrument: a lamp,
 * a detector with a dark level, and a blank cuvette. `rateline emulate` puts it on a
 * serial port; the simulated source runs it in-process.
 */
import { noisyAbsorbance, trueAbsorbance, type ReactionParameters } from '../../kinetics/reactionModel';
import { seededRandom, type RandomSource } from '../../kinetics/random';
import type { DeviceIdentity } from './sourceTypes';
import {
  formatAbsorbance, formatAck, formatCounts, formatIdentity, formatNak, formatSpectrum, commandVerb, parseCommandLine,
} from '../protocol/lineFormat';

export interface InstrumentSettings {
  reaction: ReactionParameters;
  /** Transmittance noise σ_T (demo 0.001). */
  sigmaT: number;
  seed: number;
  sends: 'absorbance' | 'counts';
  interval_s: number;
  /** Wavelength the reaction parameters hold at (the band maximum); demo 630 nm. */
  bandCentre_nm: number;
  /** Width (SD) of the absorption band, so that another wavelength reads less. Demo: 25 nm. */
  bandWidth_nm: number;
  /** Net lamp counts through the blank, and the dark level of the detector. */
  lamp_counts: number;
  dark_counts: number;
  darkNoise_counts: number;
  fullScale_counts: number;
  /** Cell temperature, and how fast it drifts (K per minute); null for an instrument without a sensor. */
  temperature_C: number | null;
  temperatureDrift_KperMin: number;
  /** Lamp drift in the first minutes after switch-on: fractional change per minute (0 = warmed up). */
  lampDrift_perMin: number;
  identity: DeviceIdentity;
}

export function defaultInstrumentSettings(reaction: ReactionParameters, over: Partial<InstrumentSettings> = {}): InstrumentSettings {
  const sends = over.sends ?? 'absorbance';
  return {
    reaction, sigmaT: 0.001, seed: 1, sends, interval_s: 1, bandCentre_nm: 630, bandWidth_nm: 25,
    lamp_counts: 50000, dark_counts: 800, darkNoise_counts: 2, fullScale_counts: 65535,
    temperature_C: 25, temperatureDrift_KperMin: 0, lampDrift_perMin: 0,
    identity: { maker: 'Rateline', model: 'emulator', serial: 'RL-EMU-0001', firmware: '1.0', sends },
    ...over,
  };
}

export class SimulatedInstrument {
  running = true;
  interval_s: number;
  wavelength_nm: number;
  private readonly rng: RandomSource;
  private blankUntil_s = -Infinity;
  private blankRequested_s: number | null = null;
  private scanRequested = false;

  constructor(readonly settings: InstrumentSettings) {
    this.interval_s = settings.interval_s;
    this.wavelength_nm = settings.bandCentre_nm;
    this.rng = seededRandom(settings.seed);
  }

  identityLine(): string {
    return formatIdentity(this.settings.identity);
  }

  /** The lines the device sends in answer to one host line. */
  handle(line: string): string[] {
    const p = parseCommandLine(line);
    if (!p.ok) return p.seq === null ? [] : [formatNak(p.seq, p.verb, p.reason)];
    const out: string[] = [];
    const c = p.command;
    switch (c.type) {
      case 'who': out.push(this.identityLine()); break;
      case 'start': this.running = true; break;
      case 'stop': this.running = false; break;
      case 'setWavelength': this.wavelength_nm = c.wavelength_nm; break;
      case 'setInterval': this.interval_s = c.interval_s; break;
      case 'scan': this.scanRequested = true; break;
      case 'takeBlank':
        // An absorbance device zeroes itself; a counts device sends the blank's counts for the duration.
        if (this.settings.sends === 'counts') this.blankRequested_s = p.blankDuration_s ?? 5;
        break;
    }
    out.unshift(formatAck(p.seq, commandVerb(c)));
    return out;
  }

  /** True absorbance of the sample at this moment and wavelength: the band shape times the reaction's signal. */
  sampleAbsorbance(deviceTime_s: number, wavelength_nm = this.wavelength_nm): number {
    const s = this.settings;
    const band = Math.exp(-0.5 * ((wavelength_nm - s.bandCentre_nm) / s.bandWidth_nm) ** 2);
    return trueAbsorbance(s.reaction, deviceTime_s) * band;
  }

  /** The lines for one measurement at this moment of the device clock (empty when stopped). */
  measure(deviceTime_s: number): string[] {
    if (!this.running) return [];
    const s = this.settings;
    if (this.blankRequested_s !== null) {
      this.blankUntil_s = deviceTime_s + this.blankRequested_s;
      this.blankRequested_s = null;
    }
    const temp = s.temperature_C === null ? null : s.temperature_C + s.temperatureDrift_KperMin * deviceTime_s / 60 + 0.005 * this.rng.normal();
    const out: string[] = [];
    if (this.scanRequested) {
      this.scanRequested = false;
      const values: number[] = [];
      for (let w = 500; w <= 760; w += 2) values.push(this.noisy(this.sampleAbsorbance(deviceTime_s, w)));
      const line = formatSpectrum(deviceTime_s, 'absorbance', 500, 2, values);
      if (line) out.push(line);
    }
    const inBlank = deviceTime_s < this.blankUntil_s;
    const trueA = inBlank ? 0 : this.sampleAbsorbance(deviceTime_s);
    if (s.sends === 'absorbance') {
      out.push(formatAbsorbance(deviceTime_s, this.wavelength_nm, this.noisy(trueA), temp));
      return out;
    }
    // Counts: I = I_dark + I_lamp · T, with T = 10^(−A) + N(0, σ_T) and a little dark noise.
    const lamp = s.lamp_counts * (1 + s.lampDrift_perMin * deviceTime_s / 60);
    const T = Math.pow(10, -trueA) + s.sigmaT * this.rng.normal();
    const dark = Math.round(s.dark_counts + s.darkNoise_counts * this.rng.normal());
    const sample = Math.min(s.fullScale_counts, Math.max(0, Math.round(s.dark_counts + lamp * T + s.darkNoise_counts * this.rng.normal())));
    out.push(formatCounts(inBlank, deviceTime_s, this.wavelength_nm, sample, dark, temp));
    return out;
  }

  /**
   * One absorbance measurement as numbers rather than a protocol line, for an instrument that
   * prints plain lines (it takes no commands, so there is no blank and no scan).
   */
  reading(deviceTime_s: number): { absorbance: number; temperature_C: number | null } {
    const s = this.settings;
    const temperature_C = s.temperature_C === null ? null : s.temperature_C + s.temperatureDrift_KperMin * deviceTime_s / 60 + 0.005 * this.rng.normal();
    return { absorbance: this.noisy(this.sampleAbsorbance(deviceTime_s)), temperature_C };
  }

  private noisy(trueA: number): number {
    return noisyAbsorbance(trueA, this.settings, this.rng);
  }
}
