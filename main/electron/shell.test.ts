import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CHANNELS, LIMITS, parseRequest, type AnyReply, type BridgeEvent } from '../bridge/contract';
import type { BridgeService } from '../webHost';
import type {
  BrowserWindowOptionsLike, ElectronApi, FrameLike, IpcInvokeEventLike, MenuItemLike, PermissionCheckHandlerLike,
  PermissionRequestHandlerLike, PreventableEvent, WebContentsLike,
} from './electronApi';
import { APP_URL } from './ipc';
import { nativeDialogs, startShell } from './shell';

/** A fake web contents that keeps its listeners so tests can fire them. */
class FakeContents implements WebContentsLike {
  listeners = new Map<string, ((...a: never[]) => void)[]>();
  openHandler: ((d: { url: string }) => { action: 'deny' }) | null = null;
  sent: { channel: string; args: unknown[] }[] = [];
  on(event: string, listener: (...a: never[]) => void): this {
    this.listeners.set(event, [...(this.listeners.get(event) ?? []), listener]);
    return this;
  }
  fire(event: string, ...args: unknown[]): void {
    for (const l of this.listeners.get(event) ?? []) (l as (...a: unknown[]) => void)(...args);
  }
  setWindowOpenHandler(h: (d: { url: string }) => { action: 'deny' }): void { this.openHandler = h; }
  send(channel: string, ...args: unknown[]): void { this.sent.push({ channel, args }); }
  isDestroyed(): boolean { return false; }
}

function preventable(): PreventableEvent & { prevented: boolean } {
  const e = { prevented: false, preventDefault() { e.prevented = true; } };
  return e;
}

function fakeElectron() {
  const log: string[] = [];
  const appListeners = new Map<string, (...a: never[]) => void>();
  const ipc = new Map<string, (event: IpcInvokeEventLike, ...args: unknown[]) => unknown>();
  const windows: { options: BrowserWindowOptionsLike; contents: FakeContents; loaded: string[] }[] = [];
  let protocolHandler: ((r: Request) => Response | Promise<Response>) | null = null;
  let permissionRequest: PermissionRequestHandlerLike | null = null;
  let permissionCheck: PermissionCheckHandlerLike | null = null;
  let menu: MenuItemLike[] = [];
  const api: ElectronApi = {
    app: {
      whenReady: async () => { log.push('ready'); },
      on: (event: string, listener: (...a: never[]) => void) => { appListeners.set(event, listener); return api.app; },
      quit: () => { log.push('quit'); },
    } as ElectronApi['app'],
    protocol: {
      registerSchemesAsPrivileged: (schemes) => { log.push(`scheme:${JSON.stringify(schemes)}`); },
      handle: (scheme, handler) => { log.push(`handle:${scheme}`); protocolHandler = handler; },
    },
    session: {
      defaultSession: {
        setPermissionRequestHandler: (h) => { permissionRequest = h; },
        setPermissionCheckHandler: (h) => { permissionCheck = h; },
      },
    },
    ipcMain: { handle: (channel, listener) => { ipc.set(channel, listener); } },
    Menu: {
      buildFromTemplate: (t) => { menu = t; return { built: t }; },
      setApplicationMenu: () => { log.push('menu'); },
    },
    dialog: {
      showOpenDialog: async () => ({ canceled: true, filePaths: [] }),
      showSaveDialog: async () => ({ canceled: true }),
    },
    BrowserWindow: class {
      readonly webContents = new FakeContents();
      private readonly rec: { options: BrowserWindowOptionsLike; contents: FakeContents; loaded: string[] };
      constructor(options: BrowserWindowOptionsLike) {
        this.rec = { options, contents: this.webContents, loaded: [] };
        windows.push(this.rec);
      }
      async loadURL(url: string): Promise<void> { this.rec.loaded.push(url); }
      once(): this { return this; }
      on(): this { return this; }
      show(): void {}
    },
  };
  return {
    api, log, appListeners, ipc, windows,
    get protocolHandler() { return protocolHandler!; },
    get permissionRequest() { return permissionRequest!; },
    get permissionCheck() { return permissionCheck!; },
    get menu() { return menu; },
  };
}

/** A service that records what reaches it and answers getState-like requests. */
function spyService() {
  const handled: unknown[] = [];
  const listeners = new Set<(e: BridgeEvent) => void>();
  const service: BridgeService & { handled: unknown[]; push(e: BridgeEvent): void } = {
    handled,
    async handle(input): Promise<AnyReply> {
      handled.push(input);
      const p = parseRequest(input);
      return p.ok ? { ok: true, value: { echoed: p.request.type } } : { ok: false, error: p.error };
    },
    subscribe(l) { listeners.add(l); return () => listeners.delete(l); },
    catchUp(l) { l({ type: 'warning', message: 'catch-up', at: '2026-01-01T00:00:00Z' }); },
    push(e) { for (const l of listeners) l(e); },
  };
  return service;
}

let dir: string;
let fake: ReturnType<typeof fakeElectron>;
let service: ReturnType<typeof spyService>;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'rateline-shell-'));
  mkdirSync(join(dir, 'renderer', 'assets'), { recursive: true });
  writeFileSync(join(dir, 'renderer', 'index.html'), '<!doctype html><title>Rateline</title>');
  writeFileSync(join(dir, 'secret.txt'), 'outside');
  fake = fakeElectron();
  service = spyService();
  await startShell(fake.api, { service, rendererDir: join(dir, 'renderer'), preloadPath: '/app/dist/electron/preload.cjs', isMac: false });
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const frame = (url: string, parent: FrameLike | null = null): IpcInvokeEventLike => ({ senderFrame: { url, parent } });

describe('Electron shell wiring (fake Electron API)', () => {
  it('opens one window, isolated and sandboxed, on the app scheme registered before ready', () => {
    expect(fake.windows).toHaveLength(1);
    const w = fake.windows[0]!;
    expect(w.options.webPreferences).toMatchObject({
      contextIsolation: true, sandbox: true, nodeIntegration: false, nodeIntegrationInWorker: false,
      nodeIntegrationInSubFrames: false, webSecurity: true, allowRunningInsecureContent: false, webviewTag: false,
      preload: '/app/dist/electron/preload.cjs', disableBlinkFeatures: 'Auxclick',
    });
    expect(w.loaded).toEqual([APP_URL]);
    const schemeAt = fake.log.findIndex((l) => l.startsWith('scheme:'));
    expect(schemeAt).toBeGreaterThanOrEqual(0);
    expect(schemeAt).toBeLessThan(fake.log.indexOf('ready'));
    expect(fake.log[schemeAt]).toContain('"secure":true');
  });

  it('blocks navigation, redirects away, new windows and webviews in every web contents', () => {
    const contents = new FakeContents();
    fake.appListeners.get('web-contents-created')!(...([{}, contents] as never[]));
    const nav = preventable();
    contents.fire('will-navigate', nav, 'https://example.org/');
    expect(nav.prevented).toBe(true);
    const redirectAway = preventable();
    contents.fire('will-redirect', redirectAway, 'https://example.org/');
    expect(redirectAway.prevented).toBe(true);
    const redirectHome = preventable(); // negative control: our own scheme may redirect within itself
    contents.fire('will-redirect', redirectHome, 'rateline://app/index.html');
    expect(redirectHome.prevented).toBe(false);
    const webview = preventable();
    contents.fire('will-attach-webview', webview);
    expect(webview.prevented).toBe(true);
    expect(contents.openHandler!({ url: 'https://example.org/' })).toEqual({ action: 'deny' });
  });

  it('denies every permission request and check', () => {
    for (const p of ['media', 'geolocation', 'notifications', 'openExternal', 'serial', 'clipboard-read']) {
      let granted: boolean | null = null;
      fake.permissionRequest({}, p, (g) => { granted = g; });
      expect(granted, p).toBe(false);
      expect(fake.permissionCheck({}, p)).toBe(false);
    }
  });

  it('answers IPC only from the top frame of the app page, and validates the payload', async () => {
    const invoke = fake.ipc.get(CHANNELS.request)!;
    service.handled.length = 0;
    const ok = (await invoke(frame('rateline://app/index.html'), { type: 'getState' })) as AnyReply;
    expect(ok).toEqual({ ok: true, value: { echoed: 'getState' } });
    expect(service.handled).toHaveLength(1);

    const untrusted: IpcInvokeEventLike[] = [
      frame('https://evil.example/'), frame('file:///etc/passwd'), frame('rateline://other/index.html'),
      frame('rateline://app/index.html', { url: 'rateline://app/index.html', parent: null }), // an iframe
      { senderFrame: null }, frame('not a url'),
    ];
    for (const e of untrusted) {
      const r = (await invoke(e, { type: 'getState' })) as AnyReply;
      expect(r.ok, e.senderFrame?.url ?? 'null frame').toBe(false);
    }
    expect(service.handled).toHaveLength(1); // nothing untrusted reached the service

    const big = (await invoke(frame(APP_URL), { type: 'markEvent', note: 'x'.repeat(LIMITS.maxRequestBytes) })) as AnyReply;
    expect(big.ok).toBe(false);
    const cyclic: Record<string, unknown> = { type: 'getState' };
    cyclic.self = cyclic;
    expect(((await invoke(frame(APP_URL), cyclic)) as AnyReply).ok).toBe(false);
    expect(((await invoke(frame(APP_URL), { type: 'getState' }, 'extra')) as AnyReply).ok).toBe(false);
    const malformed = (await invoke(frame(APP_URL), { type: 'setWavelength', wavelength_nm: 'red' })) as AnyReply;
    expect(malformed.ok).toBe(false);
    if (!malformed.ok) expect(malformed.error).toContain('the wavelength (nm');
  });

  it('sends events to the page only after it has loaded and been caught up', () => {
    const contents = fake.windows[0]!.contents;
    service.push({ type: 'warning', message: 'before load', at: 'x' });
    expect(contents.sent).toHaveLength(0);
    contents.fire('did-finish-load');
    service.push({ type: 'warning', message: 'after load', at: 'x' });
    const messages = contents.sent.map((s) => (s.args[0] as { message: string }).message);
    expect(contents.sent.every((s) => s.channel === CHANNELS.event)).toBe(true);
    expect(messages).toEqual(['catch-up', 'after load']);
    contents.fire('did-start-loading'); // a reload: hold live events until caught up again
    service.push({ type: 'warning', message: 'during reload', at: 'x' });
    expect(contents.sent).toHaveLength(2);
  });

  it('has a menu of our own whose run actions reach the service', async () => {
    const labels = fake.menu.map((m) => m.label);
    expect(labels).toEqual(['Rateline', 'Run', 'Records', 'Edit', 'Display']);
    const run = fake.menu.find((m) => m.label === 'Run')!.submenu!;
    service.handled.length = 0;
    run.find((i) => i.label === 'Start the run')!.click!();
    run.find((i) => i.label === 'Mixed: time zero now')!.click!();
    await new Promise((r) => setTimeout(r, 0));
    expect(service.handled).toEqual([{ type: 'start' }, { type: 'mixed' }]);
    const records = fake.menu.find((m) => m.label === 'Records')!.submenu!.map((i) => i.label);
    expect(records).toEqual(['Play back a recorded run…', 'Export this run as CSV…']);
  });

  it('serves the screens on its own scheme with a strict CSP, and nothing outside them', async () => {
    const get = (url: string, method = 'GET'): Promise<Response> => Promise.resolve(fake.protocolHandler(new Request(url, { method })));
    const page = await get('rateline://app/index.html');
    expect(page.status).toBe(200);
    expect(await page.text()).toContain('Rateline');
    expect(page.headers.get('content-security-policy')).toMatch(/default-src 'none'.*script-src 'self'/);
    for (const bad of ['rateline://app/../secret.txt', 'rateline://app/%2e%2e/secret.txt', 'rateline://app/..%2fsecret.txt', 'rateline://other/index.html']) {
      const r = await get(bad);
      expect(r.status, bad).toBe(404);
    }
    expect((await get('rateline://app/index.html', 'POST')).status).toBe(404);
  });

  it('gets file paths only from the native dialogs', async () => {
    const calls: string[] = [];
    const dialog: ElectronApi['dialog'] = {
      showOpenDialog: async (o) => { calls.push(o.title); return { canceled: false, filePaths: ['/runs/a.jsonl'] }; },
      showSaveDialog: async (o) => { calls.push(o.defaultPath); return { canceled: true }; },
    };
    const d = nativeDialogs(dialog, '/runs');
    expect(await d.chooseRecordToOpen()).toBe('/runs/a.jsonl');
    expect(await d.chooseExportPath('run-1.csv')).toBeNull();
    expect(calls).toEqual(['Play back a recorded run', join('/runs', 'exports', 'run-1.csv')]);
  });
});
