/**
 * A failing disk never damages a record: short writes are finished, a refused write is
 * taken back to the last complete line, nothing is appended after it, and the error says
 * exactly how many readings the file holds. The disk here is in memory (see
 * test/fixtures/memoryJournalFs.ts); test/recordDiskFull.test.ts fills a real one.
 */
import { describe, expect, it } from 'vitest';
import { Journal, JournalError } from './journal';
import { parseRunRecord } from './journalReader';
import { demoHeader } from '../../test/fixtures/demoRecordHeader';
import { memoryJournalFs, type MemoryJournalFs } from '../../test/fixtures/memoryJournalFs';
import type { Reading } from '../sources/sourceTypes';

function reading(t: number, a: number): Reading {
  return { deviceTime_s: t, hostTime_ms: 0, absorbance: a, wavelength_nm: 630, cellTemperature_C: 25.03, flags: 0 };
}

/** Feeds readings (and a mark now and then) until the journal refuses; returns its error. */
function feedUntilRefused(fs: MemoryJournalFs, count: number, maxBufferChars = 300): { journal: Journal; error: JournalError | null; handed: number } {
  const journal = Journal.create('full.jsonl', demoHeader(), { fs, timer: false, maxBufferChars, now_ms: () => 0, wallClock: () => new Date(0) });
  let handed = 0;
  try {
    for (let i = 0; i < count; i++) {
      journal.reading(reading(i * 0.5, 0.65 * Math.exp(-0.0035 * i * 0.5)));
      handed++;
      if (i % 17 === 0) journal.event({ ev: 'mark', h: i, t: i * 0.5, note: 'stirred µ' });
    }
    journal.close();
    return { journal, error: null, handed };
  } catch (err) {
    expect(err).toBeInstanceOf(JournalError);
    return { journal, error: err as JournalError, handed };
  }
}

describe('short writes', () => {
  it('finishes a write the disk takes a few bytes at a time, so the record is whole', () => {
    const whole = memoryJournalFs();
    feedUntilRefused(whole, 200);
    const trickle = memoryJournalFs();
    const write = trickle.writeSync.bind(trickle);
    trickle.writeSync = (fd, data, offset, length) => write(fd, data, offset, Math.min(length, 7));
    const { error } = feedUntilRefused(trickle, 200);
    expect(error).toBeNull();
    // Same lines (the end line's wall clock aside), and the reader finds the record clean.
    const strip = (t: string): string => t.replace(/"wall":"[^"]+"/g, '');
    expect(strip(trickle.written)).toBe(strip(whole.written));
    const rec = parseRunRecord(trickle.written, 'trickle.jsonl');
    expect(rec.recovery.clean).toBe(true);
    expect(rec.readings.count).toBe(200);
  });
});

describe('a disk that fills', () => {
  it('leaves a valid record at every byte the disk can stop at, and says exactly how many readings it holds', () => {
    const header = memoryJournalFs();
    Journal.create('h.jsonl', demoHeader(), { fs: header, timer: false });
    const headerBytes = Buffer.byteLength(header.written);
    // Every stopping point across a few lines and buffer boundaries, past the header.
    for (let budget = headerBytes; budget < headerBytes + 1500; budget += 7) {
      const fs = memoryJournalFs();
      fs.spaceLeft = budget;
      const { journal, error, handed } = feedUntilRefused(fs, 400);
      expect(error, `budget ${budget}`).not.toBeNull();
      const e = error!;
      expect(e.problem).toBe('diskFull');
      expect(fs.written.endsWith('\n'), `budget ${budget}: the cut line was taken back`).toBe(true);
      const rec = parseRunRecord(fs.written, 'full.jsonl');
      expect(rec.recovery.tornLine).toBeNull();
      expect(e.onDisk!.readings, `budget ${budget}`).toBe(rec.readings.count);
      expect(e.onDisk!.synced).toBe(true);
      expect(e.message).toContain(`it holds ${rec.readings.count} reading`);
      if (rec.readings.count > 0) expect(e.onDisk!.lastDeviceTime_s).toBe(rec.readings.t_s[rec.readings.count - 1]);
      expect(rec.readings.count).toBeLessThanOrEqual(handed);
      // Nothing is ever appended after the refusal, not even when the disk has room again.
      const after = fs.written;
      fs.spaceLeft = Infinity;
      expect(() => journal.reading(reading(1e4, 0.1))).toThrow(JournalError);
      journal.close();
      expect(fs.written).toBe(after);
      expect(journal.progress().syncedReadings).toBe(rec.readings.count);
    }
  });

  it('is a control: ignoring the count a write returns leaves a record the reader refuses', () => {
    // The journal as it was: the short count taken as the whole buffer, the next lines appended after the cut.
    const fs = memoryJournalFs();
    const write = fs.writeSync.bind(fs);
    fs.writeSync = (fd, data, offset, length) => {
      const n = write(fd, data, offset, length);
      if (n < length && fs.spaceLeft === 0) fs.spaceLeft = Infinity; // space freed by another program a moment later
      return length; // the broken journal's belief
    };
    const header = memoryJournalFs();
    Journal.create('h.jsonl', demoHeader(), { fs: header, timer: false });
    fs.spaceLeft = Buffer.byteLength(header.written) + 450;
    feedUntilRefused(fs, 100);
    expect(() => parseRunRecord(fs.written, 'broken.jsonl')).toThrow(/not valid JSON|not a valid reading|neither a reading/);
  });

  it('says a file-size limit is not a lack of space', () => {
    const fs = memoryJournalFs();
    fs.spaceLeft = 3000;
    fs.fullCode = 'EFBIG';
    const { error } = feedUntilRefused(fs, 400);
    expect(error!.problem).toBe('fileSizeLimit');
    expect(error!.message).toMatch(/^full\.jsonl: the run record could not be written further \(the file reached the largest size this system allows one file, a file-size limit rather than a lack of space\); it holds \d+ readings \(the last at [\d.]+ s device time\), complete up to its last line; record the rest into a new file/);
    expect(error!.message).not.toMatch(/free space/);
    expect(parseRunRecord(fs.written, 'full.jsonl').readings.count).toBe(error!.onDisk!.readings);
  });

  it('names a disk that went away or failed, in one sentence each', () => {
    for (const [code, problem, words] of [
      ['EIO', 'ioError', /input\/output error \(a removed USB stick, or a failing disk\)/],
      ['ENODEV', 'diskGone', /went away/],
      ['EROFS', 'readOnly', /read-only/],
    ] as const) {
      const fs = memoryJournalFs();
      const j = Journal.create('gone.jsonl', demoHeader(), { fs, timer: false, maxBufferChars: 100 });
      for (let i = 0; i < 5; i++) j.reading(reading(i, 0.5));
      fs.failWrites = code;
      let caught: JournalError | null = null;
      try {
        for (let i = 5; i < 50; i++) j.reading(reading(i, 0.5));
      } catch (err) {
        caught = err as JournalError;
      }
      expect(caught?.problem, code).toBe(problem);
      expect(caught!.message).toMatch(words);
      expect(caught!.message.split(/\.\s/)).toHaveLength(1); // one sentence
      expect(caught!.onDisk!.readings).toBe(parseRunRecord(fs.written, 'gone.jsonl').readings.count);
    }
  });

  it('says how many the disk confirmed when even fsync fails', () => {
    const fs = memoryJournalFs();
    let now = 0;
    const j = Journal.create('sync.jsonl', demoHeader(), { fs, timer: false, now_ms: () => now });
    j.reading(reading(0, 0.5));
    now = 300;
    j.reading(reading(1, 0.5)); // committed: 2 readings synced
    fs.failSyncs = 'EIO';
    j.reading(reading(2, 0.5));
    now = 600;
    expect(() => j.reading(reading(3, 0.5))).toThrow(/it holds 4 readings \(the last at 3 s device time\), of which the disk confirmed the first 2; check the disk/);
    // Only what the last good sync made durable is sure.
    expect(parseRunRecord(fs.synced, 'sync.jsonl').readings.count).toBe(2);
  });

  it('counts only complete lines when the torn line cannot be cut away', () => {
    const fs = memoryJournalFs();
    fs.failTruncate = 'EPERM';
    const header = memoryJournalFs();
    Journal.create('h.jsonl', demoHeader(), { fs: header, timer: false });
    fs.spaceLeft = Buffer.byteLength(header.written) + 333;
    const { error } = feedUntilRefused(fs, 200);
    const rec = parseRunRecord(fs.written, 'torn.jsonl');
    expect(rec.recovery.tornLine).not.toBeNull(); // the reader drops it as a crash artefact
    expect(error!.onDisk!.readings).toBe(rec.readings.count);
  });

  it('removes a record whose header did not fit, and says the disk is full', () => {
    const fs = memoryJournalFs();
    fs.spaceLeft = 40;
    expect(() => Journal.create('tiny.jsonl', demoHeader(), { fs, timer: false })).toThrow(
      'tiny.jsonl: the disk is full, so the record could not be created; free space or choose another disk.',
    );
    expect(fs.removed).toEqual(['tiny.jsonl']);
  });

  it('notices a record deleted under it (its folder removed), which writes alone never say', () => {
    const fs = memoryJournalFs();
    let now = 0;
    const j = Journal.create('gone.jsonl', demoHeader(), { fs, timer: false, now_ms: () => now });
    j.reading(reading(0, 0.5));
    now = 300;
    j.reading(reading(1, 0.5)); // committed
    fs.links = 0; // rm -r of the runs folder: the open file has no name left
    j.reading(reading(2, 0.5));
    now = 600;
    let caught: JournalError | null = null;
    try {
      j.reading(reading(3, 0.5));
    } catch (err) {
      caught = err as JournalError;
    }
    expect(caught?.problem).toBe('diskGone');
    expect(caught!.message).toBe('gone.jsonl: the run record could not be written further (the file, or the folder holding it, was deleted while recording); none of its 4 readings can be found on the disk any more; record again to a folder that stays.');
    expect(j.progress().syncedReadings).toBe(0);
  });
});
