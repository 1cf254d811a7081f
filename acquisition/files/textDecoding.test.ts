import { describe, expect, it } from 'vitest';
import { TextDecodingError, decodeUserText } from './textDecoding';

const CSV = 'time_s,absorbance\n0,0.65\n1,0.648 °C µ\n';

function utf16be(text: string): Buffer {
  const b = Buffer.from(text, 'utf16le');
  b.swap16();
  return b;
}

describe('the text of a file a person saved', () => {
  it('reads UTF-8 with and without a byte-order mark, and UTF-16 either way round, with and without one', () => {
    const cases: Array<[Buffer, string]> = [
      [Buffer.from(CSV, 'utf8'), 'utf-8'],
      [Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(CSV, 'utf8')]), 'utf-8 with BOM'],
      [Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(CSV, 'utf16le')]), 'utf-16le'],
      [Buffer.concat([Buffer.from([0xfe, 0xff]), utf16be(CSV)]), 'utf-16be'],
      [Buffer.from(CSV, 'utf16le'), 'utf-16le'],
      [utf16be(CSV), 'utf-16be'],
    ];
    for (const [bytes, encoding] of cases) {
      const r = decodeUserText(bytes, 'run.csv');
      expect(r.encoding).toBe(encoding);
      expect(r.text).toBe(CSV);
    }
  });

  it('does not take a run record with zero bytes at its end (a power cut) for UTF-16', () => {
    const record = Buffer.concat([Buffer.from('{"format":"rateline-run-record"}\n[0,0.5,0]\n'), Buffer.alloc(600)]);
    const r = decodeUserText(record, 'cut.jsonl');
    expect(r.encoding).toBe('utf-8');
    expect(r.text.endsWith('\0')).toBe(true);
  });

  it('refuses UTF-16 cut in half a character, in one sentence', () => {
    const odd = Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(CSV, 'utf16le'), Buffer.from([0x41])]);
    expect(() => decodeUserText(odd, 'odd.csv')).toThrow(TextDecodingError);
    expect(() => decodeUserText(odd, 'odd.csv')).toThrow(/^odd\.csv: reads as UTF-16 text but ends in half a character; save it again/);
  });

  it('refuses binary data (a spreadsheet, a picture) in one sentence, not as a header of garbage', () => {
    const zip = Buffer.concat([Buffer.from('PK\u0003\u0004', 'latin1'), Buffer.alloc(20), Buffer.from('[Content_Types].xml')]);
    expect(() => decodeUserText(zip, 'run.xlsx')).toThrow(/^run\.xlsx: is not a text file \(it holds binary data/);
  });
});
