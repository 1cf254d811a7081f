/**
 * Pacing of what the service pushes to the screen: readings gathered into batches of
 * flat arrays (at most every READINGS_BATCH_MS, or sooner when a batch is full), and
 * the analysis result recomputed no more often than MIN_ANALYSIS_INTERVAL_MS (≤ 20/s),
 * since a screen refreshes at about 60 Hz and a refit per reading would be wasted.
 */
import { LIMITS, MIN_ANALYSIS_INTERVAL_MS, READINGS_BATCH_MS } from '../bridge/contract';

export interface OutboxHandlers {
  /** Push readings [from, to) of the current run. */
  flushReadings(from: number, to: number): void;
  /** Recompute and push the analysis result. */
  analyse(): void;
  /** Push anything else that changed (rejected counts). */
  flushOther(): void;
}

export class Outbox {
  private sentUpTo = 0;
  private available = 0;
  private batchTimer: ReturnType<typeof setTimeout> | null = null;
  private analysisTimer: ReturnType<typeof setTimeout> | null = null;
  private lastAnalysisAt_ms = Number.NEGATIVE_INFINITY;
  private otherDirty = false;

  constructor(private readonly handlers: OutboxHandlers, private readonly now_ms: () => number) {}

  /** A new run: nothing sent yet. */
  reset(): void {
    this.cancel();
    this.sentUpTo = 0;
    this.available = 0;
  }

  /** `count` readings exist in the run so far. */
  readingsAvailable(count: number): void {
    this.available = count;
    if (this.available - this.sentUpTo >= LIMITS.maxBatchPoints) this.flush();
    else if (!this.batchTimer) this.batchTimer = setTimeout(() => this.flush(), READINGS_BATCH_MS);
    this.requestAnalysis();
  }

  otherChanged(): void {
    this.otherDirty = true;
    if (!this.batchTimer) this.batchTimer = setTimeout(() => this.flush(), READINGS_BATCH_MS);
  }

  requestAnalysis(): void {
    if (this.analysisTimer) return;
    const wait = Math.max(0, this.lastAnalysisAt_ms + MIN_ANALYSIS_INTERVAL_MS - this.now_ms());
    this.analysisTimer = setTimeout(() => this.runAnalysis(), wait);
  }

  /** Send every reading now (at stop); the last analysis follows as soon as the throttle allows. */
  drain(): void {
    this.flush();
    this.requestAnalysis();
  }

  cancel(): void {
    if (this.batchTimer) clearTimeout(this.batchTimer);
    if (this.analysisTimer) clearTimeout(this.analysisTimer);
    this.batchTimer = null;
    this.analysisTimer = null;
    this.otherDirty = false;
  }

  private flush(): void {
    if (this.batchTimer) clearTimeout(this.batchTimer);
    this.batchTimer = null;
    while (this.sentUpTo < this.available) {
      const to = Math.min(this.available, this.sentUpTo + LIMITS.maxBatchPoints);
      this.handlers.flushReadings(this.sentUpTo, to);
      this.sentUpTo = to;
    }
    if (this.otherDirty) {
      this.otherDirty = false;
      this.handlers.flushOther();
    }
  }

  private runAnalysis(): void {
    this.analysisTimer = null;
    this.lastAnalysisAt_ms = this.now_ms();
    this.handlers.analyse();
  }
}
