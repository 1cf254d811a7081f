/**
 * The Electron shell: one window, hardened, showing the built screens from the app's
 * own scheme, with the bridge carried over validated IPC. Written against the injected
 * ElectronApi, so every piece of wiring below is unit-tested with a fake.
 *
 * What it holds to: contextIsolation, sandbox, no Node in the page, webSecurity on; a
 * strict CSP on every response; navigation, redirects away, new windows and webviews
 * blocked; every permission request denied; files only through native dialogs.
 */
import { join } from 'node:path';
import { CHANNELS, type BridgeEvent, type BridgeRequest } from '../bridge/contract';
import type { BenchDialogs } from '../bench/benchDependencies';
import type { BridgeService } from '../webHost';
import { appProtocolHandler, type FileReader } from './appProtocol';
import type { BrowserWindowLike, ElectronApi, SessionLike, WebContentsLike } from './electronApi';
import { APP_SCHEME, APP_URL, registerBridgeIpc } from './ipc';
import { menuTemplate } from './menu';

/** Every web contents the app ever creates: no navigation away, no new windows, no webviews. */
export function hardenContents(contents: WebContentsLike): void {
  contents.on('will-navigate', (event) => event.preventDefault());
  contents.on('will-redirect', (event, url) => {
    if (!url.startsWith(`${APP_SCHEME}://`)) event.preventDefault();
  });
  contents.on('will-attach-webview', (event) => event.preventDefault());
  contents.setWindowOpenHandler(() => ({ action: 'deny' }));
}

export function denyPermissions(session: SessionLike): void {
  session.setPermissionRequestHandler((_contents, _permission, callback) => callback(false));
  session.setPermissionCheckHandler(() => false);
}

/** Native dialogs for the bench service: the only way a path reaches it in the desktop app. */
export function nativeDialogs(dialog: ElectronApi['dialog'], dataDir: string): BenchDialogs {
  return {
    async chooseRecordToOpen() {
      const r = await dialog.showOpenDialog({
        title: 'Play back a recorded run', properties: ['openFile'], defaultPath: dataDir,
        filters: [{ name: 'Rateline run records', extensions: ['jsonl'] }],
      });
      return r.canceled ? null : (r.filePaths[0] ?? null);
    },
    async chooseExportPath(defaultName) {
      const r = await dialog.showSaveDialog({
        title: 'Export the run as CSV', defaultPath: join(dataDir, 'exports', defaultName),
        filters: [{ name: 'CSV', extensions: ['csv'] }],
      });
      return r.canceled || !r.filePath ? null : r.filePath;
    },
  };
}

/**
 * Must run before the app is ready: our scheme is a standard, secure origin. corsEnabled
 * lets the page's module scripts (loaded with the crossorigin attribute) come from it;
 * the handler sends no Access-Control-Allow-Origin, so no other origin can read it.
 */
export function registerAppScheme(api: ElectronApi): void {
  api.protocol.registerSchemesAsPrivileged([{ scheme: APP_SCHEME, privileges: { standard: true, secure: true, supportFetchAPI: true, corsEnabled: true } }]);
}

export interface ShellOptions {
  service: BridgeService;
  rendererDir: string;
  preloadPath: string;
  isMac: boolean;
  readFile?: FileReader;
}

export async function startShell(api: ElectronApi, o: ShellOptions): Promise<BrowserWindowLike> {
  registerAppScheme(api);
  api.app.on('web-contents-created', (_event, contents) => hardenContents(contents));
  api.app.on('window-all-closed', () => api.app.quit());
  await api.app.whenReady();

  denyPermissions(api.session.defaultSession);
  api.protocol.handle(APP_SCHEME, appProtocolHandler(o.rendererDir, o.readFile));
  registerBridgeIpc(api.ipcMain, o.service);

  // The options are written out here, as a literal, so the security scan
  // (test/electronegativity.test.ts) reads exactly what the window gets.
  const { BrowserWindow } = api;
  const win = new BrowserWindow({
    width: 1280, height: 800, minWidth: 960, minHeight: 600, title: 'Rateline', show: false, backgroundColor: '#f4f1ea',
    webPreferences: {
      preload: o.preloadPath,
      contextIsolation: true,
      sandbox: true,
      nodeIntegration: false,
      nodeIntegrationInWorker: false,
      nodeIntegrationInSubFrames: false,
      webSecurity: true,
      allowRunningInsecureContent: false,
      webviewTag: false,
      experimentalFeatures: false,
      navigateOnDragDrop: false,
      spellcheck: false,
      // A middle click would open a link in a new window: off (the page has no links to follow anyway).
      disableBlinkFeatures: 'Auxclick',
    },
  });
  const send = (event: BridgeEvent): void => {
    if (!win.webContents.isDestroyed()) win.webContents.send(CHANNELS.event, event);
  };
  // Live events flow once the page has loaded and been caught up, so a reload neither misses nor repeats readings.
  let live = false;
  const unsubscribe = o.service.subscribe((event) => { if (live) send(event); });
  win.webContents.on('did-start-loading', () => { live = false; });
  win.webContents.on('did-finish-load', () => {
    o.service.catchUp(send);
    live = true;
  });
  win.on('closed', unsubscribe);
  win.once('ready-to-show', () => win.show());

  const fromMenu = (request: BridgeRequest): void => {
    void o.service.handle(request).then((reply) => {
      if (!reply.ok) send({ type: 'warning', message: reply.error, at: new Date().toISOString() });
    });
  };
  api.Menu.setApplicationMenu(api.Menu.buildFromTemplate(menuTemplate(fromMenu, o.isMac)));

  await win.loadURL(APP_URL);
  return win;
}
