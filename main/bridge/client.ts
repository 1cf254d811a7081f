/**
 * The screen's end of the bridge, for either host. Pure browser code (no Node, no
 * Electron): in Electron the preload has put the bridge on `window.rateline`; in a
 * browser served by `rateline serve` it speaks to the web host over a WebSocket, with
 * the per-launch token taken from the page's own address.
 */
import {
  SOCKET_PATH, TOKEN_PARAM,
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

/**
 * The bridge for this page: Electron's preload if present, else the web host's
 * socket on the page's own origin with the token from `?token=`.
 */
export function connectBridge(win: { location: Location; rateline?: RatelineBridge } = window as never): RatelineBridge {
  if (win.rateline) return win.rateline;
  const token = new URLSearchParams(win.location.search).get(TOKEN_PARAM) ?? '';
  const scheme = win.location.protocol === 'https:' ? 'wss:' : 'ws:';
  return socketBridge(`${scheme}//${win.location.host}${SOCKET_PATH}?${TOKEN_PARAM}=${encodeURIComponent(token)}`);
}
