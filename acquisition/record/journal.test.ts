import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { Journal, JournalError } from './journal';
import { RunRecordError, analysisReadings, parseRunRecord, readRunRecord } from './journalReader';
import { appendNote, readNotes, sidecarPath } from './recordNotes';
import { demoHeader } from '../../test/fixtures/demoRecordHeader';
import { memoryJournalFs as memoryFs } from '../../test/fixtures/memoryJournalFs';
import { ReadingFlag, type Reading } from '../sources/sourceTypes';

function reading(t: number, a: number, extra: Partial<Reading> = {}): Reading {
  return { deviceTime_s: t, hostTime_ms: 0, absorbance: a, wavelength_nm: 630, cellTemperature_C: null, flags: 0, ...extra };
}

let dir: string;
beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'rateline-journal-'));
});
afterEach(() => rmSync(dir, { recursive: true, force: true }));

describe('run record round trip', () => {
  it('reads back every reading, event and the header exactly as written', () => {
    const path = join(dir, 'run.jsonl');
    const j = Journal.create(path, demoHeader(), { timer: false });
    // Awkward numbers on purpose: shortest round-trip decimal strings must parse back bit for bit
    // (ECMA-262 Number::toString gives the shortest string that round-trips; JSON.parse reads it).
    const values = [0.65, 0.1 + 0.2, 1e-300, -0.0123456789012345, 2.5e-7, 1 / 3];
    j.event({ ev: 'blank', h: 0, t: null, detail: 'blank taken', noise_AU: 0.0004, drift_AUperMin: null });
    j.event({ ev: 'mixed', h: 1, t: 0, wall: '2026-12-01T18:40:01.000+01:00' });
    values.forEach((a, i) => j.reading(reading(i, a, { hostTime_ms: j.origin_ms + i * 1000 })));
    j.reading(reading(6, 0.5, { flags: ReadingFlag.fromIntensity | ReadingFlag.saturated, cellTemperature_C: 25.1, sampleCounts: 41000, darkCounts: 120 }));
    j.reading(reading(7, 0.5, { flags: ReadingFlag.deviceWarning }));
    j.reading(reading(8, 0.5, { sampleCounts: 40000 }));
    j.event({ ev: 'mark', h: 9000, t: 8, note: 'bubble seen — "tapped" the cell' });
    j.event({ ev: 'stop', h: 9001, t: 8, reason: 'user', detail: 'Ctrl-C' });
    j.close({ checksum: 2 });

    // JSON Lines (jsonlines.org): UTF-8, one JSON value per line, each line ended by \n.
    const text = readFileSync(path, 'utf8');
    expect(text.endsWith('\n')).toBe(true);
    const lines = text.slice(0, -1).split('\n');
    expect(lines.every((l) => l.length > 0 && JSON.parse(l) !== undefined)).toBe(true);
    expect(lines[3]).toBe('[0,0.65,0]');

    const rec = readRunRecord(path);
    expect(rec.header).toEqual(demoHeader());
    expect(rec.recovery.clean).toBe(true);
    expect(rec.recovery.message).toBeNull();
    expect(rec.end?.readings).toBe(9);
    expect(rec.end?.rejected).toEqual({ checksum: 2 });
    expect(rec.readings.count).toBe(9);
    for (let i = 0; i < values.length; i++) {
      expect(Object.is(rec.readings.absorbance[i], values[i])).toBe(true);
      expect(rec.readings.h_ms[i]).toBe(i * 1000);
    }
    expect(rec.readings.flags[6]).toBe(ReadingFlag.fromIntensity | ReadingFlag.saturated);
    expect(rec.readings.cellT_C[6]).toBe(25.1);
    expect(rec.readings.sampleCounts[6]).toBe(41000);
    expect(rec.readings.darkCounts[6]).toBe(120);
    expect(rec.readings.flags[7]).toBe(ReadingFlag.deviceWarning);
    expect(Number.isNaN(rec.readings.cellT_C[7])).toBe(true);
    expect(rec.readings.sampleCounts[8]).toBe(40000);
    expect(Number.isNaN(rec.readings.darkCounts[8])).toBe(true);
    expect(rec.events.map((e) => [e.event.ev, e.index])).toEqual([['blank', 0], ['mixed', 0], ['mark', 9], ['stop', 9]]);
    expect(rec.events[2]!.event).toMatchObject({ note: 'bubble seen — "tapped" the cell' });
  });

  it('measures analysis time from the mixed event and leaves the pre-mixing readings out', () => {
    const path = join(dir, 'mixed.jsonl');
    const j = Journal.create(path, demoHeader(), { timer: false });
    j.reading(reading(10, 0.001));
    j.reading(reading(11, 0.002));
    j.event({ ev: 'mixed', h: 0, t: 12, wall: '2026-12-01T18:40:01.000+01:00' });
    for (let t = 12; t <= 15; t++) j.reading(reading(t, 0.6 - 0.01 * t));
    j.close();
    const s = analysisReadings(readRunRecord(path));
    expect(Array.from(s.time_s)).toEqual([0, 1, 2, 3]);
    expect(s.absorbance[0]).toBeCloseTo(0.48, 12);
    expect(s.timeZero_s).toBe(12);
  });

  it('leaves out a reading whose time goes backwards, with a warning, so the record stays readable', () => {
    const path = join(dir, 'back.jsonl');
    const j = Journal.create(path, demoHeader(), { timer: false });
    j.reading(reading(5, 0.5));
    j.reading(reading(4, 0.5));
    j.reading(reading(6, 0.5));
    j.reading(reading(7, Number.NaN));
    j.close();
    const rec = readRunRecord(path);
    expect(Array.from(rec.readings.t_s)).toEqual([5, 6]);
    expect(rec.events.map((e) => e.event.ev)).toEqual(['warning', 'warning']);
  });
});

describe('validation names the file and line', () => {
  const good = (): string[] => [
    JSON.stringify(demoHeader()),
    '[0,0.65,0]',
    '[1,0.64,1000]',
    '{"ev":"mark","h":1500,"t":1,"note":"ok"}',
    '[2,0.63,2000]',
    '{"ev":"end","h":3000,"wall":"2026-12-01T18:41:00.000+01:00","readings":3,"rejected":{}}',
  ];

  it('accepts the untouched record (negative control for the cases below)', () => {
    expect(parseRunRecord(good().join('\n') + '\n', 'runs/a.jsonl').readings.count).toBe(3);
  });

  it.each([
    [3, '[1,"x",1000]', 'not a valid reading'],
    [3, '[1,0.64]', 'not a valid reading'],
    [3, '[1,0.64,1000,-1]', 'not a valid reading'],
    [3, '[1,0.64,1000,null]', 'flags (column 4) must be a whole number'],
    [3, '[1,0.64,1000,0,25,1,2,3]', 'at most 7 columns'],
    [3, '[1,1e999,1000]', 'not a valid reading'],
    [4, '{"ev":"mark","h":1500,"t":1}', 'not a valid "mark" event'],
    [4, '{"ev":"teleport","h":1}', 'not a valid "teleport" event'],
    [4, '{"ev":"mark",', 'not valid JSON'],
    [5, '[0.5,0.63,2000]', 'time goes backwards'],
    [1, '{"format":"rateline-run-record","version":1}', 'header is not valid'],
  ])('line %i replaced by %s', (lineNo, replacement, what) => {
    const lines = good();
    lines[lineNo - 1] = replacement;
    let caught: unknown;
    try {
      parseRunRecord(lines.join('\n') + '\n', 'runs/a.jsonl');
    } catch (err) {
      caught = err;
    }
    expect(caught).toBeInstanceOf(RunRecordError);
    const e = caught as RunRecordError;
    expect(e.line).toBe(lineNo);
    expect(e.message).toContain(`runs/a.jsonl line ${lineNo}: `);
    expect(e.message).toContain(what);
    expect(e.message.split('\n')).toHaveLength(1);
  });

  it('refuses a line after the end line and a newer format version', () => {
    const after = [...good(), '[3,0.62,3000]'].join('\n') + '\n';
    expect(() => parseRunRecord(after, 'r.jsonl')).toThrow(/r\.jsonl line 7: a line after the end line/);
    const newer = [JSON.stringify({ ...demoHeader(), version: 3 }), '[0,1,0]'].join('\n') + '\n';
    expect(() => parseRunRecord(newer, 'r.jsonl')).toThrow(/format version 3, newer than this Rateline reads/);
    expect(() => parseRunRecord('time_s,absorbance\n0,0.5\n', 'r.csv')).toThrow(/r\.csv line 1: not a run record/);
  });
});

describe('recovery of a record cut off mid-run', () => {
  function unfinishedRecord(): string {
    const path = join(dir, 'cut.jsonl');
    const j = Journal.create(path, demoHeader(), { timer: false });
    for (let t = 0; t < 20; t++) j.reading(reading(t, 0.65 * Math.exp(-0.0035 * t), { cellTemperature_C: 25 }));
    j.event({ ev: 'mark', h: 20000, t: 19, note: 'last note' });
    j.commit(); // what a killed writer leaves: everything committed, no end line
    return readFileSync(path, 'utf8');
  }

  it('keeps every complete line of a record with no end line', () => {
    const rec = parseRunRecord(unfinishedRecord(), 'cut.jsonl');
    expect(rec.end).toBeNull();
    expect(rec.readings.count).toBe(20);
    expect(rec.events).toHaveLength(1);
    expect(rec.recovery.clean).toBe(false);
    expect(rec.recovery.tornLine).toBeNull();
    expect(rec.recovery.message).toContain('no end line');
    expect(rec.recovery.message).toContain('recovered 20 readings');
  });

  it('drops and reports a last line torn at any character, keeping all lines before it', () => {
    const text = unfinishedRecord() + '[20,0.6053,20000,0,25]\n';
    const lastStart = text.lastIndexOf('[20,');
    // Every cut inside the last line (but before its line end) must recover the 20 complete readings.
    for (let cut = lastStart + 1; cut < text.length - 1; cut++) {
      const rec = parseRunRecord(text.slice(0, cut), 'cut.jsonl');
      expect(rec.readings.count).toBe(20);
      expect(rec.recovery.tornLine).toEqual({ line: 23, chars: cut - lastStart });
      expect(rec.recovery.message).toContain('dropped the torn last line 23');
    }
    // A cut exactly before the line end leaves a whole line: it is kept.
    expect(parseRunRecord(text.slice(0, -1), 'cut.jsonl').readings.count).toBe(21);
  });

  it('ignores zero bytes a power cut left at the end', () => {
    const rec = parseRunRecord(unfinishedRecord() + '[20,0.60' + '\0'.repeat(512), 'cut.jsonl');
    expect(rec.readings.count).toBe(20);
    expect(rec.recovery.zeroBytes).toBe(512);
    expect(rec.recovery.tornLine?.line).toBe(23);
  });

  it('still reports a damaged line that is not the last (negative control for the torn-line rule)', () => {
    const text = unfinishedRecord();
    const lines = text.split('\n');
    lines[5] = lines[5]!.slice(0, 4);
    expect(() => parseRunRecord(lines.join('\n'), 'cut.jsonl')).toThrow(/cut\.jsonl line 6: not valid JSON/);
  });

  it('says plainly when nothing can be recovered', () => {
    expect(() => parseRunRecord('', 'empty.jsonl')).toThrow(/empty\.jsonl: no header line/);
    expect(() => parseRunRecord('{"format":"rateline-ru', 'torn.jsonl')).toThrow(/no header line/);
  });
});

describe('a record is never rewritten', () => {
  it('refuses to create over an existing file and leaves it untouched', () => {
    const path = join(dir, 'kept.jsonl');
    writeFileSync(path, 'precious data\n');
    let caught: unknown;
    try {
      Journal.create(path, demoHeader(), { timer: false });
    } catch (err) {
      caught = err;
    }
    expect(caught).toBeInstanceOf(JournalError);
    expect((caught as Error).message).toBe(`${path}: a file of that name is already there, and a run record is never overwritten; choose another name.`);
    expect(readFileSync(path, 'utf8')).toBe('precious data\n');
  });

  it('refuses a second open for writing of a record it created', () => {
    const path = join(dir, 'once.jsonl');
    const j = Journal.create(path, demoHeader(), { timer: false });
    j.reading(reading(0, 0.5));
    expect(() => Journal.create(path, demoHeader(), { timer: false })).toThrow(/never overwritten/);
    j.close();
    expect(readRunRecord(path).readings.count).toBe(1);
    expect(() => j.reading(reading(1, 0.5))).toThrow(/already closed/);
  });

  it('names a missing folder', () => {
    expect(() => Journal.create(join(dir, 'no', 'such', 'r.jsonl'), demoHeader(), { timer: false })).toThrow(/does not exist; create it/);
  });
});

describe('fsync policy', () => {
  /** Readings arrive every 10 ms from host time 0, so reading i was handed over at i × 10 ms. */
  const oldestUnsyncedAge_ms = (j: Journal, now: number): number => {
    const p = j.progress();
    return p.syncedReadings < p.readings ? now - p.syncedReadings * 10 : 0;
  };

  it('keeps every reading older than one second on disk, with a few syncs a second', () => {
    const fs = memoryFs();
    let now = 0;
    const j = Journal.create('mem.jsonl', demoHeader(), { fs, now_ms: () => now, timer: false });
    const syncsAtStart = fs.syncs;
    expect(syncsAtStart).toBe(1); // the header is synced at creation
    let worstAge_ms = 0;
    // 100 readings a second for 10 s of host time; device time equals host time here.
    for (let i = 0; i < 1000; i++) {
      now = i * 10;
      j.reading(reading(i / 100, 0.5, { hostTime_ms: now }));
      worstAge_ms = Math.max(worstAge_ms, oldestUnsyncedAge_ms(j, now));
    }
    expect(worstAge_ms).toBeLessThanOrEqual(1000);
    const syncs = fs.syncs - syncsAtStart;
    // 10 s at one commit per 250 ms: about 40.
    expect(syncs).toBeGreaterThanOrEqual(36);
    expect(syncs).toBeLessThanOrEqual(41);
    // What a power cut would leave (only fsynced bytes) recovers all but the last quarter second.
    const rec = parseRunRecord(fs.synced, 'mem.jsonl');
    expect(rec.readings.count).toBeGreaterThanOrEqual(1000 - 26);
  });

  it('commits a quiet feed from the timer tick and commits at close', () => {
    const fs = memoryFs();
    let now = 0;
    const j = Journal.create('mem.jsonl', demoHeader(), { fs, now_ms: () => now, timer: false });
    j.reading(reading(0, 0.5));
    expect(fs.syncs).toBe(1);
    now = 100;
    j.tick();
    expect(fs.syncs).toBe(1);
    now = 260;
    j.tick();
    expect(fs.syncs).toBe(2);
    expect(j.progress().syncedReadings).toBe(1);
    j.reading(reading(1, 0.5));
    j.close();
    expect(fs.syncs).toBe(3);
    expect(parseRunRecord(fs.synced, 'mem.jsonl').end?.readings).toBe(2);
  });

  it('a lax policy breaks the one-second promise (negative control)', () => {
    const fs = memoryFs();
    let now = 0;
    const j = Journal.create('mem.jsonl', demoHeader(), { fs, now_ms: () => now, timer: false, commit_ms: 5000 });
    let worstAge_ms = 0;
    for (let i = 0; i < 1000; i++) {
      now = i * 10;
      j.reading(reading(i / 100, 0.5, { hostTime_ms: now }));
      worstAge_ms = Math.max(worstAge_ms, oldestUnsyncedAge_ms(j, now));
    }
    expect(worstAge_ms).toBeGreaterThan(1000);
  });

  it('a failing disk gives one clear sentence and counts what is saved', () => {
    const fs = memoryFs();
    let now = 0;
    const j = Journal.create('mem.jsonl', demoHeader(), { fs, now_ms: () => now, timer: false });
    j.reading(reading(0, 0.5));
    now = 300;
    j.reading(reading(1, 0.5));
    fs.failWrites = 'ENOSPC';
    now = 600;
    j.reading(reading(2, 0.5)); // buffered: not due yet
    now = 900;
    expect(() => j.reading(reading(3, 0.5))).toThrow('mem.jsonl: the run record could not be written further (the disk is full); it holds 2 readings (the last at 1 s device time), complete up to its last line; free space or choose another disk, and record again.');
    expect(() => j.reading(reading(4, 0.5))).toThrow(JournalError);
    j.close();
    expect(parseRunRecord(fs.synced, 'mem.jsonl').readings.count).toBe(2);
  });
});

describe('notes added later go beside the record', () => {
  it('appends notes to the sidecar and leaves the record byte for byte as it was', () => {
    const path = join(dir, 'run.jsonl');
    const j = Journal.create(path, demoHeader(), { timer: false });
    j.reading(reading(0, 0.65));
    j.close();
    const before = readFileSync(path);
    appendNote(path, { note: 'repeat at 30 °C', author: 'demo' }, new Date('2026-12-02T08:10:00Z'));
    appendNote(path, { note: 'spike at 12 s was a bubble', t: 12 });
    expect(sidecarPath(path)).toBe(join(dir, 'run.notes.jsonl'));
    expect(readFileSync(path).equals(before)).toBe(true);
    const notes = readNotes(path);
    expect(notes.map((n) => n.note)).toEqual(['repeat at 30 °C', 'spike at 12 s was a bubble']);
    expect(notes[1]!.t).toBe(12);
    expect(readNotes(join(dir, 'other.jsonl'))).toEqual([]);
    expect(() => appendNote(join(dir, 'missing.jsonl'), { note: 'x' })).toThrow(/no such run record/);
  });
});

describe('release before analysis', () => {
  it('writes a live feed line by line before it is analysed, and batches a burst', () => {
    const fs = memoryFs();
    let now = 0;
    const j = Journal.create('mem.jsonl', demoHeader(), { fs, now_ms: () => now, timer: false });
    const writesAtStart = j.progress().writes;
    // A live feed: one reading every 10 ms, each released after it is handed over.
    for (let i = 0; i < 10; i++) {
      now = 10 * i + 1;
      j.reading(reading(i, 0.5));
      j.release();
      expect(fs.written.endsWith(`[${i},0.5,0]\n`)).toBe(true); // on its way to disk before any analysis
    }
    expect(j.progress().writes - writesAtStart).toBe(10);
    expect(fs.syncs).toBe(1); // released, not fsynced: the commit policy still decides that
    // A burst within one millisecond: one write for all of it.
    const before = j.progress().writes;
    for (let i = 10; i < 60; i++) {
      j.reading(reading(i, 0.5));
      j.release();
    }
    expect(j.progress().writes - before).toBe(0);
    now += 1;
    j.release();
    expect(j.progress().writes - before).toBe(1);
    expect(parseRunRecord(fs.written, 'mem.jsonl').readings.count).toBe(60);
  });
});

describe('format evolution within version 1', () => {
  it('ignores an unknown extra field in a known line but refuses an unknown event kind', () => {
    const lines = [
      JSON.stringify({ ...demoHeader(), futureField: 1 }),
      '{"ev":"mark","h":0,"t":null,"note":"n","colour":"red"}',
      '[0,0.5,0]',
    ];
    const rec = parseRunRecord(lines.join('\n') + '\n', 'v1.jsonl');
    expect(rec.events[0]!.event).toEqual({ ev: 'mark', h: 0, t: null, note: 'n' });
    expect(() => parseRunRecord([...lines, '{"ev":"stir","h":1,"t":null}'].join('\n') + '\n', 'v1.jsonl')).toThrow(/v1\.jsonl line 4: not a valid "stir" event/);
  });
});
