import { describe, expect, it } from 'vitest';
import { mean, sampleCovariance, variance } from 'simple-statistics';
import { ReadingBins, MAX_BINS } from './readingBins';
import type { FitSeries } from './models/modelTypes';
import { seededRandom } from './random';

const blank = (cap: number): FitSeries => ({
  tau_s: new Float64Array(cap), y: new Float64Array(cap), w: new Float64Array(cap), v: new Float64Array(cap), n: new Float64Array(cap),
  count: 0, readings: 0, withinChiSquare: 0, withinRss: 0, multiBins: 0,
});

describe('bins of sufficient statistics', () => {
  it('hold the means, time variance and scatter about the bin line that simple-statistics computes from the readings', () => {
    const rng = seededRandom(3);
    const bins = new ReadingBins();
    const t: number[] = [], y: number[] = [];
    for (let i = 0; i < 8; i++) { // one bin of 8 readings, unit weights
      const ti = 1000 + i * 0.5, yi = 0.6 - 0.001 * ti + 0.002 * rng.normal();
      t.push(ti); y.push(yi); bins.add(ti, yi, 1);
    }
    const s = blank(4);
    expect(bins.writeTo(s)).toBe(1);
    // simple-statistics 7.12.1: mean, population variance, sample covariance
    expect(s.tau_s[0]).toBeCloseTo(mean(t), 10);
    expect(s.y[0]).toBeCloseTo(mean(y), 12);
    expect(s.v[0]).toBeCloseTo(variance(t), 10);
    const n = t.length;
    const ctt = variance(t) * n, cty = sampleCovariance(t, y) * (n - 1), cyy = variance(y) * n;
    expect(s.withinChiSquare).toBeCloseTo(cyy - (cty * cty) / ctt, 12);
    expect(s.readings).toBe(8);
    expect(s.multiBins).toBe(1);
  });

  it('merge pairwise when there are too many, keeping every reading and the overall mean', () => {
    const bins = new ReadingBins();
    let sum = 0;
    const total = 8 * (MAX_BINS * 2 + 3);
    for (let i = 0; i < total; i++) { bins.add(i, i % 7, 1); sum += i % 7; }
    bins.close();
    expect(bins.count).toBeLessThanOrEqual(MAX_BINS);
    const s = blank(2 * MAX_BINS);
    const nb = bins.writeTo(s);
    let readings = 0, ySum = 0;
    for (let j = 0; j < nb; j++) { readings += s.n[j]; ySum += s.y[j] * s.w[j]; }
    expect(readings).toBe(total);
    expect(ySum).toBeCloseTo(sum, 6);
    // and the bins are in time order
    for (let j = 1; j < nb; j++) expect(s.tau_s[j]).toBeGreaterThan(s.tau_s[j - 1]);
  });
});
