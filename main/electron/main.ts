/**
 * The Electron main process: the bench service (simulated instrument by default) and
 * the shell around it. Bundled with esbuild into dist/electron/main.cjs by
 * main/electronEntry.cjs, which Electron loads (package.json "main").
 * Settings come from the environment set by `rateline start`: RATELINE_DATA_DIR,
 * RATELINE_SPEED.
 */
import { app } from 'electron';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { createBenchService, defaultDataDir, DEFAULT_SPEED } from '../bench/benchWiring';
import { electronApi } from './realElectron';
import { nativeDialogs, startShell } from './shell';

const api = electronApi();
const root = app.getAppPath();
const dataDir = defaultDataDir(process.env.RATELINE_DATA_DIR ?? null);
const speed = Number(process.env.RATELINE_SPEED ?? DEFAULT_SPEED);
const service = createBenchService({
  host: 'electron', dataDir, speed: Number.isFinite(speed) && speed >= 0.1 && speed <= 10_000 ? speed : DEFAULT_SPEED,
  dialogs: nativeDialogs(api.dialog, dataDir),
});

const rendererDir = join(root, 'dist', 'renderer');
if (!existsSync(join(rendererDir, 'index.html'))) {
  console.error('rateline: the screens are not built; run "npm start" (it builds them) or "npm run build:renderer".');
}

let disposed = false;
app.on('before-quit', (event) => {
  if (disposed) return;
  // Close the run's record properly before the process goes.
  event.preventDefault();
  void service.dispose().finally(() => {
    disposed = true;
    app.quit();
  });
});

startShell(api, {
  service, rendererDir, preloadPath: join(root, 'dist', 'electron', 'preload.cjs'), isMac: process.platform === 'darwin',
}).catch((err: unknown) => {
  console.error(`rateline: the window could not be opened (${err instanceof Error ? err.message : String(err)}).`);
  app.quit();
});
