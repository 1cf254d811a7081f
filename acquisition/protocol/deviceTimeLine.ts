/**
 * The device's clock as the host checks it, for both line readers (the protocol's and
 * plain delimited lines): time may not go backwards, and it may not leap far ahead of
 * the time that passed on this computer. One line with a corrupted time (1e15 s) would
 * otherwise become the run's last time, every later reading would be "time backwards",
 * and a reopened port would carry the rest of the run on at t ≈ 1e15 s.
 *
 * The leap rule: a timed line is refused (`timeJump`) when its time is more than
 *   1.5 × pace × (host time since the last accepted line) + 10 s
 * past the last accepted time. `pace` is the device's seconds per host second, measured
 * from the accepted lines since the clock started (an emulator playing a run at 50× has
 * pace 50; a real instrument 1); it is taken as 1 until two seconds of host time show it,
 * and never below 1. So a genuine gap (a cable pulled for a minute: the device kept its
 * clock, and a minute passed here too) passes, and a corrupted time is refused while the
 * time line stays where it was. Without host times (a capture read from a file) only the
 * backwards rule applies.
 */
import type { RejectReason } from '../sources/sourceTypes';

/** How much faster than the host's clock a device's clock may seem to run between two lines. */
export const TIME_JUMP_PACE_FACTOR = 1.5;
/** Slack for lines the operating system held back and delivered together, in device seconds. */
export const TIME_JUMP_SLACK_S = 10;
/** Host time the pace must be seen over before it counts, in ms. */
const PACE_MIN_SPAN_MS = 2000;

export interface TimeRefusal {
  reason: Extract<RejectReason, 'timeBackwards' | 'timeJump'>;
  detail: string;
}

export class DeviceTimeLine {
  private last_s = -Infinity;
  private lastHost_ms: number | null = null;
  private first_s: number | null = null;
  private firstHost_ms: number | null = null;

  /** The last accepted time (−Infinity before the first). */
  get lastTime_s(): number {
    return this.last_s;
  }

  /** Forget the time line, as after the device identified itself again (a restart). */
  reset(): void {
    this.last_s = -Infinity;
    this.lastHost_ms = null;
    this.first_s = null;
    this.firstHost_ms = null;
  }

  /** Why a line at device time `t_s`, read at host time `host_ms`, cannot be on the time line; null if it can. */
  check(t_s: number, host_ms?: number): TimeRefusal | null {
    if (t_s < this.last_s) return { reason: 'timeBackwards', detail: `device time goes backwards (${t_s} s after ${this.last_s} s)` };
    if (host_ms === undefined || this.lastHost_ms === null) return null;
    const elapsed_s = Math.max(0, host_ms - this.lastHost_ms) / 1000;
    const allowed_s = TIME_JUMP_PACE_FACTOR * this.pace() * elapsed_s + TIME_JUMP_SLACK_S;
    if (t_s - this.last_s > allowed_s) {
      return {
        reason: 'timeJump',
        detail: `device time leaps from ${this.last_s} s to ${t_s} s while ${elapsed_s.toFixed(1)} s passed on this computer`,
      };
    }
    return null;
  }

  /** Puts an accepted line on the time line. */
  accept(t_s: number, host_ms?: number): void {
    this.last_s = t_s;
    if (host_ms === undefined) return;
    this.lastHost_ms = host_ms;
    if (this.firstHost_ms === null) {
      this.first_s = t_s;
      this.firstHost_ms = host_ms;
    }
  }

  /** Device seconds per host second over the accepted lines, or 1 until it has been seen long enough. */
  private pace(): number {
    if (this.firstHost_ms === null || this.lastHost_ms === null || this.first_s === null) return 1;
    const span_ms = this.lastHost_ms - this.firstHost_ms;
    if (span_ms < PACE_MIN_SPAN_MS) return 1;
    return Math.max(1, (this.last_s - this.first_s) / (span_ms / 1000));
  }
}
