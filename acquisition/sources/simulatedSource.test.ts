import { describe, expect, it } from 'vitest';
import { linearRegression } from 'simple-statistics';
import { SimulatedSource } from './simulatedSource';
import { defaultInstrumentSettings } from './simulatedInstrument';
import type { Reading, SourceEvent } from './sourceTypes';
import { ReadingFlag } from './sourceTypes';

const reaction = { order: 'first' as const, k: 0.004, a0: 0.65, aInf: 0.005 };

function collect(source: SimulatedSource): { events: SourceEvent[]; readings: Reading[]; ended: Promise<void> } {
  const events: SourceEvent[] = [];
  const readings: Reading[] = [];
  let done!: () => void;
  const ended = new Promise<void>((r) => (done = r));
  source.on((e) => {
    events.push(e);
    if (e.type === 'reading') readings.push(e.reading);
    if (e.type === 'status' && e.status.kind === 'ended') done();
  });
  return { events, readings, ended };
}


/** Waits for what the test expects to happen, however slowly a loaded machine gets there. */
async function until(cond: () => boolean, what: string, timeout_ms = 20_000): Promise<void> {
  const t0 = Date.now();
  while (!cond()) {
    if (Date.now() - t0 > timeout_ms) throw new Error(`${what} did not happen within ${timeout_ms} ms`);
    await new Promise((r) => setTimeout(r, 5));
  }
}

describe('simulated source', () => {
  it('plays a first-order decay whose log-linear slope is −k (absorbance mode)', async () => {
    const src = new SimulatedSource({ instrument: defaultInstrumentSettings(reaction, { seed: 7 }), speed: 'max', duration_s: 600 });
    const { readings, events, ended } = collect(src);
    await src.open();
    await ended;
    expect(readings.length).toBe(600);
    expect(events.find((e) => e.type === 'status' && e.status.kind === 'connected')).toMatchObject({ status: { identity: { sends: 'absorbance' } } });
    for (let i = 1; i < readings.length; i++) expect(readings[i]!.deviceTime_s - readings[i - 1]!.deviceTime_s).toBeCloseTo(1, 9);
    // common practice: for first order, ln(A − A∞) falls linearly with slope −k. simple-statistics does the regression.
    const decaysAt = (rs: Reading[], k: number): boolean => {
      const { m } = linearRegression(rs.filter((r) => r.deviceTime_s <= 300).map((r) => [r.deviceTime_s, Math.log(r.absorbance - 0.005)]));
      return -m > k * 0.97 && -m < k * 1.03;
    };
    expect(decaysAt(readings, 0.004)).toBe(true);
    expect(src.rejectedCounts().checksum).toBe(0);
    // negative control: the same check on an instrument playing the demo's other rate constant (0.0035 s⁻¹) fails
    const other = new SimulatedSource({ instrument: defaultInstrumentSettings({ ...reaction, k: 0.0035 }, { seed: 7 }), speed: 'max', duration_s: 600 });
    const o = collect(other);
    await other.open();
    await o.ended;
    expect(decaysAt(o.readings, 0.004)).toBe(false);
  });

  it('is the same run for the same seed and a different one for another seed', async () => {
    const run = async (seed: number) => {
      const src = new SimulatedSource({ instrument: defaultInstrumentSettings(reaction, { seed }), speed: 'max', duration_s: 50 });
      const c = collect(src);
      await src.open();
      await c.ended;
      return c.readings.map((r) => r.absorbance);
    };
    expect(await run(3)).toEqual(await run(3));
    expect(await run(3)).not.toEqual(await run(4));
  });

  it('sends counts, waits for a blank, then gives absorbance by the definition', async () => {
    const settings = defaultInstrumentSettings(reaction, { sends: 'counts', seed: 2 });
    const src = new SimulatedSource({ instrument: settings, speed: 200, blankDuration_s: 5 });
    const { readings, events } = collect(src);
    await src.open();
    await new Promise((r) => setTimeout(r, 30));
    expect(readings.length).toBe(0);
    expect(events.some((e) => e.type === 'warning' && /take a blank/.test(e.message))).toBe(true);
    expect(await src.command({ type: 'takeBlank' })).toEqual({ ok: true });
    await until(() => readings.length > 10, 'eleven readings after the blank');
    await src.close();
    const blank = events.find((e) => e.type === 'blank');
    expect(blank).toBeDefined();
    if (blank?.type !== 'blank') return;
    expect(blank.blank.points).toBe(5);
    expect(blank.blank.warmedUp).toBe(true);
    expect(readings.length).toBeGreaterThan(10);
    for (const r of readings) {
      // common practice: A = −log10((I − I_dark)/(I_blank − I_dark)), recomputed here from the reading's own counts
      expect(r.absorbance).toBeCloseTo(-Math.log10((r.sampleCounts! - r.darkCounts!) / blank.blank.netBlank_counts), 12);
      expect(r.flags & ReadingFlag.fromIntensity).toBeTruthy();
    }
  });

  it('answers commands: a refused wavelength, stop and start, speed', async () => {
    const src = new SimulatedSource({ instrument: defaultInstrumentSettings(reaction), speed: 100 });
    const { readings } = collect(src);
    await src.open();
    expect(await src.command({ type: 'setWavelength', wavelength_nm: 5000 })).toMatchObject({ ok: false, error: /wavelength out of range/ });
    expect(await src.command({ type: 'setWavelength', wavelength_nm: 655 })).toEqual({ ok: true });
    expect(await src.command({ type: 'stop' })).toEqual({ ok: true });
    const n = readings.length;
    await new Promise((r) => setTimeout(r, 60));
    expect(readings.length).toBe(n);
    await src.command({ type: 'start' });
    expect(await src.command({ type: 'setSpeed', speed: 0 })).toMatchObject({ ok: false });
    await until(() => readings.length > n, 'a reading after start');
    await src.close();
    expect(readings[readings.length - 1]!.wavelength_nm).toBe(655);
    expect(await src.command({ type: 'start' })).toMatchObject({ ok: false });
  });

  it('warns when the cell temperature drifts past 0.5 K', async () => {
    // 0.1 K/min: after 6 minutes the cell is 0.6 K warmer (common practice: ±0.5 K for kinetics)
    const src = new SimulatedSource({ instrument: defaultInstrumentSettings(reaction, { temperatureDrift_KperMin: 0.1 }), speed: 'max', duration_s: 600 });
    const { events, ended } = collect(src);
    await src.open();
    await ended;
    const w = events.filter((e) => e.type === 'warning' && /cell temperature/.test(e.message));
    expect(w.length).toBe(1);
    // negative control: a steady cell gives no warning
    const steady = new SimulatedSource({ instrument: defaultInstrumentSettings(reaction), speed: 'max', duration_s: 600 });
    const s2 = collect(steady);
    await steady.open();
    await s2.ended;
    expect(s2.events.some((e) => e.type === 'warning')).toBe(false);
  });
});

describe('simulated source: spectrum for the wavelength choice', () => {
  it('sends a frame on scan whose absorbance maximum is the band centre', async () => {
    const { frameMaximum } = await import('../protocol/frameMaximum');
    const src = new SimulatedSource({ instrument: defaultInstrumentSettings(reaction, { sigmaT: 0, bandCentre_nm: 628.6 }), speed: 100 });
    const { events } = collect(src);
    await src.open();
    expect(await src.command({ type: 'scan' })).toEqual({ ok: true });
    await until(() => events.some((e) => e.type === 'spectrum'), 'the spectrum frame');
    await src.close();
    const frame = events.find((e) => e.type === 'spectrum');
    if (frame?.type !== 'spectrum') throw new Error('no spectrum frame');
    expect(frame.frame.wavelengths_nm.length).toBe(131);
    // analytic reference: the instrument's band is a Gaussian centred at 628.6 nm (noise off); 2 nm pixels, written to 1e-4 AU
    const peak = frameMaximum(frame.frame);
    expect(peak.ok && Math.abs(peak.wavelength_nm - 628.6)).toBeLessThan(0.1);
  });
});
