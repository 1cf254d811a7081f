/**
 * The loopback web host: the same screens and the same bridge over HTTP and a
 * WebSocket, for a browser on this computer only. No logic of its own: requests go
 * to the bench service, events come back.
 *
 * Security model, in short: bound to 127.0.0.1; the Host header must name this host
 * (DNS rebinding) on every request; the built screens (index.html, scripts, styles) are
 * public files and served without the token, confined to their folder by real path;
 * every request that reads or changes anything (`/api/…`) carries the random per-launch
 * token in a header, and the socket's first message carries it (no event or reply before
 * it); the socket's Origin must be this host's own; request bodies and socket messages
 * capped; a strict Content-Security-Policy. The token is never put in a cookie, since a
 * browser sends 127.0.0.1's cookies to every port on it (another local program, or a
 * second Rateline, would receive it); the page keeps it in memory only.
 */
import { randomBytes, timingSafeEqual } from 'node:crypto';
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { Duplex } from 'node:stream';
import { WebSocketServer, type WebSocket } from 'ws';
import {
  ClientMessageSchema, HELLO_TIMEOUT_MS, HelloMessageSchema, LIMITS, SOCKET_CLOSE, SOCKET_PATH, TOKEN_HEADER, TOKEN_PARAM, describeIssue,
  type AnyReply, type BridgeEvent, type ServerMessage,
} from './bridge/contract';
import { serveStatic } from './web/staticFiles';

export interface BridgeService {
  handle(input: unknown): Promise<AnyReply>;
  subscribe(listener: (event: BridgeEvent) => void): () => void;
  catchUp(listener: (event: BridgeEvent) => void): void;
}

export interface WebHostOptions {
  service: BridgeService;
  /** 0 for any free port. */
  port: number;
  /** The built screens (index.html and assets); null serves a one-line page saying they are missing. */
  staticDir: string | null;
  /** Fixed token for tests; a random one per launch otherwise. */
  token?: string;
  /** How long a socket may wait before its first message (the token); HELLO_TIMEOUT_MS by default. */
  helloTimeout_ms?: number;
}

export interface WebHost {
  readonly url: string;
  readonly origin: string;
  readonly port: number;
  readonly token: string;
  close(): Promise<void>;
}

/** A client that cannot keep up (socket buffer past this) is disconnected rather than let memory grow. */
const MAX_SOCKET_BUFFER_BYTES = 64 * 1024 * 1024;

export function contentSecurityPolicy(origin: string): string {
  const ws = origin.replace(/^http/, 'ws');
  return [
    "default-src 'none'", "script-src 'self'", "style-src 'self'", "img-src 'self' data: blob:", "font-src 'self'",
    `connect-src 'self' ${ws}`, "base-uri 'none'", "form-action 'none'", "frame-ancestors 'none'", "object-src 'none'",
  ].join('; ');
}

function tokenMatches(given: string | null | undefined, token: string): boolean {
  if (!given) return false;
  const a = Buffer.from(given);
  const b = Buffer.from(token);
  return a.length === b.length && timingSafeEqual(a, b);
}

export async function startWebHost(opts: WebHostOptions): Promise<WebHost> {
  const token = opts.token ?? randomBytes(24).toString('base64url');
  const server: Server = createServer();
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(opts.port, '127.0.0.1', () => resolve());
  });
  const port = (server.address() as AddressInfo).port;
  const origin = `http://127.0.0.1:${port}`;
  const allowedHosts = new Set([`127.0.0.1:${port}`, `localhost:${port}`]);
  const allowedOrigins = new Set([origin, `http://localhost:${port}`]);
  const csp = contentSecurityPolicy(origin);

  const hostAllowed = (req: IncomingMessage): boolean => allowedHosts.has(req.headers.host ?? '');
  const tokenGiven = (req: IncomingMessage): boolean => tokenMatches(req.headers[TOKEN_HEADER] as string | undefined, token);

  const refuse = (res: ServerResponse, status: number, text: string): void => {
    res.writeHead(status, { 'content-type': 'text/plain; charset=utf-8', 'cache-control': 'no-store', 'content-security-policy': csp });
    res.end(text + '\n');
  };

  server.on('request', (req: IncomingMessage, res: ServerResponse) => {
    const url = new URL(req.url ?? '/', origin);
    res.setHeader('content-security-policy', csp);
    res.setHeader('x-content-type-options', 'nosniff');
    res.setHeader('referrer-policy', 'no-referrer');
    res.setHeader('x-frame-options', 'DENY');
    res.setHeader('cross-origin-opener-policy', 'same-origin');
    res.setHeader('cross-origin-resource-policy', 'same-origin');
    if (!hostAllowed(req)) return refuse(res, 403, 'forbidden: open the address printed by "rateline serve", token included.');
    if (url.pathname === '/api' || url.pathname.startsWith('/api/')) {
      // Everything that reads or changes the bench: the token in its header, from our own page only.
      if (!tokenGiven(req)) return refuse(res, 403, `forbidden: requests to the bench service carry the token (header ${TOKEN_HEADER}) from the address "rateline serve" printed.`);
      const from = req.headers.origin;
      if (from !== undefined && !allowedOrigins.has(from)) return refuse(res, 403, 'forbidden: requests come from the Rateline page only.');
      if (url.pathname === '/api/request') return void handlePost(req, res, opts.service, refuse);
      return refuse(res, 404, 'not found.');
    }
    // The built screens are public files: the page itself carries no data, and it asks for the token before anything else.
    if (req.method !== 'GET' && req.method !== 'HEAD') return refuse(res, 405, 'method not allowed: the screens are read with GET only.');
    void serveStatic(opts.staticDir, url.pathname, req.method === 'HEAD', res, refuse);
  });

  const wss = new WebSocketServer({ noServer: true, maxPayload: LIMITS.maxRequestBytes });
  server.on('upgrade', (req: IncomingMessage, socket: Duplex, head: Buffer) => {
    const url = new URL(req.url ?? '/', origin);
    // The token comes in the socket's first message (attachSocket); the opening is checked for where it comes from.
    const ok = url.pathname === SOCKET_PATH && hostAllowed(req) && allowedOrigins.has(req.headers.origin ?? '');
    if (!ok) {
      socket.end('HTTP/1.1 403 Forbidden\r\nConnection: close\r\nContent-Length: 0\r\n\r\n');
      socket.destroy();
      return;
    }
    wss.handleUpgrade(req, socket, head, (ws) => attachSocket(ws, opts.service, token, opts.helloTimeout_ms ?? HELLO_TIMEOUT_MS));
  });

  return {
    url: `${origin}/?${TOKEN_PARAM}=${token}`,
    origin,
    port,
    token,
    async close() {
      for (const c of wss.clients) c.terminate();
      await new Promise<void>((resolve) => wss.close(() => resolve()));
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
    },
  };
}

function attachSocket(ws: WebSocket, service: BridgeService, token: string, helloTimeout_ms: number): void {
  // The catch-up (a whole run so far) is sent at once and may pass the cap; live events may not.
  const send = (msg: ServerMessage, catchingUp = false): void => {
    if (ws.readyState !== ws.OPEN) return;
    if (!catchingUp && ws.bufferedAmount > MAX_SOCKET_BUFFER_BYTES) {
      ws.close(1013, 'the screen fell too far behind; reload the page');
      return;
    }
    ws.send(JSON.stringify(msg));
  };
  let unsubscribe: (() => void) | null = null;
  // Nothing reaches the socket before its first message has shown the token.
  const helloTimer = setTimeout(() => ws.close(SOCKET_CLOSE.noToken, 'no token: the first message must carry it'), helloTimeout_ms);
  helloTimer.unref?.();
  ws.on('close', () => {
    clearTimeout(helloTimer);
    unsubscribe?.();
  });
  ws.on('error', () => ws.terminate());
  ws.on('message', (data, isBinary) => {
    if (unsubscribe === null) {
      clearTimeout(helloTimer);
      let hello: unknown = null;
      try {
        hello = isBinary ? null : JSON.parse(data.toString());
      } catch {
        // Refused below as no token.
      }
      const parsed = HelloMessageSchema.safeParse(hello);
      if (!parsed.success) return void ws.close(SOCKET_CLOSE.noToken, 'no token: the first message must carry it');
      if (!tokenMatches(parsed.data.token, token)) return void ws.close(SOCKET_CLOSE.wrongToken, 'wrong token: open the address rateline serve printed');
      send({ kind: 'welcome' });
      service.catchUp((event) => send({ kind: 'event', event }, true));
      unsubscribe = service.subscribe((event) => send({ kind: 'event', event }));
      return;
    }
    const refuse = (error: string, id: number | null = null): void => send({ kind: 'reply', id, reply: { ok: false, error } });
    if (isBinary) return refuse('message refused: the bridge speaks JSON text, not binary.');
    let parsedJson: unknown;
    try {
      parsedJson = JSON.parse(data.toString());
    } catch {
      return refuse('message refused: not valid JSON.');
    }
    const msg = ClientMessageSchema.safeParse(parsedJson);
    if (!msg.success) return refuse(`message refused: ${describeIssue(msg.error)}`);
    const { id, request } = msg.data;
    service.handle(request).then(
      (reply) => send({ kind: 'reply', id, reply }),
      () => refuse('the bench service failed on this request; see its console.', id),
    );
  });
}

/** POST /api/request with one JSON request as the body (scripts and tests; the screen uses the socket). */
function handlePost(
  req: IncomingMessage, res: ServerResponse, service: BridgeService,
  refuse: (res: ServerResponse, status: number, text: string) => void,
): void {
  if (req.method !== 'POST') return refuse(res, 405, 'method not allowed: send requests with POST.');
  const declared = Number(req.headers['content-length'] ?? 0);
  if (declared > LIMITS.maxRequestBytes) {
    refuse(res, 413, `request too large: at most ${LIMITS.maxRequestBytes} bytes.`);
    req.destroy();
    return;
  }
  const chunks: Buffer[] = [];
  let size = 0;
  let over = false;
  req.on('data', (chunk: Buffer) => {
    size += chunk.length;
    if (size > LIMITS.maxRequestBytes) {
      if (!over) refuse(res, 413, `request too large: at most ${LIMITS.maxRequestBytes} bytes.`);
      over = true;
      req.destroy();
      return;
    }
    chunks.push(chunk);
  });
  req.on('end', () => {
    if (over) return;
    let body: unknown;
    try {
      body = JSON.parse(Buffer.concat(chunks).toString('utf8'));
    } catch {
      return refuse(res, 400, 'request refused: the body is not valid JSON.');
    }
    void service.handle(body).then((reply) => {
      res.writeHead(reply.ok ? 200 : 400, { 'content-type': 'application/json; charset=utf-8', 'cache-control': 'no-store' });
      res.end(JSON.stringify(reply));
    });
  });
}
