/**
 * `rateline start` (npm start): the desktop app, with the simulated instrument as the
 * default source. The Electron runtime is fetched on first launch (install scripts are
 * off, so npm never fetched it): when it is missing we run electron's own install.js
 * once; if the runtime is still missing (no network, an unsupported platform), we say
 * so in one line and serve the same screens on the loopback web host instead.
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { defaultDataDir } from '../../bench/benchWiring';
import { ensureRendererBuilt } from '../../web/rendererBuild';
import { InputError } from '../common/cliErrors';
import { PROJECT_ROOT, parseServeArgs, serve, type ServeOptions } from './serve';

const INSTALL_TIMEOUT_MS = 5 * 60_000;

/** The Electron executable if its runtime is installed, else null (read afresh, not from require's cache). */
export function electronBinary(root: string): string | null {
  const pkg = join(root, 'node_modules', 'electron');
  const pathFile = join(pkg, 'path.txt');
  if (!existsSync(pathFile)) return null;
  const exe = process.env.ELECTRON_OVERRIDE_DIST_PATH
    ? join(process.env.ELECTRON_OVERRIDE_DIST_PATH, readFileSync(pathFile, 'utf8'))
    : join(pkg, 'dist', readFileSync(pathFile, 'utf8'));
  return existsSync(exe) ? exe : null;
}

/** Runs electron's own install.js (it downloads the runtime); true when it exited cleanly. */
export function installElectronRuntime(root: string): boolean {
  const script = join(root, 'node_modules', 'electron', 'install.js');
  if (!existsSync(script)) return false;
  const r = spawnSync(process.execPath, [script], { cwd: root, stdio: 'ignore', timeout: INSTALL_TIMEOUT_MS });
  return r.status === 0;
}

export interface StartDeps {
  root: string;
  electronBinary(root: string): string | null;
  installRuntime(root: string): boolean;
  /** Launch Electron on the app; resolves to its exit code. */
  launch(binary: string, o: ServeOptions): Promise<number>;
  serve(o: ServeOptions): Promise<number>;
  buildScreens(): Promise<void>;
  say(line: string): void;
}

export async function launchElectron(binary: string, o: ServeOptions, root = PROJECT_ROOT): Promise<number> {
  // Bundle the main process and the preload before Electron loads them (see main/electron/bundle.cjs).
  const { bundleShell } = createRequire(import.meta.url)(join(root, 'main', 'electron', 'bundle.cjs')) as { bundleShell(root: string): unknown };
  bundleShell(root);
  const env: NodeJS.ProcessEnv = { ...process.env, RATELINE_DATA_DIR: defaultDataDir(o.dataDir), RATELINE_SPEED: String(o.speed) };
  delete env.ELECTRON_RUN_AS_NODE;
  const child = spawn(binary, [root], { cwd: root, env, stdio: 'inherit' });
  const forward = (signal: NodeJS.Signals): void => { child.kill(signal); };
  process.on('SIGINT', forward);
  process.on('SIGTERM', forward);
  return new Promise<number>((resolve) => {
    child.on('error', (err) => {
      resolve(1);
      console.error(`rateline start: Electron could not be started (${err.message}).`);
    });
    child.on('exit', (code) => {
      process.off('SIGINT', forward);
      process.off('SIGTERM', forward);
      resolve(code ?? 0);
    });
  });
}

export async function start(o: ServeOptions, deps: StartDeps): Promise<number> {
  if (o.build) {
    try {
      await deps.buildScreens();
    } catch (err) {
      throw new InputError(`rateline start: the screens could not be built (${String((err as Error).message).split('\n')[0]}); run "npm run build:renderer" to see why.`);
    }
  }
  let binary = deps.electronBinary(deps.root);
  if (!binary) {
    deps.installRuntime(deps.root);
    binary = deps.electronBinary(deps.root);
  }
  if (binary) return deps.launch(binary, o);
  deps.say('rateline start: the Electron runtime is not installed and could not be fetched, so Rateline opens on the loopback web host instead.');
  // The screens were just built (or --no-build was asked for): serve them as they are.
  return deps.serve({ ...o, build: false });
}

export async function run(argv: string[]): Promise<number> {
  const o = parseServeArgs(argv, 'start');
  if (o === 'help') {
    console.log('usage: rateline start [--data-dir DIR] [--speed X] [--port N] [--no-build]\n' +
      '  the desktop app; without the Electron runtime, the loopback web host on --port (see "rateline serve --help")');
    return 0;
  }
  return start(o, {
    root: PROJECT_ROOT,
    electronBinary,
    installRuntime: installElectronRuntime,
    launch: (binary, opts) => launchElectron(binary, opts),
    serve: (opts) => serve(opts),
    buildScreens: async () => { await ensureRendererBuilt(PROJECT_ROOT, (l) => console.log(l)); },
    say: (l) => console.log(l),
  });
}
