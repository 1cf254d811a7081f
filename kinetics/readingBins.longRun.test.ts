import { describe, expect, it } from 'vitest';
import { binnedAgainstExact } from '../test/fixtures/longRunBinning';

// Sizes above 10⁵ are in `npm run bench` (test/bench/longRunBins.bench.ts). The truth is
// the simulator's k (demo data, DEMO.md: 3.5e-3 s⁻¹).
describe('binned fits on a long run', () => {
  it('10⁵ noise-free readings, most of them binned: k within 1e-6 relative of the truth', { timeout: 120_000 }, () => {
    const r = binnedAgainstExact(1e5, false);
    expect(r.bins).toBeGreaterThan(100);
    expect(r.relativeErrorBinned).toBeLessThan(1e-6);
  });

  it('10⁵ readings with demo noise: k within 0.1 SE of the exact fit of every reading, its SE within 10%', { timeout: 120_000 }, () => {
    const r = binnedAgainstExact(1e5, true);
    expect(r.differenceInSe).toBeLessThan(0.1);
    expect(Math.abs(r.seBinned / r.seExact - 1)).toBeLessThan(0.1);
  });

  it('negative control: a k off by 1e-5 relative fails the noise-free check', () => {
    const r = binnedAgainstExact(1e4, false);
    expect(Math.abs((r.kBinned * (1 + 1e-5)) / 3.5e-3 - 1)).toBeGreaterThan(1e-6);
    expect(r.relativeErrorBinned).toBeLessThan(1e-6);
  });
});
