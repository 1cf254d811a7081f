/**
 * The loopback web host: the same screens and the same bridge over HTTP and a
 * WebSocket, for a browser on this computer only. No logic of its own: requests go
 * to the bench service, events come back.
 *
 * Security model, in short: bound to 127.0.0.1; a random token per launch on every
 * HTTP request (query `token`, header `x-rateline-token`, or the HttpOnly SameSite=Strict
 * cookie set when the page is opened with the token) and on the socket; the Host header
 * must name this host (DNS rebinding); the socket's Origin must be this host's own;
 * request bodies and socket messages capped; a strict Content-Security-Policy.
 */
import { randomBytes, timingSafeEqual } from 'node:crypto';
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { Duplex } from 'node:stream';
import { WebSocketServer, type WebSocket } from 'ws';
import {
  ClientMessageSchema, LIMITS, SOCKET_PATH, TOKEN_HEADER, TOKEN_PARAM, describeIssue,
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
}

export interface WebHost {
  readonly url: string;
  readonly origin: string;
  readonly port: number;
  readonly token: string;
  close(): Promise<void>;
}

export const TOKEN_COOKIE = 'rateline_token';
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

function cookieToken(req: IncomingMessage): string | null {
  for (const part of (req.headers.cookie ?? '').split(';')) {
    const [k, ...v] = part.trim().split('=');
    if (k === TOKEN_COOKIE) return v.join('=');
  }
  return null;
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

  const authorised = (req: IncomingMessage, url: URL): boolean =>
    allowedHosts.has(req.headers.host ?? '') &&
    (tokenMatches(url.searchParams.get(TOKEN_PARAM), token) ||
      tokenMatches(req.headers[TOKEN_HEADER] as string | undefined, token) ||
      tokenMatches(cookieToken(req), token));

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
    if (!authorised(req, url)) return refuse(res, 403, 'forbidden: open the address printed by "rateline serve", token included.');
    // A browser names the page a write came from: none but our own may send one.
    const from = req.headers.origin;
    if (req.method !== 'GET' && req.method !== 'HEAD' && from !== undefined && !allowedOrigins.has(from)) {
      return refuse(res, 403, 'forbidden: requests come from the Rateline page only.');
    }
    if (tokenMatches(url.searchParams.get(TOKEN_PARAM), token)) {
      // The page's scripts and styles are fetched without the query; the cookie carries the token for them.
      res.setHeader('set-cookie', `${TOKEN_COOKIE}=${token}; HttpOnly; SameSite=Strict; Path=/`);
    }
    if (url.pathname === '/api/request') return void handlePost(req, res, opts.service, refuse);
    if (req.method !== 'GET' && req.method !== 'HEAD') return refuse(res, 405, 'method not allowed: the screens are read with GET only.');
    void serveStatic(opts.staticDir, url.pathname, req.method === 'HEAD', res, refuse);
  });

  const wss = new WebSocketServer({ noServer: true, maxPayload: LIMITS.maxRequestBytes });
  server.on('upgrade', (req: IncomingMessage, socket: Duplex, head: Buffer) => {
    const url = new URL(req.url ?? '/', origin);
    const ok = url.pathname === SOCKET_PATH && authorised(req, url) && allowedOrigins.has(req.headers.origin ?? '');
    if (!ok) {
      socket.end('HTTP/1.1 403 Forbidden\r\nConnection: close\r\nContent-Length: 0\r\n\r\n');
      socket.destroy();
      return;
    }
    wss.handleUpgrade(req, socket, head, (ws) => attachSocket(ws, opts.service));
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

function attachSocket(ws: WebSocket, service: BridgeService): void {
  // The catch-up (a whole run so far) is sent at once and may pass the cap; live events may not.
  const send = (msg: ServerMessage, catchingUp = false): void => {
    if (ws.readyState !== ws.OPEN) return;
    if (!catchingUp && ws.bufferedAmount > MAX_SOCKET_BUFFER_BYTES) {
      ws.close(1013, 'the screen fell too far behind; reload the page');
      return;
    }
    ws.send(JSON.stringify(msg));
  };
  service.catchUp((event) => send({ kind: 'event', event }, true));
  const unsubscribe = service.subscribe((event) => send({ kind: 'event', event }));
  ws.on('close', unsubscribe);
  ws.on('error', () => ws.terminate());
  ws.on('message', (data, isBinary) => {
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
