/**
 * The esbuild bundles Electron loads, run in plain Node with a fake `electron` module
 * put in place of the real one: the main bundle must start the service and open the
 * window on the app scheme; the preload bundle must expose only `request` and
 * `onEvent`, forward requests on the request channel, and hold early events for the
 * first subscriber.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createRequire } from 'node:module';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CHANNELS } from '../bridge/channels';

const ROOT = join(import.meta.dirname, '..', '..');
let dir: string;
let bundles: { main: string; preload: string };

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'rateline-bundle-'));
  const { bundleShell } = createRequire(import.meta.url)(join(ROOT, 'main', 'electron', 'bundle.cjs')) as { bundleShell(root: string): { main: string; preload: string } };
  bundles = bundleShell(ROOT);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Runs `body` in a child Node with require('electron') answered by `fake` (both CommonJS source). */
function runWithFakeElectron(fake: string, body: string): { status: number | null; stdout: string; stderr: string } {
  const script = join(dir, `run-${Math.random().toString(16).slice(2)}.cjs`);
  writeFileSync(script, `
    const Module = require('node:module');
    const fake = (() => { ${fake} })();
    const load = Module._load;
    Module._load = function (request, ...rest) { return request === 'electron' ? fake : load.call(this, request, ...rest); };
    ${body}
  `);
  const r = spawnSync(process.execPath, [script], { cwd: ROOT, encoding: 'utf8', timeout: 30_000, env: { ...process.env, RATELINE_DATA_DIR: join(dir, 'runs') } });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe('Electron bundles', () => {
  it('the main bundle starts the service and opens the hardened window on the app scheme', () => {
    const fake = `
      const out = (s) => process.stdout.write(s + '\\n');
      const noop = () => {};
      return {
        app: { getAppPath: () => ${JSON.stringify(ROOT)}, whenReady: async () => {}, on: (e) => out('app.on ' + e), quit: () => out('quit') },
        protocol: { registerSchemesAsPrivileged: (s) => out('scheme ' + s[0].scheme), handle: (s) => out('handle ' + s) },
        session: { defaultSession: { setPermissionRequestHandler: () => out('permissions'), setPermissionCheckHandler: noop } },
        ipcMain: { handle: (c) => out('ipc ' + c) },
        Menu: { buildFromTemplate: (t) => t, setApplicationMenu: (t) => out('menu ' + t.map((m) => m.label).join('|')) },
        dialog: {},
        BrowserWindow: class {
          constructor(o) { out('window ' + JSON.stringify(o.webPreferences)); this.webContents = { on: noop, setWindowOpenHandler: noop, send: noop, isDestroyed: () => false }; }
          async loadURL(u) { out('load ' + u); setTimeout(() => process.exit(0), 50); }
          once() {} on() {} show() {}
        },
      };`;
    const r = runWithFakeElectron(fake, `require(${JSON.stringify(bundles.main)});`);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const lines = r.stdout.trim().split('\n');
    expect(lines).toContain('scheme rateline');
    expect(lines).toContain('handle rateline');
    expect(lines).toContain(`ipc ${CHANNELS.request}`);
    expect(lines).toContain('permissions');
    expect(lines).toContain('menu Rateline|Run|Records|Edit|Display');
    expect(lines).toContain('load rateline://app/index.html');
    const prefs = JSON.parse(lines.find((l) => l.startsWith('window '))!.slice(7)) as Record<string, unknown>;
    expect(prefs).toMatchObject({ contextIsolation: true, sandbox: true, nodeIntegration: false, webSecurity: true });
    expect(prefs.preload).toBe(join(ROOT, 'dist', 'electron', 'preload.cjs'));
  });

  it('the preload exposes only request and onEvent, and holds early events for the first subscriber', () => {
    const fake = `
      const handlers = new Map();
      globalThis.__exposed = null;
      globalThis.__invoked = [];
      globalThis.__emit = (channel, ev) => handlers.get(channel)({}, ev);
      return {
        contextBridge: { exposeInMainWorld: (name, api) => { globalThis.__exposed = { name, api }; } },
        ipcRenderer: {
          on: (channel, h) => handlers.set(channel, h),
          invoke: async (channel, req) => { globalThis.__invoked.push([channel, req]); return { ok: true, value: 'x' }; },
        },
      };`;
    const body = `
      require(${JSON.stringify(bundles.preload)});
      const { name, api } = globalThis.__exposed;
      __emit(${JSON.stringify(CHANNELS.event)}, { type: 'warning', message: 'early' });
      const got = [];
      const off = api.onEvent((e) => got.push(e.message));
      __emit(${JSON.stringify(CHANNELS.event)}, { type: 'warning', message: 'live' });
      off();
      __emit(${JSON.stringify(CHANNELS.event)}, { type: 'warning', message: 'after unsubscribe' });
      api.request({ type: 'getState' }).then((reply) => {
        console.log(JSON.stringify({ name, keys: Object.keys(api), got, invoked: __invoked, reply }));
      });`;
    const r = runWithFakeElectron(fake, body);
    expect(r.stderr).toBe('');
    const seen = JSON.parse(r.stdout) as { name: string; keys: string[]; got: string[]; invoked: [string, unknown][]; reply: unknown };
    expect(seen.name).toBe('rateline');
    expect(seen.keys.sort()).toEqual(['onEvent', 'request']);
    expect(seen.got).toEqual(['early', 'live']);
    expect(seen.invoked).toEqual([[CHANNELS.request, { type: 'getState' }]]);
  });
});
