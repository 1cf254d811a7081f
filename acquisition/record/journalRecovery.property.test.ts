/**
 * Recovery as a property: whatever was written and wherever the file was cut, the reader
 * keeps exactly the complete lines before the cut and never throws on a cut record.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { demoHeader } from '../../test/fixtures/demoRecordHeader';
import { Journal } from './journal';
import { memoryJournalFs } from '../../test/fixtures/memoryJournalFs';
import { parseRunRecord } from './journalReader';
import type { Reading } from '../sources/sourceTypes';

function memoryJournal(): { journal: Journal; text: () => string } {
  const fs = memoryJournalFs();
  return { journal: Journal.create('mem.jsonl', demoHeader(), { fs, timer: false }), text: () => fs.written };
}

const item = fc.oneof(
  fc.record({
    kind: fc.constant('reading' as const),
    dt: fc.double({ min: 0, max: 10, noNaN: true }),
    a: fc.double({ min: -0.1, max: 4, noNaN: true }),
    temp: fc.option(fc.double({ min: 0, max: 60, noNaN: true }), { nil: null }),
    flags: fc.integer({ min: 0, max: 15 }),
  }),
  fc.record({ kind: fc.constant('mark' as const), note: fc.string({ maxLength: 40 }) }),
);

describe('recovery of a cut record (property)', () => {
  it('keeps every complete line before any cut, and only those', () => {
    fc.assert(
      fc.property(fc.array(item, { minLength: 1, maxLength: 40 }), fc.double({ min: 0, max: 1, noNaN: true }), (items, where) => {
        const { journal, text } = memoryJournal();
        let t = 0;
        for (const it of items) {
          if (it.kind === 'reading') {
            t += it.dt;
            const r: Reading = { deviceTime_s: t, hostTime_ms: 0, absorbance: it.a, wavelength_nm: 630, cellTemperature_C: it.temp, flags: it.flags };
            journal.reading(r);
          } else {
            journal.event({ ev: 'mark', h: 0, t, note: it.note });
          }
        }
        journal.commit();
        const full = text();
        const headerEnd = full.indexOf('\n') + 1;
        // Cut anywhere after the header (a record is created with its header synced).
        const cut = headerEnd + Math.floor(where * (full.length - headerEnd));
        const kept = full.slice(0, cut);
        const rec = parseRunRecord(kept, 'mem.jsonl');
        const lines = kept.slice(headerEnd).split('\n');
        const partial = lines.pop()!;
        // A cut just before a line end leaves that line whole: it is kept, not torn.
        const wholeButUnended = partial.length > 0 && full[cut] === '\n';
        const completeLines = wholeButUnended ? [...lines, partial] : lines;
        const readingLines = completeLines.filter((l) => l.startsWith('['));
        expect(rec.readings.count).toBe(readingLines.length);
        expect(rec.events.length).toBe(completeLines.length - readingLines.length);
        expect(rec.end).toBeNull();
        expect(rec.recovery.tornLine === null).toBe(partial.length === 0 || wholeButUnended);
        readingLines.forEach((l, i) => expect(rec.readings.absorbance[i]).toBe((JSON.parse(l) as number[])[1]));
      }),
      { numRuns: 300, seed: 20261201 },
    );
  });
});
