/**
 * The bench service: owns the source, the analyzer and the run record, and speaks the
 * bridge contract. Host-agnostic: the Electron shell and the loopback web host both
 * only pass requests in and events out. Every request is parsed here (zod) before it
 * acts; a failure is a one-line value, never a throw across the bridge.
 *
 * Analysis runs here, in the main process, never on the screen's thread: the screen is
 * sent readings in batches and results at most 20 times a second.
 *
 * Its parts, under main/bench/: what they share (benchSession), what each request does
 * (requestDispatch), the source and run from choice to close (runLifecycle), and what
 * the source sends (sourceEvents).
 */
import { LIMITS, parseRequest, type AnyReply, type BenchState, type SampleDetails } from './bridge/contract';
import type { BenchDeps } from './bench/benchDependencies';
import { BenchSession, type Listener } from './bench/benchSession';
import { peakOffer } from './bench/peakOffer';
import { Refusal, oneLine } from './bench/refusal';
import { askForSpectrum, dispatch } from './bench/requestDispatch';
import { closeSource, stopRun } from './bench/runLifecycle';

export class BenchService {
  private readonly s: BenchSession;

  constructor(deps: BenchDeps) {
    const s: BenchSession = new BenchSession(deps, (reason, detail) => stopRun(s, reason, detail));
    this.s = s;
  }

  /** Subscribe to events for the screen; returns the unsubscribe function. */
  subscribe(listener: Listener): () => void {
    this.s.listeners.add(listener);
    return () => this.s.listeners.delete(listener);
  }

  /**
   * Bring a newly attached screen up to date (a page loaded or reloaded mid-run): the
   * state, every reading of the current run in batches, and the latest result.
   */
  catchUp(listener: Listener): void {
    const { run, state } = this.s;
    listener({ type: 'state', state: this.snapshot() });
    const runId = state.runId;
    if (!runId) return;
    const n = run.count;
    for (let from = 0; from < n; from += LIMITS.maxBatchPoints) listener(run.batch(runId, from, Math.min(n, from + LIMITS.maxBatchPoints)));
    // A failing analysis sends nothing here: the next throttled result will carry its warning.
    const result = run.resultOrNull();
    if (result) listener({ type: 'analysis', runId, atCount: n, result });
  }

  snapshot(): BenchState {
    return this.s.snapshot();
  }

  /** One request from the screen, untrusted. Requests run one at a time, in order. */
  handle(input: unknown): Promise<AnyReply> {
    const s = this.s;
    const parsed = parseRequest(input);
    if (!parsed.ok) return Promise.resolve({ ok: false, error: parsed.error });
    const fail = (err: unknown): AnyReply => ({ ok: false, error: err instanceof Refusal ? err.message : `${parsed.request.type} failed: ${oneLine(err)}` });
    if (parsed.request.type === 'findPeak') {
      // Only the scan command waits its turn; the wait for the frame does not hold up the
      // requests behind it (a stop pressed meanwhile goes through).
      const asked = s.busy.then(() => askForSpectrum(s));
      s.busy = asked.catch(() => undefined);
      return asked.then((w) => w.frame).then((f): AnyReply => ({ ok: true, value: peakOffer(f.frame, f.recorded) }), fail);
    }
    const run = s.busy.then(() => dispatch(s, parsed.request)).then((value): AnyReply => ({ ok: true, value }), fail);
    s.busy = run;
    return run;
  }

  /** Close the run and the source (host shutting down). */
  async dispose(): Promise<void> {
    const s = this.s;
    await s.busy;
    if (s.state.phase === 'running') await stopRun(s, 'user', 'the program was closed');
    await closeSource(s);
    s.outbox.cancel();
  }
}

export type { SampleDetails };
