/**
 * The readings of one run as flat typed arrays, grown geometrically (doubling), so a
 * run of 10⁶ points costs a handful of copies and no object per reading.
 */
export class RunReadings {
  time_s = new Float64Array(1024);
  absorbance = new Float64Array(1024);
  flags = new Uint32Array(1024);
  length = 0;

  push(time_s: number, absorbance: number, flags: number): void {
    if (this.length === this.time_s.length) this.grow(this.length * 2);
    this.time_s[this.length] = time_s;
    this.absorbance[this.length] = absorbance;
    this.flags[this.length] = flags >>> 0;
    this.length++;
  }

  clear(): void {
    this.length = 0;
  }

  private grow(capacity: number): void {
    const t = new Float64Array(capacity);
    t.set(this.time_s.subarray(0, this.length));
    const a = new Float64Array(capacity);
    a.set(this.absorbance.subarray(0, this.length));
    const f = new Uint32Array(capacity);
    f.set(this.flags.subarray(0, this.length));
    this.time_s = t;
    this.absorbance = a;
    this.flags = f;
  }
}
