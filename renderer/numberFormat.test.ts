import { describe, expect, it } from 'vitest';
import {
  formatDuration, formatInterval, formatPercent, formatPlusMinus, prettyUnit, roundWithUncertainty, superscript,
} from './numberFormat';

describe('numbers with uncertainties', () => {
  // common practice (reporting measurements): uncertainty to two significant figures,
  // the value rounded to the same decimal place.
  const cases: Array<[number, number, string]> = [
    [212.347, 13.9, '212 ± 14'],
    [0.0035012, 0.0000723, '(3.501 ± 0.072) × 10⁻³'],
    [1.02345, 0.0311, '1.023 ± 0.031'],
    [-0.0123, 0.0045, '−0.0123 ± 0.0045'],
  ];
  const misses = (format: (value: number, u: number) => string): number => cases.filter(([v, u, want]) => format(v, u) !== want).length;

  it('rounds the value where its uncertainty\'s second figure falls', () => {
    for (const [v, u, want] of cases) expect(formatPlusMinus(v, u)).toBe(want);
  });

  it('shares one power of ten between value and uncertainty', () => {
    const r = roundWithUncertainty(3.5e-3, 1.2e-4);
    expect(r).toEqual({ value: '3.50', uncertainty: '0.12', exponent: -3 });
  });

  // Negative control: the same cases, run against formatters that round the usual wrong ways, fail.
  it('fails the same cases with fixed decimals or one significant figure (negative control)', () => {
    expect(misses(formatPlusMinus)).toBe(0);
    expect(misses((v, u) => `${v.toFixed(2)} ± ${u.toFixed(2)}`)).toBe(cases.length);
    // one significant figure on the uncertainty, the value to the same place
    const oneFigure = (v: number, u: number): string => {
      const place = Math.floor(Math.log10(u));
      const d = Math.max(0, -place);
      return `${v.toFixed(d)} ± ${u.toFixed(d)}`;
    };
    expect(misses(oneFigure)).toBeGreaterThanOrEqual(3); // 212 ± 14 reads the same either way
  });

  it('writes a value alone to three figures and a missing one as a dash', () => {
    expect(formatPlusMinus(0.65123, null)).toBe('0.651');
    expect(formatPlusMinus(null, 0.1)).toBe('—');
    expect(formatPlusMinus(NaN, 0.1)).toBe('—');
  });

  it('writes an interval at the precision its width supports', () => {
    expect(formatInterval([3.43e-3, 3.57e-3])).toBe('3.430 to 3.570 × 10⁻³');
    expect(formatInterval([188.2, 236.9])).toBe('188 to 237');
    expect(formatInterval(null)).toBe('—');
  });

  it('typesets units and exponents', () => {
    expect(superscript(-12)).toBe('⁻¹²');
    expect(prettyUnit('s^-1')).toBe('s⁻¹');
    expect(prettyUnit('AU^-1 s^-1')).toBe('AU⁻¹ s⁻¹');
    expect(prettyUnit('M s⁻¹')).toBe('M s⁻¹');
    expect(prettyUnit('AU^(1-n) s^-1')).toBe('AU¹⁻ⁿ s⁻¹');
  });

  it('writes durations and fractions in words a person reads at a glance', () => {
    expect(formatDuration(45.4)).toBe('45 s');
    expect(formatDuration(250)).toBe('4 min 10 s');
    expect(formatDuration(3720)).toBe('1 h 02 min');
    expect(formatDuration(null)).toBe('—');
    expect(formatPercent(0.875)).toBe('88 %');
  });
});
