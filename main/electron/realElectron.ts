// The real Electron module must satisfy the shell's own interface (checked by tsc only).
import * as electron from 'electron';
import type { ElectronApi } from './electronApi';

export const electronApi = (): ElectronApi => ({
  app: electron.app,
  protocol: electron.protocol,
  session: electron.session,
  ipcMain: electron.ipcMain,
  Menu: electron.Menu,
  dialog: electron.dialog,
  BrowserWindow: electron.BrowserWindow,
});
