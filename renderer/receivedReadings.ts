/**
 * The readings of the current run as the screen holds them: flat typed arrays grown
 * geometrically (no object per reading), appended from the service's batches in run
 * order. Kept outside the immer draft on purpose: a million-point array copied on
 * every update would cost more than the drawing; the store holds this object and a
 * count that changes when it grows.
 */
import type { ReadingsBatch } from '../main/bridge/contract';

export class ReceivedReadings {
  time_s: Float64Array;
  absorbance: Float64Array;
  flags: Uint8Array;
  count = 0;
  /** Changes whenever the readings are cleared for a new run, so cached views of it know to start over. */
  generation = 0;
  /** Readings the screen never received (a batch that started past the end). */
  missed = 0;
  /** Host time (ms) and run time (s) of the last two batches, for the run-time-per-wall-second ratio. */
  private arrivals: { wall_ms: number; run_s: number; count: number }[] = [];

  constructor(capacity = 1024) {
    this.time_s = new Float64Array(capacity);
    this.absorbance = new Float64Array(capacity);
    this.flags = new Uint8Array(capacity);
  }

  private grow(needed: number): void {
    if (needed <= this.time_s.length) return;
    let cap = this.time_s.length || 1024;
    while (cap < needed) cap *= 2;
    const t = new Float64Array(cap); t.set(this.time_s.subarray(0, this.count)); this.time_s = t;
    const a = new Float64Array(cap); a.set(this.absorbance.subarray(0, this.count)); this.absorbance = a;
    const f = new Uint8Array(cap); f.set(this.flags.subarray(0, this.count)); this.flags = f;
  }

  clear(): void {
    this.count = 0;
    this.generation++;
    this.missed = 0;
    this.arrivals = [];
  }

  /**
   * Append a batch that starts at reading `fromIndex`. A batch that overlaps what is
   * held (sent again after a reconnect) adds only its new part; one that starts past the
   * end is appended and the hole counted, so the count on screen never claims readings
   * that did not arrive. Returns the number of readings added.
   */
  append(batch: Pick<ReadingsBatch, 'fromIndex' | 'time_s' | 'absorbance' | 'flags'>, wall_ms?: number): number {
    const n = batch.time_s.length;
    let skip = 0;
    if (batch.fromIndex < this.count) skip = Math.min(n, this.count - batch.fromIndex);
    else if (batch.fromIndex > this.count) this.missed += batch.fromIndex - this.count;
    const add = n - skip;
    if (add <= 0) return 0;
    this.grow(this.count + add);
    for (let i = skip; i < n; i++) {
      const k = this.count++;
      this.time_s[k] = batch.time_s[i]!;
      this.absorbance[k] = batch.absorbance[i]!;
      this.flags[k] = batch.flags[i]! & 0xff;
    }
    if (wall_ms !== undefined) {
      this.arrivals.push({ wall_ms, run_s: this.time_s[this.count - 1]!, count: this.count });
      if (this.arrivals.length > 40) this.arrivals.shift();
    }
    return add;
  }

  /** Run seconds per wall-clock second over the recent batches (50 for a 50× simulation), or null. */
  runSecondsPerWallSecond(): number | null {
    const a = this.arrivals;
    if (a.length < 2) return null;
    const first = a[0]!, last = a[a.length - 1]!;
    const wall_s = (last.wall_ms - first.wall_ms) / 1000;
    if (wall_s < 0.2) return null;
    return (last.run_s - first.run_s) / wall_s;
  }

  /** Readings arriving per wall-clock second over the recent batches, or null. */
  readingsPerWallSecond(): number | null {
    const a = this.arrivals;
    if (a.length < 2) return null;
    const first = a[0]!, last = a[a.length - 1]!;
    const wall_s = (last.wall_ms - first.wall_ms) / 1000;
    if (wall_s < 0.5) return null;
    return (last.count - first.count) / wall_s;
  }

  lastTime_s(): number | null {
    return this.count ? this.time_s[this.count - 1]! : null;
  }

  firstTime_s(): number | null {
    return this.count ? this.time_s[0]! : null;
  }
}
