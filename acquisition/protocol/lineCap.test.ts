import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { LineCap } from './lineCap';

async function through(cap: number, chunks: string[]): Promise<string> {
  const t = new LineCap(cap);
  const out: Buffer[] = [];
  t.on('data', (b: Buffer) => out.push(b));
  for (const c of chunks) t.write(Buffer.from(c, 'latin1'));
  t.end();
  await new Promise((r) => t.on('end', r));
  return Buffer.concat(out).toString('latin1');
}

describe('line cap', () => {
  it('passes short lines unchanged and cuts a runaway line to cap + 1 characters', async () => {
    expect(await through(10, ['abc\nde', 'f\n'])).toBe('abc\ndef\n');
    expect(await through(5, ['0123456789ABCDEF', 'GH\nok\n'])).toBe('012345\nok\n');
  });

  it('never lets a line grow past cap + 1, however the bytes are chunked (property)', async () => {
    await fc.assert(fc.asyncProperty(fc.array(fc.string({ maxLength: 40, unit: fc.constantFrom('a', 'b', '\n') }), { maxLength: 20 }), fc.integer({ min: 1, max: 12 }), async (chunks, cap) => {
      const out = await through(cap, chunks);
      const input = chunks.join('');
      // Lines at or under the cap come through unchanged; every line out is at most cap + 1 long.
      for (const line of out.split('\n')) if (line.length > cap + 1) return false;
      const short = input.split('\n').filter((l) => l.length <= cap);
      const outLines = out.split('\n');
      return short.every((l) => outLines.includes(l)) && (input.match(/\n/g) ?? []).length === (out.match(/\n/g) ?? []).length;
    }), { numRuns: 300 });
  });
});
