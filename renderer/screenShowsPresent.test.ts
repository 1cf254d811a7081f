/**
 * Nothing from before remains on the screen that could be read as current: after Stop,
 * after Disconnect, on a new connection (a replay not yet started must not give away the
 * answer), and no error of an earlier connection.
 */
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { benchState, demoAnalysis } from '../test/e2e/fakeBridge';
import { describeIssue, parseRequest } from '../main/bridge/contract';
import { adviceWords, finishWords } from './adviceText';
import { statusWords } from './panels/sourcePanel';
import { addMessage, applyEvent, createStore } from './store';

const batch = (runId: string, n: number) => ({
  type: 'readings' as const, runId, fromIndex: 0,
  time_s: Array.from({ length: n }, (_, i) => i), absorbance: Array.from({ length: n }, (_, i) => 0.6 - 0.001 * i), flags: new Array<number>(n).fill(0),
});
const state = (phase: ReturnType<typeof benchState>['phase'], runId: string | null = 'r1') => ({ type: 'state' as const, state: { ...benchState(0), phase, runId } });

describe('the screen shows the present', () => {
  it('a stopped run never says "stop now" or "from now"', () => {
    const r = demoAnalysis(300, 300);
    const suggested = { ...r, stop: { ...r.stop, state: 'farEnough' as const, suggested: true, predictedAt_s: 612, predictedAtStdErr_s: 10 } };
    expect(adviceWords(suggested, true).headline).toBe('Far enough: stop now');
    const after = adviceWords(suggested, false);
    expect(after.headline).toMatch(/^Stopped/);
    expect(`${after.headline} ${after.detail}`).not.toMatch(/stop now|keep going/i);
    expect(finishWords(suggested, 100, 50, true)).toMatch(/from now/);
    expect(finishWords(suggested, 100, 50, false)).not.toMatch(/from now|reached at/);
  });

  it('a new connection clears the last run and the errors of earlier connections', () => {
    const store = createStore();
    applyEvent(store, state('running'), 0);
    applyEvent(store, batch('r1', 50), 0);
    applyEvent(store, { type: 'analysis', runId: 'r1', atCount: 50, result: demoAnalysis(50, 49) }, 0);
    applyEvent(store, state('stopped'), 0);
    store.update((d) => addMessage(d, 'error', 'Serial port /dev/ttyUSB9: no such port.'));
    store.update((d) => addMessage(d, 'warning', 'a warning of the run'));
    // After Stop the run stays, labelled stopped elsewhere.
    expect(store.get().pointCount).toBe(50);
    expect(store.get().analysis).not.toBeNull();
    // A connection being tried (it may fail) leaves the last run in view.
    applyEvent(store, state('connecting'), 0);
    expect(store.get().pointCount).toBe(50);
    // A replay source connected, same run id still on the service: the old answer goes.
    applyEvent(store, state('connected'), 0);
    expect(store.get().pointCount).toBe(0);
    expect(store.get().analysis).toBeNull();
    expect(store.get().messages.map((m) => m.level)).toEqual(['warning']);
    // A late result of the old run does not come back.
    applyEvent(store, { type: 'analysis', runId: 'old', atCount: 50, result: demoAnalysis(50, 49) }, 0);
    expect(store.get().analysis).toBeNull();
  });

  it('negative control: without a change of phase the run stays', () => {
    const store = createStore();
    applyEvent(store, state('running'), 0);
    applyEvent(store, batch('r1', 20), 0);
    applyEvent(store, state('running'), 0);
    expect(store.get().pointCount).toBe(20);
  });

  it('"Connected" does not outlive Disconnect', () => {
    const store = createStore();
    applyEvent(store, state('connected'), 0);
    applyEvent(store, { type: 'sourceStatus', status: { kind: 'connected', detail: 'simulated', identity: null } as never }, 0);
    expect(statusWords(store.get())).toMatch(/^Connected/);
    applyEvent(store, state('idle'), 0);
    expect(statusWords(store.get())).toBe('Not connected');
  });

  it('a refused request is a sentence in the screen’s words, not the validator’s', () => {
    const r = parseRequest({ type: 'setAnalysisOptions', options: { targetHalfLives: 0.1 } });
    expect(r.ok).toBe(false);
    const text = r.ok ? '' : r.error;
    expect(text).toBe('request refused: the target (half-lives) must be at least 0.5; correct it and try again.');
    expect(text).not.toMatch(/options\.|Too small|expected/);
    // negative control: the raw validator text does carry the dotted path and the jargon
    const raw = z.object({ options: z.object({ targetHalfLives: z.number().min(0.5) }) }).safeParse({ options: { targetHalfLives: 0.1 } });
    expect(raw.success).toBe(false);
    if (!raw.success) {
      expect(raw.error.issues[0]!.message).toMatch(/small/i);
      expect(describeIssue(raw.error)).toMatch(/^the target \(half-lives\) must be at least 0\.5/);
    }
  });
});
