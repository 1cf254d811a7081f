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
  const feed = (line: string, host_ms: number) => asm.accept(parser.parse(line, host_ms), line, host_ms, parser.rejected);
  const readings = () => events.flatMap((e) => (e.type === 'reading' ? [e.reading] : [])) as Reading[];
  const warnings = () => events.flatMap((e) => (e.type === 'warning' ? [e.message] : []));
  return { events, asm, parser, feed, readings, warnings };
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

  it('refuses one line that would wreck the run (time 1e15 s, absorbance 5e300), says so once, and keeps the time line', () => {
    const h = harness();
    h.feed(id('absorbance'), 0);
    for (let t = 1; t <= 20; t++) h.feed(formatAbsorbance(t, 630, 0.5 - 0.01 * t, null), t * 1000);
    h.feed(formatAbsorbance(1e15, 630, 0.29, null), 21_000);
    h.feed(formatAbsorbance(21, 630, 5e300, null), 21_000);
    for (let t = 21; t <= 40; t++) h.feed(formatAbsorbance(t, 630, 0.5 - 0.01 * t, null), t * 1000);
    const times = h.readings().map((r) => r.deviceTime_s);
    expect(times).toEqual(Array.from({ length: 40 }, (_, i) => i + 1));
    expect(h.parser.rejected).toMatchObject({ timeJump: 1, absorbanceRange: 1, timeBackwards: 0 });
    const said = h.warnings();
    expect(said.filter((w) => /^device time leaps from 20 s to 1000000000000000 s while 1\.0 s passed on this computer: the line was left out and the run keeps its time line \(1 such line\(s\) so far\)/.test(w))).toHaveLength(1);
    expect(said.filter((w) => /^absorbance 5e\+300 AU is outside what a photometer can read \(-1 to 10 AU\): the line was left out/.test(w))).toHaveLength(1);
    // negative control: without the host clock the parser cannot tell, and the corrupted time takes over the run
    const blind = new LineParser();
    const kept: number[] = [];
    const blindAsm = new ReadingAssembler((e) => { if (e.type === 'reading') kept.push(e.reading.deviceTime_s); });
    for (let t = 1; t <= 20; t++) blindAsm.accept(blind.parse(formatAbsorbance(t, 630, 0.4, null)), '', t * 1000, blind.rejected);
    blindAsm.accept(blind.parse(formatAbsorbance(1e15, 630, 0.29, null)), '', 21_000, blind.rejected);
    for (let t = 21; t <= 40; t++) blindAsm.accept(blind.parse(formatAbsorbance(t, 630, 0.4, null)), '', t * 1000, blind.rejected);
    expect(kept.at(-1)).toBe(1e15);
    expect(blind.rejected.timeBackwards).toBe(20);
  });

  it('counts an absorbance from counts that no photometer reads under the same reason', () => {
    const h = harness();
    h.feed(id('counts'), 0);
    // A detector with a deep range: the blank 2e11 counts above the dark.
    for (let t = 1; t <= 5; t++) h.feed(formatCounts(true, t, 630, 2e11 + 800, 800, null), t * 1000);
    h.feed(formatCounts(false, 6, 630, 1e11 + 800, 800, null), 6000);
    // 1 count above the dark: T = 5e-12, A = 11.3 AU
    h.feed(formatCounts(false, 7, 630, 801, 800, null), 7000);
    h.feed(formatCounts(false, 8, 630, 1e11 + 800, 800, null), 8000);
    expect(h.readings().map((r) => r.deviceTime_s)).toEqual([6, 8]);
    expect(h.parser.rejected.absorbanceRange).toBe(1);
    expect(h.events.some((e) => e.type === 'rejected' && e.reason === 'absorbanceRange' && e.counts.absorbanceRange === 1)).toBe(true);
    expect(h.warnings().join()).toMatch(/is outside what a photometer can read \(-1 to 10 AU\) \(sample 801, dark 800 counts\)/);
  });
});
