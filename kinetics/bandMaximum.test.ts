import { describe, expect, it } from 'vitest';
import { absorbanceMaximum, bandMaximum } from './bandMaximum';
import { seededRandom } from './random';

function gaussian(centre: number, sd: number, height: number, from: number, to: number, step: number): { x: number[]; y: number[] } {
  const x: number[] = [], y: number[] = [];
  for (let w = from; w <= to + 1e-9; w += step) { x.push(w); y.push(height * Math.exp(-0.5 * ((w - centre) / sd) ** 2)); }
  return { x, y };
}

describe('band maximum by a least-squares parabola over the top of the band', () => {
  it('agrees with numpy.polyfit on the same points', () => {
    const x = [616, 618, 620, 622, 624, 626, 628, 630, 632, 634, 636, 638, 640, 642, 644, 646];
    const y = [0.6665, 0.6922, 0.723, 0.7505, 0.7631, 0.7834, 0.7923, 0.8015, 0.7978, 0.7957, 0.7893, 0.7691, 0.7545, 0.7259, 0.7041, 0.6717];
    // reference: numpy 2.4.6, c = numpy.polyfit(x, y, 2); x* = −c[1]/(2 c[0]) = 631.2365686741272, numpy.polyval(c, x*) = 0.7988323330338574
    const r = bandMaximum(x, y, 1); // fraction 1: every point is in the fit, as in the reference
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.method).toBe('fit');
    expect(r.points).toBe(16);
    expect(r.wavelength_nm).toBeCloseTo(631.2365686741272, 8);
    expect(r.absorbance).toBeCloseTo(0.7988323330338574, 10);
    expect(r.pixel_nm).toBe(630);
  });

  it('finds the centre of a noise-free band off the grid, on 1 and 2 nm pixels', () => {
    for (const step of [1, 2]) for (const centre of [629.37, 630, 631.3, 632.9]) {
      // analytic reference: the Gaussian's centre
      const { x, y } = gaussian(centre, 25, 0.65, 500, 760, step);
      const r = bandMaximum(x, y);
      expect(r.ok && r.method).toBe('fit');
      expect(r.ok && Math.abs(r.wavelength_nm - centre)).toBeLessThan(0.05);
    }
  });

  it('holds on a noisy band where three points alone wander (negative control)', () => {
    const rng = seededRandom(7);
    let worstFit = 0, worstThree = 0;
    for (let k = 0; k < 40; k++) {
      const centre = 625 + 10 * rng.uniform();
      const { x, y } = gaussian(centre, 25, 0.65, 500, 760, 2);
      const noisy = y.map((v) => v + 0.003 * rng.normal()); // about the noise of the demo instrument at 0.65 AU
      const f = bandMaximum(x, noisy), t = absorbanceMaximum(x, noisy);
      if (f.ok) worstFit = Math.max(worstFit, Math.abs(f.wavelength_nm - centre));
      if (t.ok) worstThree = Math.max(worstThree, Math.abs(t.wavelength_nm - centre));
    }
    expect(worstFit).toBeLessThan(0.6);
    expect(worstThree).toBeGreaterThan(1);
  });

  it('falls back to three points on a narrow peak and to the pixel at an edge', () => {
    const narrow = bandMaximum([600, 601, 602, 603, 604, 605, 606], [0.1, 0.1, 0.2, 0.9, 0.6, 0.1, 0.1]);
    const three = absorbanceMaximum([600, 601, 602, 603, 604, 605, 606], [0.1, 0.1, 0.2, 0.9, 0.6, 0.1, 0.1]);
    expect(narrow).toMatchObject({ ok: true, method: 'threePoint', points: 3 });
    expect(narrow.ok && three.ok && narrow.wavelength_nm).toBe(three.ok && three.wavelength_nm);
    expect(bandMaximum([600, 601, 602], [0.9, 0.5, 0.2])).toMatchObject({ ok: true, atEdge: true, method: 'pixel', wavelength_nm: 600 });
    expect(bandMaximum([600, 601], [NaN, NaN]).ok).toBe(false);
  });
});
