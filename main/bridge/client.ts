/**
 * The screen's end of the bridge over the web host's WebSocket (`rateline serve`). Pure
 * browser code (no Node, no Electron). In Electron the preload puts the bridge on
 * `window.rateline` instead; renderer/main.ts chooses between the two. The socket's first
 * message carries the launch token; the host answers `welcome` and only then sends
 * anything, and requests wait for it.
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

/** The bridge over the web host's socket. `url` e.g. ws://127.0.0.1:4180/bridge; `token` the launch token. */
export function socketBridge(url: string, token: string, makeSocket: (url: string) => SocketLike = (u) => new WebSocket(u)): SocketBridge {
  const socket = makeSocket(url);
  const listeners = new Set<(event: BridgeEvent) => void>();
  const pending = new Map<number, (reply: AnyReply) => void>();
  let nextId = 1;
  let closed = false;

  let welcomed: () => void = () => undefined;
  const ready = new Promise<void>((resolve, reject) => {
    welcomed = resolve;
    socket.addEventListener('open', () => socket.send(JSON.stringify({ kind: 'hello', token })));
    socket.addEventListener('error', () => reject(new Error('the bench service could not be reached')));
    socket.addEventListener('close', () => reject(new Error('the bench service closed the connection (a wrong or missing token?)')));
  });
  // A refusal is reported through `ready` and the link state; it is not an unhandled rejection.
  ready.catch(() => undefined);
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
    if (msg.kind === 'welcome') {
      welcomed();
    } else if (msg.kind === 'event') {
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
      try {
        await ready;
      } catch (err) {
        return { ok: false, error: `${(err as Error).message}; reload the page from the address rateline serve printed.` };
      }
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
