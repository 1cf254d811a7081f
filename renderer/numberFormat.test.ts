import { describe, expect, it } from 'vitest';
import {
  formatDuration, formatInterval, formatPercent, formatPlusMinus, prettyUnit, roundWithUncertainty, superscript,
} from './numberFormat';

describe('numbers with uncertainties', () => {
  // common practice (reporting measurements): uncertainty to two significant figures,
  // the value rounded to the same decimal place.
  it('rounds the value where its uncertainty\'s second figure falls', () => {
    expect(formatPlusMinus(212.347, 13.9)).toBe('212 ± 14');
    expect(formatPlusMinus(0.0035012, 0.0000723)).toBe('(3.501 ± 0.072) × 10⁻³');
    expect(formatPlusMinus(1.02345, 0.0311)).toBe('1.023 ± 0.031');
    expect(formatPlusMinus(-0.0123, 0.0045)).toBe('−0.0123 ± 0.0045');
  });

  it('shares one power of ten between value and uncertainty', () => {
    const r = roundWithUncertainty(3.5e-3, 1.2e-4);
    expect(r).toEqual({ value: '3.50', uncertainty: '0.12', exponent: -3 });
  });

  // Negative control: a naive toFixed(2) shows digits the uncertainty does not support.
  it('is not the same as fixed decimals (negative control)', () => {
    expect(formatPlusMinus(212.347, 13.9)).not.toBe(`${(212.347).toFixed(2)} ± ${(13.9).toFixed(2)}`);
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
