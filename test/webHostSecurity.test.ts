/**
 * The loopback web host's defences, tested over real sockets against an in-process host
 * (the same startWebHost that `rateline serve` runs): token on every request, Host and
 * Origin checks, size caps, malformed input refused while the service keeps answering,
 * and loopback-only listening.
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { request as httpRequest } from 'node:http';
import { connect } from 'node:net';
import { networkInterfaces, tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { BenchService } from '../main/benchService';
import { LIMITS, SOCKET_PATH, type ServerMessage } from '../main/bridge/contract';
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
  service = new BenchService({
    host: 'web', dataDir: join(dir, 'runs'), defaultSpeed: 100,
    createSource: () => { throw new Error('no source in this test'); },
    createAnalyzer: () => { throw new Error('no analyzer in this test'); },
    openRecord: () => { throw new Error('no record in this test'); },
    listPorts: async () => [],
  });
  host = await startWebHost({ service, port: 0, staticDir: site });
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

function socketUrl(token: string | null): string {
  return `ws://127.0.0.1:${host.port}${SOCKET_PATH}${token === null ? '' : `?token=${encodeURIComponent(token)}`}`;
}

/** Opens a socket; resolves 'open' with the socket, or the refusal's HTTP status. */
function openSocket(url: string, origin: string | undefined): Promise<{ ws: WebSocket; status: null } | { ws: null; status: number }> {
  return new Promise((resolve) => {
    const ws = new WebSocket(url, origin ? { origin } : {});
    ws.on('open', () => resolve({ ws, status: null }));
    ws.on('unexpected-response', (_req, res) => resolve({ ws: null, status: res.statusCode ?? 0 }));
    ws.on('error', () => resolve({ ws: null, status: -1 }));
  });
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
  it('refuses HTTP requests without the token or with a wrong one (403)', async () => {
    expect((await rawGet('/')).status).toBe(403);
    expect((await rawGet('/?token=wrong')).status).toBe(403);
    expect((await rawGet('/assets/app.js')).status).toBe(403);
    expect((await rawGet('/', { 'x-rateline-token': host.token.slice(0, -1) + 'x' })).status).toBe(403);
    expect((await rawGet('/', { cookie: 'rateline_token=nope' })).status).toBe(403);
    // negative control: the right token opens the page, with a strict CSP
    const ok = await rawGet(`/?token=${host.token}`);
    expect(ok.status).toBe(200);
    expect(ok.body).toContain('Rateline');
    expect(String(ok.headers['content-security-policy'])).toMatch(/default-src 'none'.*script-src 'self'/);
    expect(String(ok.headers['content-security-policy'])).toContain("frame-ancestors 'none'");
    expect(ok.headers['x-content-type-options']).toBe('nosniff');
  });

  it('lets the page fetch its assets through the cookie set with the token, and by header', async () => {
    const page = await rawGet(`/?token=${host.token}`);
    const cookie = String(page.headers['set-cookie']);
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Strict/);
    const asset = await rawGet('/assets/app.js', { cookie: cookie.split(';')[0]! });
    expect(asset.status).toBe(200);
    expect(asset.headers['content-type']).toContain('javascript');
    expect((await rawGet('/assets/app.js', { 'x-rateline-token': host.token })).status).toBe(200);
  });

  it('refuses a foreign Host header even with the token (DNS rebinding)', async () => {
    expect((await rawGet(`/?token=${host.token}`, { host: `evil.example:${host.port}` })).status).toBe(403);
  });

  it('keeps file requests inside the screens folder', async () => {
    for (const p of ['/../secret.txt', '/%2e%2e/secret.txt', '/assets/..%2f..%2fsecret.txt', '/..%5csecret.txt']) {
      const r = await rawGet(`${p}?token=${host.token}`);
      expect(r.status, p).toBe(404);
      expect(r.body).not.toContain('outside the site');
    }
  });

  it('refuses the socket without the token, with a wrong one, or from a foreign Origin', async () => {
    expect((await openSocket(socketUrl(null), host.origin)).status).toBe(403);
    expect((await openSocket(socketUrl('wrong'), host.origin)).status).toBe(403);
    expect((await openSocket(socketUrl(host.token), 'http://evil.example')).status).toBe(403);
    expect((await openSocket(socketUrl(host.token), `http://127.0.0.1:${host.port + 1}`)).status).toBe(403);
    expect((await openSocket(socketUrl(host.token), undefined)).status).toBe(403);
    // negative control: own origin and token open it, and the state arrives first
    const ok = await openSocket(socketUrl(host.token), host.origin);
    expect(ok.ws).not.toBeNull();
    ok.ws!.close();
  });

  it('rejects malformed and oversized socket messages and keeps answering', async () => {
    const { ws } = await openSocket(socketUrl(host.token), host.origin);
    expect(ws).not.toBeNull();
    const socket = ws!;
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
    const again = await openSocket(socketUrl(host.token), host.origin);
    const reply = nextReply(again.ws!);
    again.ws!.send(JSON.stringify({ kind: 'request', id: 1, request: { type: 'getState' } }));
    expect((await reply).reply.ok).toBe(true);
    again.ws!.close();
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
