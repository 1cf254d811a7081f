import { describe, expect, it } from 'vitest';
import { calibrate } from './calibration';
import { calibrationReport } from './calibrationReport';

describe('calibrationReport', () => {
  it('states ε with ± SE and CI, the blank offset, the range and the warnings', () => {
    // DEMO.md demo standards, noise-free except a hand-set scatter; ε = 1.30e5 M⁻¹ cm⁻¹
    const levels = [0.5, 1, 2, 3, 4, 5, 6];
    const scatter = [0.001, -0.002, 0.0015, -0.001, 0.0005, -0.0012, 0.0008];
    const out = calibrate(levels.map((c, i) => ({ concentration_M: c * 1e-6, absorbance: 1.3e5 * c * 1e-6 + 0.003 + scatter[i]! })));
    if (!out.ok) throw new Error(out.error);
    const text = calibrationReport(out.calibration, 'Calibration at 630 nm (demo)');
    expect(text).toContain('Calibration at 630 nm (demo)');
    expect(text).toContain('7 reading(s) at 7 concentration(s), 0.500–6.00 µM');
    expect(text).toMatch(/ε = \(1\.30\d+ ± 0\.00\d+\)e5 M⁻¹ cm⁻¹ {3}95% CI \[1\.2\d+, 1\.3\d+\]e5/);
    expect(text).toMatch(/a = \(\d\.\d ± \d\.\d\)e-3 AU/);
    expect(text).not.toContain('Warnings');
    expect(text).not.toContain('NaN');
  });

  it('lists the linear-range warning', () => {
    const out = calibrate([1, 2, 4, 8, 12].map((c) => ({ concentration_M: c * 1e-6, absorbance: 0.13 * c })));
    if (!out.ok) throw new Error(out.error);
    expect(calibrationReport(out.calibration)).toMatch(/Warnings:\n {2}- .*above 1 AU/);
  });
});
