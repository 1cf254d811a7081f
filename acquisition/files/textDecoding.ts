/**
 * The bytes of a file a person gives us, as text. Editors and spreadsheet programs save
 * text in more than one way: UTF-8 with a byte-order mark (Windows Notepad, Excel's
 * "CSV UTF-8"), or UTF-16 ("Unicode text"), with or without its mark. All of them are
 * read here, so that a column is never looked for as "t i m e _ s"; bytes that are
 * neither are refused in one sentence.
 */

/** Text that cannot be read as such, with the sentence to show (it names the file). */
export class TextDecodingError extends Error {
  override readonly name = 'TextDecodingError';
}

export type TextEncoding = 'utf-8' | 'utf-8 with BOM' | 'utf-16le' | 'utf-16be';

/** The text of `bytes`, and how it was encoded. `path` is for the message only. */
export function decodeUserText(bytes: Uint8Array, path: string): { text: string; encoding: TextEncoding } {
  const b = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (b.length >= 3 && b[0] === 0xef && b[1] === 0xbb && b[2] === 0xbf) return { text: b.toString('utf8', 3), encoding: 'utf-8 with BOM' };
  if (b.length >= 2 && b[0] === 0xff && b[1] === 0xfe) return { text: utf16(b.subarray(2), 'le', path), encoding: 'utf-16le' };
  if (b.length >= 2 && b[0] === 0xfe && b[1] === 0xff) return { text: utf16(b.subarray(2), 'be', path), encoding: 'utf-16be' };
  const unmarked = unmarkedUtf16(b);
  if (unmarked) return { text: utf16(b, unmarked, path), encoding: unmarked === 'le' ? 'utf-16le' : 'utf-16be' };
  if (looksBinary(b)) {
    throw new TextDecodingError(`${path}: is not a text file (it holds binary data, as a spreadsheet's .xlsx or an instrument's own format does); save the run as CSV text and give that file.`);
  }
  return { text: b.toString('utf8'), encoding: 'utf-8' };
}

/**
 * UTF-16 without its mark: text in Latin letters and digits then has a zero byte in every
 * other place. Zero bytes only at the end are what a power cut leaves in a run record, not
 * UTF-16, so only the start of the file is looked at, and it must look so throughout.
 */
function unmarkedUtf16(b: Buffer): 'le' | 'be' | null {
  const n = Math.min(b.length, 512) & ~1;
  if (n < 8) return null;
  let evenZero = 0;
  let oddZero = 0;
  for (let i = 0; i < n; i += 2) {
    if (b[i] === 0) evenZero++;
    if (b[i + 1] === 0) oddZero++;
  }
  const pairs = n / 2;
  if (oddZero >= 0.9 * pairs && evenZero === 0) return 'le';
  if (evenZero >= 0.9 * pairs && oddZero === 0) return 'be';
  return null;
}

function utf16(b: Buffer, order: 'le' | 'be', path: string): string {
  if (b.length % 2 !== 0) {
    throw new TextDecodingError(`${path}: reads as UTF-16 text but ends in half a character; save it again (as UTF-8 if you can) and try again.`);
  }
  if (order === 'le') return b.toString('utf16le');
  const swapped = Buffer.from(b);
  swapped.swap16();
  return swapped.toString('utf16le');
}

/**
 * Zero bytes near the start of a file that is not UTF-16: binary data. Zero bytes only at
 * the end are what a power cut leaves after a run record's last line, and are left to its
 * reader.
 */
function looksBinary(b: Buffer): boolean {
  let end = b.length;
  while (end > 0 && b[end - 1] === 0) end--;
  const start = b.subarray(0, Math.min(end, 512));
  return start.includes(0);
}
