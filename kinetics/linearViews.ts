/**
 * The linearised views a chemist knows, for display only (the order verdict never
 * uses them): A against t is straight for zero order, ln(A − A∞) for first order and
 * 1/(A − A∞) for second order. Points at or below A∞ have no logarithm or reciprocal
 * and come out as NaN, which a chart leaves as a gap.
 */
export type LinearView = 'absorbance' | 'lnExcess' | 'reciprocalExcess';

export interface LinearViewSeries {
  view: LinearView;
  /** Axis label with its unit. */
  label: string;
  time_s: Float64Array;
  value: Float64Array;
}

export function linearView(view: LinearView, time_s: Float64Array, signal: Float64Array, aInf: number, count = time_s.length): LinearViewSeries {
  const out = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    const d = signal[i] - aInf;
    out[i] = view === 'absorbance' ? signal[i] : d > 0 ? (view === 'lnExcess' ? Math.log(d) : 1 / d) : Number.NaN;
  }
  const label = view === 'absorbance' ? 'A' : view === 'lnExcess' ? 'ln(A − A∞)' : '1/(A − A∞) (AU⁻¹)';
  return { view, label, time_s: time_s.subarray(0, count), value: out };
}

export function allLinearViews(time_s: Float64Array, signal: Float64Array, aInf: number, count = time_s.length): LinearViewSeries[] {
  return (['absorbance', 'lnExcess', 'reciprocalExcess'] as const).map((v) => linearView(v, time_s, signal, aInf, count));
}
