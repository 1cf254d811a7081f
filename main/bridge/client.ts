/**
 * The screen's end of the bridge over the web host's WebSocket (`rateline serve`). Pure
 * browser code (no Node, no Electron). In Electron the preload puts the bridge on
 * `window.rateline` instead; renderer/main.ts chooses between the two.
 */
import {
  type AnyReply, type BridgeEvent, type RatelineBridge, type Reply, type RequestOf, type RequestType, type ServerMessage,
} from './contract';

interface SocketLike {
  readyState: number;
  send(data: string): void;
  close(): void;
  addEventListener(type: 'open' | 'close' | 'message' | 'error', listener: (ev: { data?: unknown }) => void): void;
}

export interface SocketBridge extends RatelineBridge {
  /** Resolves when the socket is open. */
  ready: Promise<void>;
  close(): void;
}

/** The bridge over the web host's socket. `url` e.g. ws://127.0.0.1:4180/bridge?token=… */
export function socketBridge(url: string, makeSocket: (url: string) => SocketLike = (u) => new WebSocket(u)): SocketBridge {
  const socket = makeSocket(url);
  const listeners = new Set<(event: BridgeEvent) => void>();
  const pending = new Map<number, (reply: AnyReply) => void>();
  let nextId = 1;
  let closed = false;

  const ready = new Promise<void>((resolve, reject) => {
    socket.addEventListener('open', () => resolve());
    socket.addEventListener('error', () => reject(new Error('the bench service could not be reached')));
  });
  socket.addEventListener('close', () => {
    closed = true;
    for (const settle of pending.values()) settle({ ok: false, error: 'the connection to the bench service closed; reload the page.' });
    pending.clear();
  });
  socket.addEventListener('message', (ev) => {
    if (typeof ev.data !== 'string') return;
    let msg: ServerMessage;
    try {
      msg = JSON.parse(ev.data) as ServerMessage;
    } catch {
      return;
    }
    if (msg.kind === 'event') {
      for (const l of listeners) l(msg.event);
    } else if (msg.kind === 'reply' && msg.id !== null) {
      const settle = pending.get(msg.id);
      if (settle) {
        pending.delete(msg.id);
        settle(msg.reply);
      }
    }
  });

  return {
    ready,
    async request<T extends RequestType>(request: RequestOf<T>): Promise<Reply<T>> {
      await ready;
      if (closed) return { ok: false, error: 'the connection to the bench service closed; reload the page.' };
      const id = nextId++;
      return new Promise<Reply<T>>((resolve) => {
        pending.set(id, (reply) => resolve(reply as Reply<T>));
        socket.send(JSON.stringify({ kind: 'request', id, request }));
      });
    },
    onEvent(listener) {
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
    close() {
      socket.close();
    },
  };
}
