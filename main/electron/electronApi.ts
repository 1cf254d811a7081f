/**
 * The few parts of Electron the shell uses, as interfaces of our own. The shell is
 * written against these, so its wiring (window options, navigation, permissions, IPC,
 * menu, dialogs) is unit-tested with a fake; main/electron/main.ts passes the real
 * `electron` module, and the type checker holds it to these shapes.
 */

export interface PreventableEvent {
  preventDefault(): void;
}

export interface FrameLike {
  readonly url: string;
  readonly parent: FrameLike | null;
}

export interface IpcInvokeEventLike {
  readonly senderFrame: FrameLike | null;
}

export interface WindowOpenDetailsLike {
  url: string;
}

export interface WebContentsLike {
  on(event: 'will-navigate', listener: (event: PreventableEvent, url: string) => void): unknown;
  on(event: 'will-redirect', listener: (event: PreventableEvent, url: string) => void): unknown;
  on(event: 'will-attach-webview', listener: (event: PreventableEvent) => void): unknown;
  on(event: 'did-finish-load', listener: () => void): unknown;
  on(event: 'did-start-loading', listener: () => void): unknown;
  setWindowOpenHandler(handler: (details: WindowOpenDetailsLike) => { action: 'deny' }): void;
  send(channel: string, ...args: unknown[]): void;
  isDestroyed(): boolean;
}

export interface WebPreferencesLike {
  preload: string;
  contextIsolation: boolean;
  sandbox: boolean;
  nodeIntegration: boolean;
  nodeIntegrationInWorker: boolean;
  nodeIntegrationInSubFrames: boolean;
  webSecurity: boolean;
  allowRunningInsecureContent: boolean;
  webviewTag: boolean;
  experimentalFeatures: boolean;
  navigateOnDragDrop: boolean;
  spellcheck: boolean;
  disableBlinkFeatures: string;
}

export interface BrowserWindowOptionsLike {
  width: number;
  height: number;
  minWidth: number;
  minHeight: number;
  title: string;
  show: boolean;
  backgroundColor: string;
  webPreferences: WebPreferencesLike;
}

export interface BrowserWindowLike {
  readonly webContents: WebContentsLike;
  loadURL(url: string): Promise<void>;
  once(event: 'ready-to-show', listener: () => void): unknown;
  on(event: 'closed', listener: () => void): unknown;
  show(): void;
}

export type PermissionRequestHandlerLike = (webContents: unknown, permission: string, callback: (granted: boolean) => void) => void;
export type PermissionCheckHandlerLike = (webContents: unknown, permission: string) => boolean;

export interface SessionLike {
  setPermissionRequestHandler(handler: PermissionRequestHandlerLike | null): void;
  setPermissionCheckHandler(handler: PermissionCheckHandlerLike | null): void;
}

export interface MenuItemLike {
  label?: string;
  role?: 'quit' | 'copy' | 'paste' | 'cut' | 'selectAll' | 'undo' | 'redo' | 'togglefullscreen' | 'resetZoom' | 'zoomIn' | 'zoomOut' | 'minimize' | 'close' | 'about';
  accelerator?: string;
  type?: 'normal' | 'separator' | 'submenu';
  enabled?: boolean;
  click?: () => void;
  submenu?: MenuItemLike[];
}

export interface OpenDialogResultLike { canceled: boolean; filePaths: string[] }
export interface SaveDialogResultLike { canceled: boolean; filePath?: string }
export interface FileFilterLike { name: string; extensions: string[] }

export interface ElectronApi {
  app: {
    whenReady(): Promise<unknown>;
    on(event: 'web-contents-created', listener: (event: unknown, contents: WebContentsLike) => void): unknown;
    on(event: 'window-all-closed', listener: () => void): unknown;
    on(event: 'before-quit', listener: (event: PreventableEvent) => void): unknown;
    quit(): void;
  };
  protocol: {
    registerSchemesAsPrivileged(schemes: { scheme: string; privileges: { standard?: boolean; secure?: boolean; supportFetchAPI?: boolean; corsEnabled?: boolean; stream?: boolean } }[]): void;
    handle(scheme: string, handler: (request: Request) => Response | Promise<Response>): void;
  };
  session: { readonly defaultSession: SessionLike };
  ipcMain: {
    handle(channel: string, listener: (event: IpcInvokeEventLike, ...args: unknown[]) => unknown): void;
  };
  Menu: {
    buildFromTemplate(template: MenuItemLike[]): unknown;
    setApplicationMenu(menu: unknown): void;
  };
  dialog: {
    showOpenDialog(options: { title: string; properties: ('openFile')[]; filters: FileFilterLike[]; defaultPath?: string }): Promise<OpenDialogResultLike>;
    showSaveDialog(options: { title: string; defaultPath: string; filters: FileFilterLike[] }): Promise<SaveDialogResultLike>;
  };
  BrowserWindow: new (options: BrowserWindowOptionsLike) => BrowserWindowLike;
}
