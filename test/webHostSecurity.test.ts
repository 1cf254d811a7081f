/**
 * The loopback web host's defences, tested over real sockets against an in-process host
 * (the same startWebHost that `rateline serve` runs): the token on every request that
 * reads or changes anything and as the socket's first message, never in a cookie; the
 * built screens public but confined to their folder (symbolic links included); Host and
 * Origin checks, size caps, malformed input refused while the service keeps answering,
 * and loopback-only listening.
 */
import { mkdirSync, mkdtempSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { request as httpRequest } from 'node:http';
import { connect } from 'node:net';
import { networkInterfaces, tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { BenchService } from '../main/benchService';
import { LIMITS, SOCKET_CLOSE, SOCKET_PATH, type ServerMessage } from '../main/bridge/contract';
import { socketBridge } from '../main/bridge/client';
import { startWebHost, type WebHost } from '../main/webHost';

let host: WebHost;
let dir: string;
let service: BenchService;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'rateline-webhost-'));
  const site = join(dir, 'site');
  mkdirSync(join(site, 'assets'), { recursive: true });
  writeFileSync(join(site, 'index.html'), '<!doctype html><title>Rateline</title><script type="module" src="/assets/app.js"></script>');
  writeFileSync(join(site, 'assets', 'app.js'), 'console.log("screen")');
  writeFileSync(join(dir, 'secret.txt'), 'outside the site');
  mkdirSync(join(dir, 'elsewhere'));
  writeFileSync(join(dir, 'elsewhere', 'private.txt'), 'outside the site too');
  // Links placed in the build folder: two that leave it (a file, a folder), one that stays inside.
  symlinkSync(join(dir, 'secret.txt'), join(site, 'leak.txt'));
  symlinkSync(join(dir, 'elsewhere'), join(site, 'assets', 'more'));
  symlinkSync(join(site, 'assets', 'app.js'), join(site, 'same.js'));
  service = new BenchService({
    host: 'web', dataDir: join(dir, 'runs'), defaultSpeed: 100,
    createSource: () => { throw new Error('no source in this test'); },
    createAnalyzer: () => { throw new Error('no analyzer in this test'); },
    openRecord: () => { throw new Error('no record in this test'); },
    listPorts: async () => [],
  });
  host = await startWebHost({ service, port: 0, staticDir: site, helloTimeout_ms: 500 });
});
afterAll(async () => {
  await host.close();
  await service.dispose();
  rmSync(dir, { recursive: true, force: true });
});

/** A raw HTTP GET (no URL normalisation, any Host header), resolving to status, headers and body. */
function rawGet(path: string, headers: Record<string, string> = {}): Promise<{ status: number; headers: Record<string, string | string[] | undefined>; body: string }> {
  return new Promise((resolve, reject) => {
    const req = httpRequest({ host: '127.0.0.1', port: host.port, path, method: 'GET', headers: { host: `127.0.0.1:${host.port}`, ...headers } }, (res) => {
      let body = '';
      res.setEncoding('utf8');
      res.on('data', (c: string) => (body += c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body }));
    });
    req.on('error', reject);
    req.end();
  });
}

const SOCKET_URL = (): string => `ws://127.0.0.1:${host.port}${SOCKET_PATH}`;

/** Opens a socket; resolves 'open' with the socket, or the refusal's HTTP status. */
function openSocket(url: string, origin: string | undefined): Promise<{ ws: WebSocket; status: null } | { ws: null; status: number }> {
  return new Promise((resolve) => {
    const ws = new WebSocket(url, origin ? { origin } : {});
    ws.on('open', () => resolve({ ws, status: null }));
    ws.on('unexpected-response', (_req, res) => resolve({ ws: null, status: res.statusCode ?? 0 }));
    ws.on('error', () => resolve({ ws: null, status: -1 }));
  });
}

/** Every message a socket receives, and how it closed. */
function watch(ws: WebSocket): { messages: ServerMessage[]; closed: Promise<{ code: number; reason: string }> } {
  const messages: ServerMessage[] = [];
  ws.on('message', (data) => messages.push(JSON.parse(data.toString()) as ServerMessage));
  const closed = new Promise<{ code: number; reason: string }>((resolve) => ws.on('close', (code, reason) => resolve({ code, reason: reason.toString() })));
  return { messages, closed };
}

/** A socket that has shown the token and been welcomed. */
async function welcomedSocket(): Promise<WebSocket> {
  const { ws } = await openSocket(SOCKET_URL(), host.origin);
  const socket = ws!;
  const welcome = new Promise<void>((resolve) => socket.once('message', () => resolve()));
  socket.send(JSON.stringify({ kind: 'hello', token: host.token }));
  await welcome;
  return socket;
}

function nextReply(ws: WebSocket): Promise<Extract<ServerMessage, { kind: 'reply' }>> {
  return new Promise((resolve) => {
    const onMessage = (data: WebSocket.RawData): void => {
      const msg = JSON.parse(data.toString()) as ServerMessage;
      if (msg.kind === 'reply') {
        ws.off('message', onMessage);
        resolve(msg);
      }
    };
    ws.on('message', onMessage);
  });
}


describe('web host security', () => {
  it('serves the built screens without the token (public files), under a strict CSP and never with a cookie', async () => {
    for (const path of ['/', `/?token=${host.token}`, '/?token=wrong', '/assets/app.js']) {
      const r = await rawGet(path);
      expect(r.status, path).toBe(200);
      expect(r.headers['set-cookie'], path).toBeUndefined();
      expect(String(r.headers['content-security-policy'])).toMatch(/default-src 'none'.*script-src 'self'/);
      expect(String(r.headers['content-security-policy'])).toContain("frame-ancestors 'none'");
      expect(r.headers['x-content-type-options']).toBe('nosniff');
    }
    expect((await rawGet('/')).body).toContain('Rateline');
    expect((await rawGet('/assets/app.js')).headers['content-type']).toContain('javascript');
  });

  it('answers the bench service only with the token in its header: not in the query, not in a cookie', async () => {
    const post = (headers: Record<string, string>, path = '/api/request'): Promise<Response> =>
      fetch(`${host.origin}${path}`, { method: 'POST', headers: { 'content-type': 'application/json', ...headers }, body: '{"type":"getState"}' });
    expect((await post({})).status).toBe(403);
    expect((await post({ 'x-rateline-token': 'wrong' })).status).toBe(403);
    expect((await post({ 'x-rateline-token': host.token.slice(0, -1) + 'x' })).status).toBe(403);
    expect((await post({}, `/api/request?token=${host.token}`)).status).toBe(403);
    expect((await post({ cookie: `rateline_token=${host.token}` })).status).toBe(403);
    expect((await rawGet(`/api/request?token=${host.token}`)).status).toBe(403);
    const refused = await post({});
    expect(await refused.text()).toMatch(/^forbidden: requests to the bench service carry the token \(header x-rateline-token\)/);
    // negative control: the header opens it
    const ok = await post({ 'x-rateline-token': host.token });
    expect(ok.status).toBe(200);
    expect(((await ok.json()) as { ok: boolean }).ok).toBe(true);
    expect(ok.headers.get('set-cookie')).toBeNull();
  });

  it('refuses a foreign Host header on every request, files included (DNS rebinding)', async () => {
    expect((await rawGet('/', { host: `evil.example:${host.port}` })).status).toBe(403);
    expect((await rawGet('/assets/app.js', { host: `evil.example:${host.port}` })).status).toBe(403);
    // fetch() will not send a Host header of its choosing: a raw request does.
    const status = await new Promise<number>((resolve, reject) => {
      const req = httpRequest({ host: '127.0.0.1', port: host.port, path: '/api/request', method: 'POST', headers: { host: `evil.example:${host.port}`, 'x-rateline-token': host.token } }, (res) => {
        res.resume();
        resolve(res.statusCode ?? 0);
      });
      req.on('error', reject);
      req.end('{"type":"getState"}');
    });
    expect(status).toBe(403);
  });

  it('keeps file requests inside the screens folder, through symbolic links too', async () => {
    for (const p of ['/../secret.txt', '/%2e%2e/secret.txt', '/assets/..%2f..%2fsecret.txt', '/..%5csecret.txt', '/leak.txt', '/assets/more/private.txt']) {
      const r = await rawGet(p);
      expect(r.status, p).toBe(404);
      expect(r.body).not.toContain('outside the site');
    }
    // negative control: a link that stays inside the folder is served
    const inside = await rawGet('/same.js');
    expect(inside.status).toBe(200);
    expect(inside.body).toBe('console.log("screen")');
  });

  it('opens the socket only from its own origin, and sends nothing before the token has come as the first message', async () => {
    expect((await openSocket(SOCKET_URL(), 'http://evil.example')).status).toBe(403);
    expect((await openSocket(SOCKET_URL(), `http://127.0.0.1:${host.port + 1}`)).status).toBe(403);
    expect((await openSocket(SOCKET_URL(), undefined)).status).toBe(403);
    expect((await openSocket(`${SOCKET_URL()}?token=${host.token}`, 'http://evil.example')).status).toBe(403);

    // Silent: nothing is sent until the token comes, and the socket is closed when it does not.
    const silent = await openSocket(SOCKET_URL(), host.origin);
    const quiet = watch(silent.ws!);
    expect(await quiet.closed).toEqual({ code: SOCKET_CLOSE.noToken, reason: 'no token: the first message must carry it' });
    expect(quiet.messages).toEqual([]);

    // A wrong token, a request before the token, a token in the address only: closed, nothing sent.
    for (const first of [{ kind: 'hello', token: 'wrong' }, { kind: 'request', id: 1, request: { type: 'getState' } }, 'not json']) {
      const { ws } = await openSocket(`${SOCKET_URL()}?token=${host.token}`, host.origin);
      const w = watch(ws!);
      ws!.send(typeof first === 'string' ? first : JSON.stringify(first));
      const closed = await w.closed;
      expect(closed.code, JSON.stringify(first)).toBe(typeof first === 'object' && first.kind === 'hello' ? SOCKET_CLOSE.wrongToken : SOCKET_CLOSE.noToken);
      expect(w.messages).toEqual([]);
    }

    // negative control: own origin and the token first: welcome, then the state, then answers
    const { ws } = await openSocket(SOCKET_URL(), host.origin);
    const w = watch(ws!);
    ws!.send(JSON.stringify({ kind: 'hello', token: host.token }));
    const reply = nextReply(ws!);
    ws!.send(JSON.stringify({ kind: 'request', id: 2, request: { type: 'getState' } }));
    expect((await reply).reply.ok).toBe(true);
    expect(w.messages[0]).toEqual({ kind: 'welcome' });
    expect(w.messages.some((m) => m.kind === 'event' && m.event.type === 'state')).toBe(true);
    ws!.close();
  });

  it('is reached by the screen’s own bridge client, which sends the token first', async () => {
    const bridge = socketBridge(SOCKET_URL(), host.token, (u) => new WebSocket(u, { origin: host.origin }) as never);
    await bridge.ready;
    const state = await bridge.request({ type: 'getState' });
    expect(state.ok).toBe(true);
    bridge.close();
    // negative control: with a wrong token the client is told, and its requests fail in words
    const wrong = socketBridge(SOCKET_URL(), 'wrong', (u) => new WebSocket(u, { origin: host.origin }) as never);
    await expect(wrong.ready).rejects.toThrow(/closed the connection/);
    const r = await wrong.request({ type: 'getState' });
    expect(r).toEqual({ ok: false, error: 'the bench service closed the connection (a wrong or missing token?); reload the page from the address rateline serve printed.' });
  });

  it('rejects malformed and oversized socket messages and keeps answering', async () => {
    const socket = await welcomedSocket();
    const bad: string[] = ['not json', '{"kind":"request"}', JSON.stringify({ kind: 'request', id: 7, request: { type: 'setWavelength', wavelength_nm: 'x' } })];
    for (const b of bad) {
      const reply = nextReply(socket);
      socket.send(b);
      const r = await reply;
      expect(r.reply.ok).toBe(false);
    }
    const good = nextReply(socket);
    socket.send(JSON.stringify({ kind: 'request', id: 8, request: { type: 'getState' } }));
    expect((await good).reply.ok).toBe(true);

    // oversized: the socket is closed with 1009 (message too big)
    const closed = new Promise<number>((resolve) => socket.on('close', (code) => resolve(code)));
    socket.send('x'.repeat(LIMITS.maxRequestBytes + 1));
    expect(await closed).toBe(1009);

    // the service still answers on a new socket and over HTTP
    const again = await welcomedSocket();
    const reply = nextReply(again);
    again.send(JSON.stringify({ kind: 'request', id: 1, request: { type: 'getState' } }));
    expect((await reply).reply.ok).toBe(true);
    again.close();
  });

  it('caps and checks POST bodies', async () => {
    const post = (body: string, token = host.token): Promise<Response> =>
      fetch(`${host.origin}/api/request`, { method: 'POST', headers: { 'x-rateline-token': token, 'content-type': 'application/json' }, body });
    expect((await post('{"type":"getState"}', 'wrong')).status).toBe(403);
    const foreign = await fetch(`${host.origin}/api/request`, { method: 'POST', headers: { 'x-rateline-token': host.token, origin: 'http://evil.example' }, body: '{"type":"getState"}' });
    expect(foreign.status).toBe(403);
    expect((await post('{oops')).status).toBe(400);
    expect((await post(JSON.stringify({ type: 'markEvent', note: 'x'.repeat(LIMITS.maxRequestBytes) }))).status).toBe(413);
    const ok = await post('{"type":"getState"}');
    expect(ok.status).toBe(200);
    expect(((await ok.json()) as { ok: boolean }).ok).toBe(true);
  });

  it('listens on 127.0.0.1 only', async () => {
    const refused = (address: string, family: 4 | 6): Promise<boolean> => new Promise((resolve) => {
      const s = connect({ host: address, port: host.port, family });
      s.on('connect', () => { s.destroy(); resolve(false); });
      s.on('error', () => resolve(true));
    });
    expect(host.origin).toBe(`http://127.0.0.1:${host.port}`);
    expect(await refused('::1', 6)).toBe(true);
    const others = Object.values(networkInterfaces()).flat().filter((i) => i && !i.internal && i.family === 'IPv4');
    for (const i of others) expect(await refused(i!.address, 4), i!.address).toBe(true);
    // negative control: loopback itself connects
    expect(await refused('127.0.0.1', 4)).toBe(false);
  });
});
