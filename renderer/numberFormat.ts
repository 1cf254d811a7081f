/**
 * How numbers with uncertainties are written on the screen. Common practice in
 * reporting measurements: the uncertainty to two significant figures, the value
 * rounded to the same decimal place, and one power of ten shared by both, so that
 * "(3.50 ± 0.12) × 10⁻³" never shows more digits than the data support.
 * Pure: no DOM.
 */

const SUPERSCRIPT: Record<string, string> = {
  '-': '⁻', '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹',
};

export function superscript(n: number): string {
  return String(n).split('').map((c) => SUPERSCRIPT[c] ?? c).join('');
}

/** Unicode minus for negative numbers, as typeset text has it. */
function minus(s: string): string {
  return s.replace(/^-/, '−');
}

/** The power of ten used to show a value: engineering-free, plain exponent when far from 1. */
export function displayExponent(value: number): number {
  if (!Number.isFinite(value) || value === 0) return 0;
  const e = Math.floor(Math.log10(Math.abs(value)));
  return e <= -3 || e >= 4 ? e : 0;
}

export interface Rounded {
  /** Mantissa of the value, as text. */
  value: string;
  /** Mantissa of the uncertainty, as text (two significant figures). */
  uncertainty: string;
  /** Shared power of ten (0 for none). */
  exponent: number;
}

/** Round a mantissa and its uncertainty (same scale) at the uncertainty's second significant figure. */
function roundAtUncertainty(v: number, u: number): { value: string; uncertainty: string } {
  if (!(u > 0) || !Number.isFinite(u)) return { value: minus(v.toPrecision(3)), uncertainty: '' };
  const place = Math.floor(Math.log10(u)) - 1;
  const decimals = Math.max(0, -place);
  const step = Math.pow(10, place);
  const vr = Math.round(v / step) * step;
  const ur = Math.round(u / step) * step;
  return { value: minus(vr.toFixed(decimals)), uncertainty: ur.toFixed(decimals) };
}

/** Round a value and its uncertainty together (uncertainty to two significant figures). */
export function roundWithUncertainty(value: number, uncertainty: number): Rounded {
  const exponent = displayExponent(value);
  const scale = Math.pow(10, exponent);
  return { ...roundAtUncertainty(value / scale, Math.abs(uncertainty) / scale), exponent };
}

/** "(3.50 ± 0.12) × 10⁻³" or "212 ± 14"; a value with no uncertainty to three figures. */
export function formatPlusMinus(value: number | null, uncertainty: number | null): string {
  if (value === null || !Number.isFinite(value)) return '—';
  const r = roundWithUncertainty(value, uncertainty ?? NaN);
  const pow = r.exponent !== 0 ? ` × 10${superscript(r.exponent)}` : '';
  if (!r.uncertainty) return `${r.value}${pow}`;
  return r.exponent !== 0 ? `(${r.value} ± ${r.uncertainty})${pow}` : `${r.value} ± ${r.uncertainty}`;
}

/** Half-width of a confidence interval, or null. */
export function ciHalfWidth(ci: [number, number] | null): number | null {
  return ci ? Math.abs(ci[1] - ci[0]) / 2 : null;
}

/** "3.43 to 3.57 × 10⁻³", the interval at the precision its width supports. */
export function formatInterval(ci: [number, number] | null): string {
  if (!ci || !Number.isFinite(ci[0]) || !Number.isFinite(ci[1])) return '—';
  const mid = (ci[0] + ci[1]) / 2;
  const half = Math.abs(ci[1] - ci[0]) / 2;
  const exponent = displayExponent(mid);
  const scale = Math.pow(10, exponent);
  const lo = roundAtUncertainty(ci[0] / scale, half / scale);
  const hi = roundAtUncertainty(ci[1] / scale, half / scale);
  const pow = exponent !== 0 ? ` × 10${superscript(exponent)}` : '';
  return `${lo.value} to ${hi.value}${pow}`;
}

/** A rate-constant unit as written in text: "s^-1" → "s⁻¹", "M^-1 s^-1" → "M⁻¹ s⁻¹". */
export function prettyUnit(unit: string): string {
  return unit
    .replace(/\^\(1-n\)/g, '¹⁻ⁿ').replace(/\^(-?\d+(?:\.\d+)?)/g, (_m, p: string) => superscript(Number(p)).replace('.', '·'));
}

/** A duration in words a person reads at a glance: "45 s", "4 min 10 s", "1 h 02 min". */
export function formatDuration(seconds: number | null): string {
  if (seconds === null || !Number.isFinite(seconds)) return '—';
  const s = Math.max(0, Math.round(seconds));
  if (s < 60) return `${s} s`;
  if (s < 3600) {
    const m = Math.floor(s / 60);
    const r = s % 60;
    return r ? `${m} min ${r} s` : `${m} min`;
  }
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  return `${h} h ${String(m).padStart(2, '0')} min`;
}

/** A fraction as a percentage with no false precision. */
export function formatPercent(fraction: number | null, digits = 0): string {
  if (fraction === null || !Number.isFinite(fraction)) return '—';
  return `${(fraction * 100).toFixed(digits)} %`;
}
