/**
 * The one time-zero rule of every reader: the last `mixed` from record version 2 on,
 * the first in version 1; then the header's reactionStart_s; then the first reading
 * (version 2) or the device times as they are (version 1). The expected times are
 * worked by hand from the lines below.
 */
import { describe, expect, it } from 'vitest';
import { demoHeader } from '../../test/fixtures/demoRecordHeader';
import { analysisReadings, parseRunRecord } from './journalReader';
import { fitSettingsToApply, recordFitSettings, recordTimeZero } from './recordTimeZero';

const WALL = '2026-12-01T18:40:00.000+01:00';

/** Readings at device times 0..9 s (A falling), Mixed pressed at 2 s and corrected to 4 s. */
function record(version: 1 | 2, mixed: number[], extraHeader: Record<string, unknown> = {}): string {
  const lines = [JSON.stringify({ ...demoHeader(), version, ...extraHeader })];
  for (let i = 0; i < 10; i++) {
    for (const t of mixed) if (t === i) lines.push(JSON.stringify({ ev: 'mixed', h: i * 1000, t, wall: WALL }));
    lines.push(JSON.stringify([i, 0.65 - 0.01 * i, i * 1000]));
  }
  return lines.join('\n') + '\n';
}

describe('time zero of a record', () => {
  it('version 2: the last Mixed sets time zero', () => {
    const r = parseRunRecord(record(2, [2, 4]), 'v2.jsonl');
    expect(recordTimeZero(r.header, r.events)).toEqual({ deviceTime_s: 4, index: 4, from: 'mixed' });
    const s = analysisReadings(r);
    expect(s.timeZero_s).toBe(4);
    expect(Array.from(s.time_s)).toEqual([0, 1, 2, 3, 4, 5]);
    expect(s.absorbance[0]).toBeCloseTo(0.61, 12);
  });

  it('version 1: the first Mixed still sets time zero', () => {
    const r = parseRunRecord(record(1, [2, 4]), 'v1.jsonl');
    const s = analysisReadings(r);
    expect(s.timeZero_s).toBe(2);
    expect(s.time_s.length).toBe(8);
  });

  it('negative control: reading a version-2 record with the first-wins rule gives another time zero', () => {
    const r = parseRunRecord(record(2, [2, 4]), 'v2.jsonl');
    const firstWins = r.events.find((p) => p.event.ev === 'mixed')!.event.t;
    expect(firstWins).not.toBe(analysisReadings(r).timeZero_s);
  });

  it('without Mixed: the instrument’s own reaction start, else the first reading (version 2) or device times (version 1)', () => {
    const started = parseRunRecord(record(2, [], { reactionStart_s: 0 }), 'sim.jsonl');
    expect(recordTimeZero(started.header, started.events).from).toBe('reactionStart');
    expect(analysisReadings(started).timeZero_s).toBe(0);
    const plainV2 = parseRunRecord(record(2, []), 'plain2.jsonl');
    expect(analysisReadings(plainV2).timeZero_s).toBe(0);
    expect(recordTimeZero(plainV2.header, plainV2.events).from).toBe('firstReading');
    const plainV1 = parseRunRecord(record(1, []), 'plain1.jsonl');
    expect(analysisReadings(plainV1).timeZero_s).toBeNull();
  });
});

describe('fit settings at the stop', () => {
  it('are read back from the last fitSettings line, and the command line overrides each one', () => {
    const text = record(2, [0]) + JSON.stringify({ ev: 'fitSettings', h: 10_000, t: 9, from_s: 2, to_s: null, targetHalfLives: 4, precision: 0.1 }) + '\n';
    const r = parseRunRecord(text, 'fs.jsonl');
    const settings = recordFitSettings(r.events);
    expect(settings).toEqual({ from_s: 2, to_s: null, targetHalfLives: 4, precision: 0.1 });
    expect(fitSettingsToApply(settings)).toEqual({ from_s: 2, targetHalfLives: 4, precision: 0.1 });
    expect(fitSettingsToApply(settings, { from_s: 0, precision: 0.05 })).toEqual({ from_s: 0, targetHalfLives: 4, precision: 0.05 });
    expect(fitSettingsToApply(null)).toEqual({});
  });
});
