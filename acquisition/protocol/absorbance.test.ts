import { describe, expect, it } from 'vitest';
import { linearRegression, sampleStandardDeviation } from 'simple-statistics';
import { absorbanceFromCounts, absorbanceFromTransmittance, analyzeBlank, type BlankReference } from './absorbance';
import { absorbanceMaximum } from '../../kinetics/bandMaximum';
import { frameMaximum } from './frameMaximum';
import { ReadingFlag } from '../sources/sourceTypes';
import { seededRandom } from '../../kinetics/random';

const blank = (net: number): BlankReference => ({ netBlank_counts: net, dark_counts: 800, points: 10, time_s: 0, wavelength_nm: 630 });

describe('absorbance from counts', () => {
  // common practice: A = −log10 T. Worked by hand: (11876 − 805)/(50123 − 812) = 11071/49311 = 0.224514…,
  // −log10 = 0.648759…; half the light is A = log10 2 = 0.30103; a tenth is exactly 1 AU; the blank itself is 0.
  // [sample counts, dark counts, net blank counts (I_blank − I_dark), A, digits]
  const byHand: Array<[number, number, number, number, number]> = [
    [11876, 805, 50123 - 812, 0.648759, 5],
    [10800, 800, 20000, 0.30103, 5],
    [2800, 800, 20000, 1, 12],
    [20800, 800, 20000, 0, 12],
  ];
  type Absorbance = (sample: number, dark: number, netBlank: number) => number | null;
  const misses = (a: Absorbance): number => byHand.filter(([s, d, net, want, digits]) => {
    const got = a(s, d, net);
    return got === null || Math.abs(got - want) >= 0.5 * 10 ** -digits;
  }).length;

  it('follows A = −log10((I − I_dark)/(I_blank − I_dark)), worked by hand', () => {
    expect(misses((s, d, net) => absorbanceFromCounts(s, d, blank(net)).absorbance)).toBe(0);
    expect(absorbanceFromCounts(20800, 800, blank(20000)).absorbance).toBe(0); // exactly, not −0
    expect(absorbanceFromCounts(11876, 805, blank(50123 - 812)).flags & ReadingFlag.fromIntensity).toBeTruthy();
  });

  it('negative control: the same hand-worked cases fail on the usual slips', () => {
    // the dark not taken off the sample, nor off the blank
    expect(misses((s, d, net) => -Math.log10(s / (net + d)))).toBeGreaterThanOrEqual(3);
    // the dark taken off the sample only
    expect(misses((s, d, net) => -Math.log10((s - d) / (net + d)))).toBeGreaterThanOrEqual(3);
    // the natural logarithm for the decadic one
    expect(misses((s, d, net) => -Math.log((s - d) / net))).toBeGreaterThanOrEqual(3);
  });

  it('flags saturation and absorbance past about 2 AU', () => {
    expect(absorbanceFromCounts(65000, 0, blank(60000)).flags & ReadingFlag.saturated).toBeTruthy();
    expect(absorbanceFromCounts(30000, 0, blank(60000)).flags & ReadingFlag.saturated).toBe(0);
    // 1% transmittance is 2 AU exactly (common practice: the reliable limit of a typical instrument)
    expect(absorbanceFromCounts(500, 0, blank(60000)).flags & ReadingFlag.beyondRange).toBeTruthy();
    expect(absorbanceFromCounts(700, 0, blank(60000)).flags & ReadingFlag.beyondRange).toBe(0);
  });

  it('gives no absorbance for non-physical counts, with a reason', () => {
    for (const [s, d] of [[800, 800], [700, 800], [-5, 0]] as const) {
      const r = absorbanceFromCounts(s, d, blank(20000));
      expect(r.absorbance).toBeNull();
      expect(r.problem).toMatch(/dark|negative/);
    }
    expect(absorbanceFromCounts(1000, 0, blank(0)).problem).toMatch(/blank/);
  });

  it('converts transmittance: %T 50 is 0.30103 AU, %T 1 is 2 AU', () => {
    // common practice: A = 2 − log10(%T)
    expect(absorbanceFromTransmittance(0.5)!).toBeCloseTo(0.30103, 5);
    expect(absorbanceFromTransmittance(0.01)!).toBeCloseTo(2, 12);
    expect(absorbanceFromTransmittance(0)).toBeNull();
  });
});

describe('baseline check at the blank', () => {
  const blankReadings = (n: number, drift_perS: number, sd: number, seed = 3) => {
    const rng = seededRandom(seed);
    const t: number[] = [], s: number[] = [], d: number[] = [];
    for (let i = 0; i < n; i++) {
      t.push(i * 0.5);
      s.push(50000 + 800 + drift_perS * i * 0.5 + sd * rng.normal());
      d.push(800);
    }
    return { t, s, d };
  };

  it('reports noise and drift that agree with an independent regression', () => {
    const { t, s, d } = blankReadings(40, -2, 15);
    const r = analyzeBlank(t, s, d, 630);
    const net = s.map((v, i) => v - d[i]!);
    // simple-statistics (independent library): slope by least squares and the sample SD
    const lr = linearRegression(t.map((x, i) => [x, net[i]!]));
    expect(r.check!.slope_countsPerS).toBeCloseTo(lr.m, 9);
    expect(r.check!.sdNet_counts).toBeCloseTo(sampleStandardDeviation(net), 9);
    const mean = net.reduce((a, b) => a + b, 0) / net.length;
    expect(r.reference!.netBlank_counts).toBeCloseTo(mean, 9);
    // common practice (error propagation): σ_A = 0.434 σ_I / I, and dA/dt = −0.434 (dI/dt) / I
    expect(r.check!.noise_AU).toBeCloseTo(0.4342945 * sampleStandardDeviation(net) / mean, 9);
    expect(r.check!.drift_AUperMin).toBeCloseTo(-0.4342945 * lr.m * 60 / mean, 9);
  });

  it('warns when the lamp drifts (not warmed up) and stays quiet when it is steady', () => {
    // −20 counts/s on 50000 is 0.0104 AU/min, past the 0.001 AU/min rule of thumb
    const drifting = blankReadings(40, -20, 10);
    const r1 = analyzeBlank(drifting.t, drifting.s, drifting.d, 630);
    expect(r1.check!.warmedUp).toBe(false);
    expect(r1.warnings.join(' ')).toMatch(/warmed up/);
    const steady = blankReadings(40, 0, 10);
    const r2 = analyzeBlank(steady.t, steady.s, steady.d, 630);
    expect(r2.check!.warmedUp).toBe(true);
    expect(r2.warnings).toEqual([]);
  });

  it('raises the lamp warning for a steady lamp no more often than a 5% test should', () => {
    // common practice: a two-sided t test on the slope at 95% gives about 5% false alarms
    let alarms = 0;
    const trials = 400;
    for (let seed = 1; seed <= trials; seed++) {
      const { t, s, d } = blankReadings(5, 0, 50, seed); // a 5-reading blank with σ_T = 0.001 on 50000 counts
      if (!analyzeBlank(t, s, d, 630).check!.warmedUp) alarms++;
    }
    expect(alarms / trials).toBeLessThan(0.08);
    // negative control: with a bare 2-SE rule and 3 degrees of freedom the false alarms are far more frequent
    let naive = 0;
    for (let seed = 1; seed <= trials; seed++) {
      const { t, s, d } = blankReadings(5, 0, 50, seed);
      const c = analyzeBlank(t, s, d, 630).check!;
      if (Math.abs(c.drift_AUperMin) > 0.001 && Math.abs(c.drift_AUperMin) > 2 * c.driftStdErr_AUperMin) naive++;
    }
    expect(naive / trials).toBeGreaterThan(0.09);
  });

  it('refuses a blank at the dark level and says when the blank is too short', () => {
    expect(analyzeBlank([0, 1], [800, 800], [800, 800], 630).problem).toMatch(/dark level/);
    expect(analyzeBlank([], [], [], 630).problem).toMatch(/no blank/);
    const short = analyzeBlank([0, 1], [20000, 20010], [null, null], 630);
    expect(short.reference!.netBlank_counts).toBe(20005);
    expect(short.warnings.join()).toMatch(/only 2/);
  });
});

describe('absorbance maximum of a spectrum', () => {
  const gaussian = (centre: number, sigma: number, height: number, from: number, to: number, step: number) => {
    const x: number[] = [], y: number[] = [];
    for (let w = from; w <= to + 1e-9; w += step) { x.push(w); y.push(height * Math.exp(-0.5 * ((w - centre) / sigma) ** 2)); }
    return { x, y };
  };

  it('finds the centre of a Gaussian band to a small fraction of a pixel', () => {
    // analytic reference: a Gaussian band's maximum is at its centre, by construction
    for (const centre of [629.37, 630.0, 630.5, 631.81]) {
      const { x, y } = gaussian(centre, 15, 0.8, 500, 750, 1);
      const r = absorbanceMaximum(x, y);
      expect(r.ok).toBe(true);
      if (!r.ok) continue;
      expect(Math.abs(r.wavelength_nm - centre)).toBeLessThan(0.02);
      expect(r.absorbance).toBeCloseTo(0.8, 3);
      // negative control: the highest pixel alone misses by up to half a pixel
      if (centre === 629.37) expect(Math.abs(x[r.index]! - centre)).toBeGreaterThan(0.3);
    }
  });

  it('is exact for a parabola on an uneven grid and flags a maximum at the edge', () => {
    const x = [600, 601.5, 602, 604, 605];
    const y = x.map((w) => 1 - (w - 602.7) ** 2 / 100);
    const r = absorbanceMaximum(x, y);
    expect(r.ok && r.wavelength_nm).toBeCloseTo(602.7, 10);
    const edge = absorbanceMaximum([600, 601, 602], [0.9, 0.5, 0.2]);
    expect(edge).toMatchObject({ ok: true, atEdge: true, wavelength_nm: 600 });
  });

  it('turns a counts frame into absorbance against the blank frame first', () => {
    const { x, y } = gaussian(630.3, 12, 0.7, 580, 680, 2);
    const wl = Float64Array.from(x);
    const blankFrame = { deviceTime_s: 0, wavelengths_nm: wl, values: Float64Array.from(x, () => 40000 + 500), kind: 'counts' as const };
    const sample = { deviceTime_s: 1, wavelengths_nm: wl, values: Float64Array.from(y, (a) => 40000 * 10 ** -a + 500), kind: 'counts' as const };
    const r = frameMaximum(sample, blankFrame, 500);
    expect(r.ok && Math.abs(r.wavelength_nm - 630.3)).toBeLessThan(0.05);
    expect(frameMaximum(sample).ok).toBe(false);
  });
});
