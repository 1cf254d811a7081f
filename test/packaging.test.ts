/**
 * The packaging configuration (build/electron-builder.config.cjs) and what
 * electron-builder packs from it, without the network.
 *
 * The Electron runtime is downloaded when packaging, which these machines cannot do, so
 * electron-builder packs for Linux as an unpacked directory (`--linux dir`) around a
 * stand-in runtime: an inert file carrying Electron's fuse wire, so the fuses that
 * electron-builder flips can be read back. The build step (build/buildApp.ts) builds into
 * a scratch app folder, so the project's own dist/ is left to the other tests; node_modules
 * come from the project as in `npm run dist`. Any download would go to a closed proxy port
 * and fail. The archive is read with our own reader (test/asarArchive.ts), not the
 * library that wrote it, and the packaged app is started from its extracted files with a
 * fake `electron` module: the bundle, the screens and the native serial module it loads
 * must all be in the package.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { builtinModules, createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join, relative } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildApp, type AppBuild } from '../build/buildApp';
import { openAsar, type AsarArchive } from './asarArchive';

const ROOT = join(import.meta.dirname, '..');
const CONFIG_FILE = join(ROOT, 'build', 'electron-builder.config.cjs');
const NATIVE_PREBUILDS = 'node_modules/@serialport/bindings-cpp/prebuilds';
/** Packages the `rateline` command needs and the packaged app must not carry. */
const COMMAND_ONLY = ['vite', 'esbuild', 'tsx', 'ws', 'zod', 'immer', 'uplot', 'electron', 'electron-builder', 'playwright-core'];

interface BuilderConfig {
  files: string[];
  extraMetadata: { main: string };
  asar: boolean;
  asarUnpack: string[];
  npmRebuild: boolean;
  nodeGypRebuild: boolean;
  buildDependenciesFromSource: boolean;
  electronFuses: Record<string, boolean>;
  linux: { target: string[]; executableName: string; files: string[] };
  win: { target: string[]; files: string[] };
  mac: { target: string[]; files: string[] };
  directories: { output: string; buildResources: string };
}
const config = createRequire(import.meta.url)(CONFIG_FILE) as BuilderConfig;

// Electron's fuse wire (from memory, as @electron/fuses documents it): a sentinel, a
// version byte (1), a length byte, then one byte per fuse, '0' off and '1' on, in this order.
const FUSE_SENTINEL = 'dL7pKGdnNz796PbbjQWNKmHXBZaB9tsX';
const FUSES = ['runAsNode', 'enableCookieEncryption', 'enableNodeOptionsEnvironmentVariable', 'enableNodeCliInspectArguments',
  'enableEmbeddedAsarIntegrityValidation', 'onlyLoadAppFromAsar', 'loadBrowserProcessSpecificV8Snapshot', 'grantFileProtocolExtraPrivileges'] as const;
/** The stand-in starts as a stock Electron does (from memory): run-as-node, NODE_OPTIONS, --inspect and file:// privileges on. */
const STOCK_WIRE = '10110001';

/** The fuse states in an Electron binary, by name; throws when it carries no wire. */
function readFuses(binary: Buffer): Record<string, boolean> {
  const at = binary.indexOf(FUSE_SENTINEL);
  if (at < 0) throw new Error('no fuse wire in the binary');
  const wire = at + FUSE_SENTINEL.length;
  if (binary[wire] !== 1) throw new Error(`fuse wire version ${binary[wire]}, expected 1`);
  const states: Record<string, boolean> = {};
  for (let i = 0; i < binary[wire + 1]!; i++) states[FUSES[i] ?? `fuse${i}`] = binary[wire + 2 + i] === 0x31;
  return states;
}

/** Where the fuses differ from what the configuration asks for (fuses it leaves alone must keep `stock`). */
function fuseProblems(states: Record<string, boolean>, stock: Record<string, boolean>): string[] {
  const wanted = { ...stock, ...config.electronFuses };
  return FUSES.filter((f) => states[f] !== wanted[f]).map((f) => `${f} is ${states[f] ? 'on' : 'off'}, the configuration asks ${wanted[f] ? 'on' : 'off'}`);
}

/** name@version of every package under `roots` in npm's own dependency tree of the project's production dependencies. */
function npmRuntimeClosure(roots: string[]): Set<string> {
  const r = spawnSync('npm', ['ls', '--all', '--omit=dev', '--json'], { cwd: ROOT, encoding: 'utf8', timeout: 60_000, env: { ...process.env, npm_config_offline: 'true' } });
  interface Node { version?: string; dependencies?: Record<string, Node> }
  const tree = JSON.parse(r.stdout) as Node;
  // npm prints a package's dependencies once and marks later sightings deduped (version only): gather them all first.
  const children = new Map<string, Set<string>>();
  const gather = (node: Node): void => {
    for (const [name, child] of Object.entries(node.dependencies ?? {})) {
      const id = `${name}@${child.version}`;
      const kids = children.get(id) ?? new Set<string>();
      for (const [n, c] of Object.entries(child.dependencies ?? {})) kids.add(`${n}@${c.version}`);
      children.set(id, kids);
      gather(child);
    }
  };
  gather(tree);
  const closure = new Set<string>();
  const visit = (id: string): void => {
    if (closure.has(id)) return;
    closure.add(id);
    for (const k of children.get(id) ?? []) visit(k);
  };
  for (const name of roots) visit(`${name}@${tree.dependencies?.[name]?.version}`);
  return closure;
}

/** name@version of every package in the archive's node_modules. */
function packedPackages(archive: AsarArchive): Set<string> {
  const ids = new Set<string>();
  for (const f of archive.files) {
    if (!/(^|\/)node_modules\/(@[^/]+\/)?[^/@]+\/package\.json$/.test(f.path)) continue;
    const pkg = JSON.parse(archive.read(f.path).toString('utf8')) as { name: string; version: string };
    ids.add(`${pkg.name}@${pkg.version}`);
  }
  return ids;
}

/** The packages a CommonJS bundle requires that are neither Node built-ins nor Electron. */
function bundleExternals(bundle: string): string[] {
  const builtins = new Set(builtinModules.flatMap((m) => [m, `node:${m}`]));
  const names = [...bundle.matchAll(/\brequire\("([^"]+)"\)/g)].map((m) => m[1]!);
  return [...new Set(names.filter((n) => !builtins.has(n) && n !== 'electron'))].sort();
}

/** Starts the packaged main bundle from `appDir` in plain Node, `require('electron')` answered by a fake. */
function launchPackagedApp(appDir: string, scratch: string): { status: number | null; stdout: string; stderr: string } {
  const script = join(scratch, 'launch.cjs');
  writeFileSync(script, `
    const Module = require('node:module');
    const out = (s) => process.stdout.write(s + '\\n');
    const noop = () => {};
    const fake = {
      app: { getAppPath: () => ${JSON.stringify(appDir)}, whenReady: async () => {}, on: noop, quit: noop },
      protocol: { registerSchemesAsPrivileged: noop, handle: noop },
      session: { defaultSession: { setPermissionRequestHandler: noop, setPermissionCheckHandler: noop } },
      ipcMain: { handle: noop },
      Menu: { buildFromTemplate: (t) => t, setApplicationMenu: noop },
      dialog: {},
      BrowserWindow: class {
        constructor(o) { out('preload ' + o.webPreferences.preload); this.webContents = { on: noop, setWindowOpenHandler: noop, send: noop, isDestroyed: () => false }; }
        async loadURL(u) { out('load ' + u); setTimeout(() => process.exit(0), 50); }
        once() {} on() {} show() {}
      },
    };
    const load = Module._load;
    Module._load = function (request, ...rest) { return request === 'electron' ? fake : load.call(this, request, ...rest); };
    // Electron loads the app folder's package.json "main".
    require(${JSON.stringify(appDir)});
  `);
  const env: NodeJS.ProcessEnv = { ...process.env, RATELINE_DATA_DIR: join(scratch, 'runs') };
  delete env.NODE_PATH;
  const r = spawnSync(process.execPath, [script], { cwd: scratch, encoding: 'utf8', timeout: 30_000, env });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

let scratch: string;
let built: AppBuild;
let appOutDir: string;
let archive: AsarArchive;
let builderRun: { status: number | null; output: string };

beforeAll(async () => {
  scratch = mkdtempSync(join(tmpdir(), 'rateline-packaging-'));
  const appDir = join(scratch, 'app');
  mkdirSync(appDir);
  cpSync(join(ROOT, 'package.json'), join(appDir, 'package.json'));
  // Decoys: the sources and the development entry lie beside dist/ as in the project, so a
  // configuration that packed more than the build's output would pack them too.
  for (const f of ['main', 'build', 'README.md', 'tsconfig.json']) cpSync(join(ROOT, f), join(appDir, f), { recursive: true });
  built = await buildApp(ROOT, appDir);

  const runtime = join(scratch, 'electron-stand-in');
  mkdirSync(runtime);
  writeFileSync(join(runtime, 'electron'), Buffer.concat([
    Buffer.from('stand-in for the Electron runtime, for the packaging test only\n'),
    Buffer.from(FUSE_SENTINEL), Buffer.from([1, STOCK_WIRE.length]), Buffer.from(STOCK_WIRE), Buffer.from('\n'),
  ]), { mode: 0o755 });
  writeFileSync(join(runtime, 'LICENSE'), 'stand-in\n');

  const out = join(scratch, 'out');
  const closedPort = 'http://127.0.0.1:9';
  const r = spawnSync(process.execPath, [
    join(ROOT, 'node_modules', 'electron-builder', 'cli.js'),
    '--config', relative(ROOT, CONFIG_FILE), '--linux', 'dir', '--publish', 'never',
    `-c.electronDist=${runtime}`, `-c.directories.output=${out}`, `-c.directories.app=${appDir}`,
  ], {
    cwd: ROOT, encoding: 'utf8', timeout: 240_000,
    env: {
      ...process.env, HTTPS_PROXY: closedPort, HTTP_PROXY: closedPort, https_proxy: closedPort, http_proxy: closedPort, NO_PROXY: '', no_proxy: '',
      npm_config_offline: 'true', ELECTRON_BUILDER_CACHE: join(scratch, 'cache'), ELECTRON_CACHE: join(scratch, 'cache'),
    },
  });
  builderRun = { status: r.status, output: `${r.stdout}\n${r.stderr}` };
  appOutDir = join(out, 'linux-unpacked');
  if (r.status === 0) archive = openAsar(join(appOutDir, 'resources', 'app.asar'));
}, 300_000);

afterAll(() => { if (scratch && !process.env.KEEP_PACKAGING) rmSync(scratch, { recursive: true, force: true }); });

describe('the packaging configuration', () => {
  it('builds AppImage and deb on Linux, NSIS on Windows and dmg on macOS', () => {
    expect(config.linux.target).toEqual(['AppImage', 'deb']);
    expect(config.win.target).toEqual(['nsis']);
    expect(config.mac.target).toEqual(['dmg']);
  });

  it('gives each operating system the same files and only its own serialport prebuilds', () => {
    // A platform's `files` replaces the top-level list, so each must repeat it whole.
    const plus = (os: string): string[] => [...config.files, `!${NATIVE_PREBUILDS}/!(${os}-*){,/**/*}`];
    expect(config.linux.files).toEqual(plus('linux'));
    expect(config.win.files).toEqual(plus('win32'));
    expect(config.mac.files).toEqual(plus('darwin'));
  });

  it('rebuilds no native module (serialport ships N-API prebuilds)', () => {
    expect(config.npmRebuild).toBe(false);
    expect(config.nodeGypRebuild).toBe(false);
    expect(config.buildDependenciesFromSource).toBe(false);
  });

  it('sets the fuses: no run-as-node, no NODE_OPTIONS or --inspect, the app only from the checked archive', () => {
    expect(config.electronFuses).toMatchObject({
      runAsNode: false, enableNodeOptionsEnvironmentVariable: false, enableNodeCliInspectArguments: false,
      onlyLoadAppFromAsar: true, enableEmbeddedAsarIntegrityValidation: true,
    });
    expect(config.asar).toBe(true);
  });

  it('is what `npm run dist` packs with, after the build step', () => {
    const scripts = (JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')) as { scripts: Record<string, string> }).scripts;
    expect(scripts.build).toBe('tsx build/buildApp.ts');
    expect(scripts.dist).toMatch(/^npm run build && electron-builder --config build\/electron-builder\.config\.cjs\b/);
  });

  it('has icons of our own in build/: a square PNG of at least 512 px and a Windows .ico with a 256 px image', () => {
    const png = readFileSync(join(ROOT, 'build', 'icon.png'));
    expect(png.subarray(1, 4).toString('latin1')).toBe('PNG');
    const [w, h] = [png.readUInt32BE(16), png.readUInt32BE(20)];
    expect(w).toBe(h);
    expect(w).toBeGreaterThanOrEqual(512);
    const ico = readFileSync(join(ROOT, 'build', 'icon.ico'));
    expect([ico.readUInt16LE(0), ico.readUInt16LE(2)]).toEqual([0, 1]);
    const sizes = Array.from({ length: ico.readUInt16LE(4) }, (_, i) => ico[6 + 16 * i] || 256);
    expect(sizes).toContain(256);
    expect(readFileSync(join(ROOT, 'build', 'icon.svg'), 'utf8')).toMatch(/^<svg /);
  });
});

describe('what electron-builder packs from it (Linux, unpacked, stand-in runtime)', () => {
  it('packs without the network', () => {
    expect(builderRun.status, builderRun.output).toBe(0);
  });

  it('packs exactly the build step\'s output and the package.json that names the bundle as main', () => {
    const own = archive.files.map((f) => f.path).filter((p) => !p.startsWith('node_modules/')).sort();
    const renderer = (readdirSync(built.rendererDir, { recursive: true, withFileTypes: true }))
      .filter((e) => e.isFile() && !e.name.endsWith('.map'))
      .map((e) => relative(join(built.rendererDir, '..', '..'), join(e.parentPath, e.name)).split('\\').join('/'));
    expect(own).toEqual(['dist/electron/main.cjs', 'dist/electron/preload.cjs', ...renderer, 'package.json'].sort());
    expect(renderer).toContain('dist/renderer/index.html');
    expect(archive.read('dist/electron/main.cjs').equals(readFileSync(built.main))).toBe(true);
    expect(archive.read('dist/electron/preload.cjs').equals(readFileSync(built.preload))).toBe(true);
    const pkg = JSON.parse(archive.read('package.json').toString('utf8')) as { main: string; scripts?: unknown };
    expect(pkg.main).toBe('dist/electron/main.cjs');
    expect(pkg.main).toBe(config.extraMetadata.main);
    // Nothing that compiles at launch: no sources, no development entry.
    expect(archive.files.filter((f) => /\.(ts|tsx|mts)$/.test(f.path) && !f.path.endsWith('.d.ts')).map((f) => f.path)).toEqual([]);
    expect(own).not.toContain('main/electronEntry.cjs');
  });

  it('packs the node_modules the main bundle requires and their dependencies, as npm resolves them, and nothing else', () => {
    const externals = bundleExternals(readFileSync(built.main, 'utf8'));
    expect(externals).toContain('serialport');
    const packed = packedPackages(archive);
    expect([...packed].sort()).toEqual([...npmRuntimeClosure(externals)].sort());
    expect([...packed].filter((id) => COMMAND_ONLY.includes(id.slice(0, id.lastIndexOf('@'))))).toEqual([]);
  });

  it('leaves serialport\'s native module for Linux unpacked beside the archive, and no other system\'s', () => {
    const prebuilds = archive.files.filter((f) => f.path.startsWith(`${NATIVE_PREBUILDS}/`));
    const here = prebuilds.filter((f) => f.path.startsWith(`${NATIVE_PREBUILDS}/linux-${process.arch}/`) && f.path.endsWith('.node'));
    expect(here.length).toBeGreaterThan(0);
    expect(prebuilds.filter((f) => !f.unpacked)).toEqual([]);
    for (const f of here) expect(existsSync(join(appOutDir, 'resources', 'app.asar.unpacked', ...f.path.split('/'))), f.path).toBe(true);
    const platforms = new Set(prebuilds.map((f) => f.path.slice(NATIVE_PREBUILDS.length + 1).split('/')[0]!));
    expect([...platforms].filter((p) => !p.startsWith('linux-'))).toEqual([]);
  });

  it('flips the fuses in the packaged binary as the configuration says, and leaves the others as they came', () => {
    const stock = readFuses(readFileSync(join(scratch, 'electron-stand-in', 'electron')));
    const packaged = readFuses(readFileSync(join(appOutDir, config.linux.executableName)));
    expect(fuseProblems(packaged, stock)).toEqual([]);
    // Negative control: the stand-in as it came (stock fuses) must fail the same check.
    expect(fuseProblems(stock, stock)).toHaveLength(6);
  });

  it('starts from its own files: the packaged bundle opens the window with the packaged preload and loads serialport from the package', () => {
    const extracted = join(scratch, 'extracted');
    archive.extractTo(extracted);
    const r = launchPackagedApp(extracted, scratch);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    expect(r.stdout.split('\n')).toEqual(expect.arrayContaining([
      `preload ${join(extracted, 'dist', 'electron', 'preload.cjs')}`, 'load rateline://app/index.html',
    ]));
    // Negative control: without the unpacked native module the same start must fail.
    rmSync(join(extracted, ...NATIVE_PREBUILDS.split('/')), { recursive: true, force: true });
    const broken = launchPackagedApp(extracted, scratch);
    expect(broken.status).not.toBe(0);
    expect(broken.stderr).toMatch(/No native build was found/);
  });
});
