import { describe, expect, it } from 'vitest';
import { akaikeWeights, orderVerdict, type EvidenceByOrder } from './orderVerdict';
import { residualRunsP } from './residualRuns';
import { normalTwoSidedP } from './fit/studentT';

const ev = (aicc: [number, number, number], p = 0.5, f = 0.8): EvidenceByOrder => ({
  zero: { aicc: aicc[0], runsTestP: p, fractionConverted: f },
  first: { aicc: aicc[1], runsTestP: p, fractionConverted: f },
  second: { aicc: aicc[2], runsTestP: p, fractionConverted: f },
});

describe('Akaike weights and the order verdict', () => {
  it('weights follow exp(−Δ/2) normalised', () => {
    // Burnham & Anderson: w_i = exp(−Δ_i/2) / Σ_j exp(−Δ_j/2); Δ = (0, 2, 10) by hand:
    // exp(0)=1, exp(−1)=0.367879, exp(−5)=0.006738, sum 1.374617
    const w = akaikeWeights([100, 102, 110]) as number[];
    expect(w[0]).toBeCloseTo(1 / 1.374617, 5);
    expect(w[1]).toBeCloseTo(0.367879 / 1.374617, 5);
    expect(w[2]).toBeCloseTo(0.006738 / 1.374617, 5);
    expect(w.reduce((a, b) => a + b)).toBeCloseTo(1, 12);
  });

  it('decides only past 50% conversion, with weight ≥ 0.95 and a runs test that does not reject', () => {
    expect(orderVerdict(ev([200, 100, 150])).order).toBe('first');
    expect(orderVerdict(ev([200, 100, 150], 0.5, 0.49)).order).toBe('undecided');
    expect(orderVerdict(ev([200, 100, 104])).order).toBe('undecided'); // weight exp(0)/(1+exp(−2)) = 0.881
    expect(orderVerdict(ev([200, 100, 106])).order).toBe('first'); // 1/(1+exp(−3)) = 0.9526
    expect(orderVerdict(ev([200, 100, 150], 0.049)).order).toBe('undecided');
    expect(orderVerdict(ev([200, 100, 150], 0.05)).order).toBe('first');
    const noFit = ev([200, 100, 150]);
    noFit.second.aicc = null;
    expect(orderVerdict(noFit).order).toBe('undecided');
  });
});

describe('runs test on residual signs', () => {
  it('matches the Wald–Wolfowitz normal approximation worked by hand', () => {
    // 10 +, 10 −, alternating in pairs: ++−−++−− … → R = 10 runs.
    // μ = 2·10·10/20 + 1 = 11; σ² = 2·10·10·(200 − 20)/(20²·19) = 36000/7600 = 4.7368
    const r = Float64Array.from({ length: 20 }, (_, i) => (Math.floor(i / 2) % 2 === 0 ? 1 : -1));
    // With the continuity correction of ½ toward μ: z = (|R − μ| − ½)/σ.
    const z = (Math.abs(10 - 11) - 0.5) / Math.sqrt(36000 / 7600);
    expect(residualRunsP(r)).toBeCloseTo(normalTwoSidedP(z), 12);
    // two long runs: strongly rejected
    const two = Float64Array.from({ length: 40 }, (_, i) => (i < 20 ? 1 : -1));
    expect(residualRunsP(two)!).toBeLessThan(1e-6);
    // too few signs: no verdict from the test
    expect(residualRunsP(Float64Array.from([1, -1, 1]))).toBeNull();
  });
});
