/**
 * A guard in front of the readline parser, which would otherwise buffer a line without
 * end for ever (a device spewing bytes with no line feed). Past the cap, the rest of the
 * line is dropped and the line is passed on cut short, one character over the cap, so the
 * protocol parser refuses and counts it once as overlong. Memory stays bounded.
 */
import { Transform, type TransformCallback } from 'node:stream';

export class LineCap extends Transform {
  private run = 0;
  private dropping = false;

  constructor(private readonly cap: number) {
    super();
  }

  override _transform(chunk: Buffer, _enc: BufferEncoding, done: TransformCallback): void {
    let start = 0;
    const parts: Buffer[] = [];
    for (let i = 0; i < chunk.length; i++) {
      if (chunk[i] === 10) {
        if (!this.dropping) parts.push(chunk.subarray(start, i + 1));
        else parts.push(Buffer.from('\n'));
        this.run = 0;
        this.dropping = false;
        start = i + 1;
        continue;
      }
      if (this.dropping) { start = i + 1; continue; }
      this.run++;
      if (this.run > this.cap) {
        // Keep exactly cap + 1 characters of this line, then drop until its end.
        parts.push(chunk.subarray(start, i + 1));
        this.dropping = true;
        start = i + 1;
      }
    }
    if (!this.dropping && start < chunk.length) parts.push(chunk.subarray(start));
    done(null, parts.length === 1 ? parts[0] : Buffer.concat(parts));
  }
}
