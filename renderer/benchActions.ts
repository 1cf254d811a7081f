/**
 * Requests to the bench service from the screen: each one marks the screen busy,
 * and its answer either updates the state (most requests answer with the bench's
 * new state) or becomes a one-line message on the screen. Nothing here throws at
 * the user.
 */
import type { BenchState, RatelineBridge, Reply, ReplyValue, RequestOf, RequestType } from '../main/bridge/contract';
import { addMessage, applyEvent, type Store } from './store';

export interface BenchActions {
  send<T extends RequestType>(request: RequestOf<T>): Promise<ReplyValue<T> | null>;
  /** Like send, but a refusal is handed back to the caller (to show beside its button) instead of the messages line. */
  ask<T extends RequestType>(request: RequestOf<T>): Promise<Reply<T>>;
}

function isBenchState(v: unknown): v is BenchState {
  return typeof v === 'object' && v !== null && 'contractVersion' in v && 'phase' in v;
}

export function benchActions(bridge: RatelineBridge, store: Store): BenchActions {
  /** One request; a bridge that fails to answer becomes a refusal the user can read. */
  async function ask<T extends RequestType>(request: RequestOf<T>): Promise<Reply<T>> {
    store.update((d) => { d.busy = true; });
    let reply: Reply<T>;
    try {
      reply = await bridge.request(request);
    } catch (err) {
      const why = err instanceof Error ? err.message : String(err);
      reply = { ok: false, error: `The bench service did not answer (${why}); check that it is still running.` };
    }
    store.update((d) => { d.busy = false; });
    return reply;
  }
  return {
    ask,
    async send<T extends RequestType>(request: RequestOf<T>): Promise<ReplyValue<T> | null> {
      const reply = await ask(request);
      if (!reply.ok) {
        store.update((d) => { addMessage(d, 'error', reply.error); });
        // A refused request may still have moved the bench (a port that failed to open):
        // fetch its state so the screen shows what is, not what was hoped for.
        if (request.type !== 'getState') {
          const fresh = await bridge.request({ type: 'getState' }).catch(() => null);
          if (fresh?.ok) applyEvent(store, { type: 'state', state: fresh.value }, performance.now());
        }
        return null;
      }
      const v = reply.value as unknown;
      const state = isBenchState(v) ? v : typeof v === 'object' && v !== null && 'state' in v && isBenchState((v as { state: unknown }).state) ? (v as { state: BenchState }).state : null;
      if (state) applyEvent(store, { type: 'state', state }, performance.now());
      return reply.value;
    },
  };
}
