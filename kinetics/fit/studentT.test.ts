import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { errorFunction, probit } from 'simple-statistics';
import { normalCdf, normalQuantile, normalTwoSidedP, studentTCdf, studentTQuantile } from './studentT';
import { incompleteBeta, logGamma } from './specialFunctions';

describe('Student t quantile against printed t-tables', () => {
  // handbook t-tables (two-sided 95%, 90%, 99% columns), 4 decimals as printed
  const table: Array<[number, number, number]> = [
    [0.975, 1, 12.7062],
    [0.975, 2, 4.3027],
    [0.975, 3, 3.1824],
    [0.975, 5, 2.5706],
    [0.975, 10, 2.2281],
    [0.975, 20, 2.086],
    [0.975, 30, 2.0423],
    [0.975, 120, 1.9799],
    [0.95, 10, 1.8125],
    [0.995, 10, 3.1693],
    [0.995, 1, 63.6567],
  ];
  for (const [p, dof, t] of table) {
    it(`t(${p}, ${dof}) = ${t}`, () => {
      expect(studentTQuantile(p, dof)).toBeCloseTo(t, 4);
      expect(studentTQuantile(1 - p, dof)).toBeCloseTo(-t, 4);
    });
  }

  it('tends to the normal quantile for infinite dof', () => {
    // handbook normal table: z(0.975) = 1.95996, z(0.995) = 2.57583
    expect(studentTQuantile(0.975, Infinity)).toBeCloseTo(1.959963985, 8); // from memory, checked against scipy 1.17.1 norm.ppf(0.975) = 1.959963984540054
    expect(studentTQuantile(0.995, Infinity)).toBeCloseTo(2.575829304, 8); // from memory, checked against scipy 1.17.1 norm.ppf(0.995) = 2.5758293035489004
    expect(studentTQuantile(0.975, 1e6)).toBeCloseTo(1.959964, 5);
  });

  it('more digits where they are well known', () => {
    // from memory, checked against scipy 1.17.1 (scipy.stats.t.ppf): t(0.975, 1) = 12.706204736174694,
    // t(0.975, 10) = 2.228138851986274, t(0.975, 30) = 2.0422724563012378
    expect(studentTQuantile(0.975, 1)).toBeCloseTo(12.7062047362, 8);
    expect(studentTQuantile(0.975, 10)).toBeCloseTo(2.228138852, 8);
    expect(studentTQuantile(0.975, 30)).toBeCloseTo(2.0422724563, 8);
  });

  it('negative control: the table check fails on a quantile that ignores the degrees of freedom', () => {
    // The same printed table, run against two deliberately wrong quantiles: the normal one (a classic
    // slip, right only for large dof) and ours with the dof off by one.
    const misses = (quantile: (p: number, dof: number) => number): number =>
      table.filter(([p, dof, t]) => Math.abs(quantile(p, dof) - t) > 5e-5).length;
    expect(misses(studentTQuantile)).toBe(0);
    expect(misses((p) => normalQuantile(p))).toBeGreaterThanOrEqual(table.length - 1);
    expect(misses((p, dof) => studentTQuantile(p, dof + 1))).toBe(table.length);
  });
});

describe('Student t CDF against closed forms (handbook: ν = 1, 2, 3)', () => {
  // A&S 26.7.3-style closed forms for small integer ν
  const closed: Record<number, (t: number) => number> = {
    1: (t) => 0.5 + Math.atan(t) / Math.PI,
    2: (t) => 0.5 + t / (2 * Math.sqrt(2 + t * t)),
    3: (t) => {
      const u = t / Math.sqrt(3);
      return 0.5 + (Math.atan(u) + u / (1 + u * u)) / Math.PI;
    },
  };
  for (const dof of [1, 2, 3]) {
    it(`ν = ${dof}: CDF matches to 1e-12 and the quantile inverts it to 1e-9`, () => {
      for (const t of [-40, -7.5, -2, -0.3, 0, 0.01, 1, 2.5, 12, 300]) {
        expect(Math.abs(studentTCdf(t, dof) - closed[dof]!(t))).toBeLessThan(1e-12);
      }
      for (const p of [1e-6, 0.001, 0.025, 0.2, 0.5, 0.7, 0.975, 0.999999]) {
        const t = studentTQuantile(p, dof);
        expect(Math.abs(closed[dof]!(t) - p)).toBeLessThan(1e-9 * Math.max(p, 1e-3));
      }
    });
  }

  it('ν = 2 quantile matches its closed form t = (2p − 1)/√(2p(1 − p))', () => {
    // handbook closed form for two degrees of freedom
    for (const p of [0.001, 0.05, 0.3, 0.9, 0.995]) {
      const exact = (2 * p - 1) / Math.sqrt(2 * p * (1 - p));
      expect(studentTQuantile(p, 2)).toBeCloseTo(exact, 9);
    }
  });

  it('quantile and CDF invert each other for any dof ≥ 1 (property)', () => {
    fc.assert(
      fc.property(fc.double({ min: 1, max: 5000, noNaN: true }), fc.double({ min: 1e-9, max: 1 - 1e-9, noNaN: true }), (dof, p) => {
        const t = studentTQuantile(p, dof);
        const back = studentTCdf(t, dof);
        return Number.isFinite(t) && Math.abs(back - p) <= 1e-9 * Math.min(p, 1 - p) + 1e-15;
      }),
    );
  });
});

describe('normal distribution', () => {
  it('CDF agrees with the simple-statistics error function (its accuracy is about 1.2e-7)', () => {
    // independent oracle: simple-statistics errorFunction, Φ(z) = ½(1 + erf(z/√2))
    for (const z of [-4, -2.5, -1, -0.2, 0, 0.5, 1.3, 2, 3.7]) {
      expect(Math.abs(normalCdf(z) - 0.5 * (1 + errorFunction(z / Math.SQRT2)))).toBeLessThan(2e-7);
    }
  });

  it('quantile agrees with simple-statistics probit to its own (approximate) accuracy', () => {
    // independent oracle: simple-statistics probit (closed-form inverse erf, ~1e-3)
    for (const p of [0.01, 0.1, 0.4, 0.6, 0.9, 0.99]) expect(Math.abs(normalQuantile(p) - probit(p))).toBeLessThan(5e-3);
  });

  it('tail values from the normal table, far out', () => {
    // from memory, checked against scipy 1.17.1 (scipy.stats.norm.cdf): Φ(−5) = 2.866515718791933e-7,
    // Φ(−10) = 7.61985302416047e-24; two-sided p at z = 1.959964 is 0.05 (2·norm.sf = 0.0499999982)
    expect(normalCdf(-5) / 2.8665157e-7).toBeCloseTo(1, 7);
    expect(normalCdf(-10) / 7.619853e-24).toBeCloseTo(1, 6);
    expect(normalTwoSidedP(1.959963985)).toBeCloseTo(0.05, 9);
    expect(normalQuantile(2.8665157187919333e-7)).toBeCloseTo(-5, 7);
  });

  it('edges give infinities or NaN, never a wrong finite number', () => {
    expect(normalQuantile(0)).toBe(-Infinity);
    expect(normalQuantile(1)).toBe(Infinity);
    expect(Number.isNaN(normalQuantile(1.5))).toBe(true);
    expect(Number.isNaN(studentTQuantile(0.5, 0))).toBe(true);
  });
});

describe('special functions', () => {
  it('log-gamma matches factorials and Γ(½) = √π', () => {
    // handbook: Γ(n) = (n − 1)!, Γ(½) = √π
    expect(logGamma(10)).toBeCloseTo(Math.log(362880), 12);
    expect(logGamma(0.5)).toBeCloseTo(0.5 * Math.log(Math.PI), 12);
    expect(logGamma(171)).toBeCloseTo(706.5730622457874, 9); // from memory: ln 170! = 706.5730622457874; scipy 1.17.1 gammaln(171) = 706.5730622457875
  });

  it('incomplete beta: I_x(1, b) = 1 − (1 − x)^b and I_x(a, 1) = x^a (closed forms)', () => {
    // handbook closed forms of the regularized incomplete beta
    for (const x of [0.01, 0.3, 0.77, 0.999]) {
      expect(incompleteBeta(x, 1, 3.5)).toBeCloseTo(1 - Math.pow(1 - x, 3.5), 13);
      expect(incompleteBeta(x, 2.25, 1)).toBeCloseTo(Math.pow(x, 2.25), 13);
    }
  });
});
