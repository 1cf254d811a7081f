import { describe, expect, it } from 'vitest';
import type { AnalysisResult } from '../../kinetics/analysisTypes';
import {
  EventSchema, LIMITS, RequestSchema, parseRequest,
  type AnalysisResultView,
} from './contract';

// The schema mirrors the engine's own type; this assignment fails to type-check if either
// side drifts. (Reject reasons and source status are one declaration, sourceStatus.ts.)
const _resultFits = (r: AnalysisResult): AnalysisResultView => r;
void _resultFits;

describe('bridge contract', () => {
  it('accepts each well-formed request', () => {
    const good: unknown[] = [
      { type: 'getState' },
      { type: 'chooseSource', source: { kind: 'simulated', speed: 50 } },
      { type: 'chooseSource', source: { kind: 'serial', path: '/dev/ttyUSB0', baud: 115200 } },
      { type: 'chooseSource', source: { kind: 'replay', file: 'run-2026.jsonl', speed: 'max' } },
      { type: 'setWavelength', wavelength_nm: 630 },
      { type: 'markEvent', note: 'bubble in the cell' },
      { type: 'setSampleDetails', details: { sample: 'dye 5 µM', temperature_C: 25, concentrations: [{ name: 'hypochlorite', value: 0.01, unit: 'M' }] } },
      { type: 'setFitWindow', window: { from_s: 10, to_s: null } },
      { type: 'setAnalysisOptions', options: { targetHalfLives: 3, robust: false } },
      { type: 'saveExport', format: 'csv' },
    ];
    for (const g of good) expect(parseRequest(g).ok, JSON.stringify(g)).toBe(true);
  });

  it('refuses malformed requests with a one-line reason naming the field', () => {
    const bad: [unknown, string][] = [
      [{ type: 'launchMissiles' }, 'type'],
      [{ type: 'setWavelength', wavelength_nm: Number.NaN }, 'the wavelength (nm) must be a number'],
      [{ type: 'setWavelength', wavelength_nm: 5000 }, 'the wavelength (nm) must be at most'],
      [{ type: 'chooseSource', source: { kind: 'serial', path: '/dev/ttyS0', baud: 1234 } }, 'the baud rate'],
      [{ type: 'chooseSource', source: { kind: 'replay', file: '../../etc/passwd' } }, 'the recorded run (file name)'],
      [{ type: 'chooseSource', source: { kind: 'replay', file: '..' } }, 'the recorded run (file name)'],
      [{ type: 'markEvent', note: 'x'.repeat(LIMITS.maxNote + 1) }, 'the note'],
      [{ type: 'setFitWindow', window: { from_s: 50, to_s: 10 } }, 'window'],
      [{ type: 'start', extra: 1 }, 'the request is not accepted'],
      ['start', 'the request'],
    ];
    for (const [input, field] of bad) {
      const r = parseRequest(input);
      expect(r.ok, JSON.stringify(input)).toBe(false);
      if (!r.ok) {
        expect(r.error).toContain(field);
        expect(r.error).not.toContain('\n');
      }
    }
    // negative control: the same schema accepts the corrected request
    expect(RequestSchema.safeParse({ type: 'setWavelength', wavelength_nm: 630 }).success).toBe(true);
  });

  it('caps a readings batch and keeps its arrays aligned', () => {
    const n = LIMITS.maxBatchPoints;
    const ok = { type: 'readings', runId: 'r1', fromIndex: 0, time_s: new Array(n).fill(1), absorbance: new Array(n).fill(0.5), flags: new Array(n).fill(0) };
    expect(EventSchema.safeParse(ok).success).toBe(true);
    expect(EventSchema.safeParse({ ...ok, time_s: [...ok.time_s, 2], absorbance: [...ok.absorbance, 0.4], flags: [...ok.flags, 0] }).success).toBe(false);
    expect(EventSchema.safeParse({ ...ok, flags: [0] }).success).toBe(false);
  });
});
