import { describe, expect, it } from 'vitest';
import { ReadingAssembler } from './readingAssembler';
import { LineParser } from './lineProtocol';
import { formatAbsorbance, formatCounts, formatIdentity } from './lineFormat';
import type { Reading, SourceEvent } from '../sources/sourceTypes';
import { ReadingFlag } from '../sources/sourceTypes';

function harness() {
  const events: SourceEvent[] = [];
  const parser = new LineParser();
  const asm = new ReadingAssembler((e) => events.push(e));
  const feed = (line: string, host_ms: number) => asm.accept(parser.parse(line), line, host_ms, parser.rejected);
  const readings = () => events.flatMap((e) => (e.type === 'reading' ? [e.reading] : [])) as Reading[];
  const warnings = () => events.flatMap((e) => (e.type === 'warning' ? [e.message] : []));
  return { events, asm, feed, readings, warnings };
}

const id = (sends: 'absorbance' | 'counts') => formatIdentity({ maker: 'm', model: 'x', serial: 's', firmware: '1', sends });

describe('reading assembler', () => {
  it('keeps the run time line going when the device restarts and its clock goes back to zero', () => {
    const h = harness();
    h.feed(id('absorbance'), 0);
    for (let t = 1; t <= 10; t++) h.feed(formatAbsorbance(t, 630, 0.5, null), t * 1000);
    h.feed(id('absorbance'), 14_000); // power-cycled: identifies itself, clock from 0
    h.feed(formatAbsorbance(1, 630, 0.5, null), 15_000);
    h.feed(formatAbsorbance(2, 630, 0.5, null), 16_000);
    const r = h.readings();
    expect(r).toHaveLength(12);
    // 10 s at the last reading before, then 5 s of host time to the first after: 15 s, then 16 s
    expect(r[10]!.deviceTime_s).toBeCloseTo(15, 9);
    expect(r[11]!.deviceTime_s).toBeCloseTo(16, 9);
    expect(h.warnings().join()).toMatch(/device restarted/);
  });

  it('does not shift time when the identity is only an answer to "who"', () => {
    const h = harness();
    h.feed(id('absorbance'), 0);
    h.feed(formatAbsorbance(5, 630, 0.5, null), 5000);
    h.feed(id('absorbance'), 5500);
    h.feed(formatAbsorbance(6, 630, 0.5, null), 6000);
    expect(h.readings().map((r) => r.deviceTime_s)).toEqual([5, 6]);
    expect(h.warnings()).toEqual([]);
  });

  it('flags absorbance past about 2 AU from an absorbance device', () => {
    const h = harness();
    h.feed(formatAbsorbance(1, 630, 2.3, null), 0);
    h.feed(formatAbsorbance(2, 630, 1.2, null), 0);
    expect(h.readings()[0]!.flags & ReadingFlag.beyondRange).toBeTruthy();
    expect(h.readings()[1]!.flags & ReadingFlag.beyondRange).toBe(0);
  });

  it('holds counts back until a blank at the same wavelength, and drops non-physical counts with a reason', () => {
    const h = harness();
    h.feed(id('counts'), 0);
    h.feed(formatCounts(false, 1, 630, 20000, 800, null), 0);
    expect(h.readings()).toHaveLength(0);
    expect(h.asm.awaitingBlank).toBe(1);
    for (let t = 2; t <= 6; t++) h.feed(formatCounts(true, t, 630, 40800, 800, null), 0);
    h.feed(formatCounts(false, 7, 630, 20800, 800, null), 0);
    expect(h.events.some((e) => e.type === 'blank' && e.blank.netBlank_counts === 40000)).toBe(true);
    // common practice: A = −log10((20800 − 800)/(40800 − 800)) = log10 2
    expect(h.readings()[0]!.absorbance).toBeCloseTo(Math.log10(2), 12);
    h.feed(formatCounts(false, 8, 630, 700, 800, null), 0); // below the dark level
    expect(h.readings()).toHaveLength(1);
    expect(h.warnings().join()).toMatch(/at or below the dark level/);
    h.feed(formatCounts(false, 9, 655, 20800, 800, null), 0); // wavelength changed: that blank does not serve
    expect(h.readings()).toHaveLength(1);
    expect(h.warnings().join()).toMatch(/blank was taken at 630 nm, the device now reads at 655 nm/);
  });
});
