/**
 * The web host's token stays home, in a real Chromium against the real `rateline serve`:
 * the page takes the token from the address and clears it from the address bar, sets no
 * cookie (a browser would send it to every port on 127.0.0.1: here a listener of our own
 * on another port plays the program that would learn it), sends it as the socket's first
 * message and nowhere in an address, and reconnects after a reload.
 */
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, describe, expect, it } from 'vitest';
import { useScreenSession } from './screenSession';

describe('the token stays with the page', () => {
  const session = useScreenSession('rateline-e2e-token-', 100);
  let spy: Server | null = null;
  afterAll(async () => {
    await new Promise<void>((resolve) => (spy ? spy.close(() => resolve()) : resolve()));
  });

  it('is cleared from the address bar, kept out of cookies and addresses, sent first on the socket, and survives a reload', async () => {
    const { page, context } = session.browser;
    const token = new URL(session.serve.url).searchParams.get('token')!;
    expect(token.length).toBeGreaterThan(20);
    const addresses: string[] = [];
    const firstFrames: string[] = [];
    page.on('request', (r) => addresses.push(r.url()));
    page.on('websocket', (ws) => {
      addresses.push(ws.url());
      let first = true;
      ws.on('framesent', (f) => {
        if (first) firstFrames.push(String(f.payload));
        first = false;
      });
    });

    await page.goto(session.serve.url);
    await page.getByText('Service: connected').waitFor({ timeout: 20_000 });
    expect(page.url()).not.toContain(token);
    expect(await page.evaluate(() => location.search)).toBe('');
    expect(await context.cookies()).toEqual([]);
    // The socket's address carries no token; its first message does, and nothing else does.
    expect(firstFrames).toHaveLength(1);
    expect(JSON.parse(firstFrames[0]!)).toEqual({ kind: 'hello', token });
    // Only the address typed in carried it (the page request itself): no script, style or socket address.
    expect(addresses.filter((a) => a.includes(token))).toEqual([session.serve.url]);

    // Another program on another port of 127.0.0.1, visited by the same browser, receives no token.
    const seen: Array<string | undefined> = [];
    spy = createServer((req, res) => {
      seen.push(req.headers.cookie);
      res.end('spy');
    });
    await new Promise<void>((resolve) => spy!.listen(0, '127.0.0.1', () => resolve()));
    const spyPage = await context.newPage();
    await spyPage.goto(`http://127.0.0.1:${(spy.address() as AddressInfo).port}/`);
    await spyPage.close();
    expect(seen.length).toBeGreaterThan(0);
    expect(seen.filter((c) => c !== undefined && c.includes(token))).toEqual([]);

    // A reload (the token no longer in the address) connects again, from the tab's own storage.
    await page.reload();
    await page.getByText('Service: connected').waitFor({ timeout: 20_000 });
    expect(firstFrames).toHaveLength(2);
    expect(JSON.parse(firstFrames[1]!)).toEqual({ kind: 'hello', token });
    expect(session.problems).toEqual([]);
  }, 90_000);

  it('is refused on the socket without the token: the page says the service is lost (negative control)', async () => {
    const fresh = await session.browser.context.newPage();
    // A new tab with the address but no token: its own session storage is empty.
    await fresh.goto(new URL('/', session.serve.url).href);
    await fresh.getByText('Service: LOST, reload the page').waitFor({ timeout: 20_000 });
    await fresh.close();
  }, 60_000);
});
