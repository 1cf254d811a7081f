// How Rateline is packaged (electron-builder; `npm run dist`). The package holds what
// `npm run build` made and nothing else: the screens (dist/renderer/), the main process
// and preload bundles (dist/electron/), and the few node_modules the main bundle loads at
// run time (serialport and what it needs). No TypeScript is compiled at launch: the
// packaged package.json names the bundle as "main", not main/electronEntry.cjs.
// test/packaging.test.ts checks this file and, with a stand-in for the Electron runtime,
// what electron-builder packs from it.
'use strict';
const fs = require('node:fs');
const path = require('node:path');

const ROOT = path.join(__dirname, '..');

/**
 * What the main bundle requires from node_modules (main/electron/bundle.cjs keeps them
 * external); test/packaging.test.ts fails when the bundle requires another.
 */
const RUNTIME_PACKAGES = ['serialport', '@serialport/parser-readline'];

/** serialport's native part: N-API prebuilds, loaded by node-gyp-build, so they must be real files on disk. */
const NATIVE_PREBUILDS = 'node_modules/@serialport/bindings-cpp/prebuilds';

/** Node's lookup of `name` from a package in `fromDir`: its own node_modules, then each parent's, up to the project. */
function installedPackageDir(name, fromDir) {
  for (let dir = fromDir; ; dir = path.dirname(dir)) {
    const candidate = path.join(dir, 'node_modules', name);
    if (fs.existsSync(path.join(candidate, 'package.json'))) return candidate;
    if (path.relative(ROOT, dir) === '' || dir === path.dirname(dir)) return null;
  }
}

/** The names of `names` and of every package they depend on, as installed (Node's lookup). */
function installedClosure(names) {
  const seen = new Set();
  const found = new Set();
  const visit = (name, fromDir, optional) => {
    const dir = installedPackageDir(name, fromDir);
    if (dir === null) {
      if (optional) return;
      throw new Error(`packaging: ${name} (needed from ${path.relative(ROOT, fromDir) || 'the project'}) is not installed; run "npm ci" first.`);
    }
    if (seen.has(dir)) return;
    seen.add(dir);
    found.add(name);
    const pkg = JSON.parse(fs.readFileSync(path.join(dir, 'package.json'), 'utf8'));
    for (const dep of Object.keys(pkg.dependencies ?? {})) visit(dep, dir, false);
    for (const dep of Object.keys(pkg.optionalDependencies ?? {})) visit(dep, dir, true);
  };
  for (const name of names) visit(name, ROOT, false);
  return found;
}

/**
 * electron-builder copies every production dependency (hoisting them in its own way)
 * and filters node_modules by exclusions only, so the command's own dependencies (vite,
 * esbuild, tsx, ws, and the screens' libraries that vite has bundled) are excluded by
 * name, wherever they land: every production package outside the run-time closure.
 */
function nodeModulesLeftOut() {
  const rootPkg = JSON.parse(fs.readFileSync(path.join(ROOT, 'package.json'), 'utf8'));
  const kept = installedClosure(RUNTIME_PACKAGES);
  return [...installedClosure(Object.keys(rootPkg.dependencies ?? {}))].filter((name) => !kept.has(name)).sort();
}

/**
 * What goes into app.asar. With `os` (`linux`, `win32`, `darwin`), serialport's prebuilds
 * for other operating systems are left out; electron-builder takes a platform's `files`
 * instead of the top-level list, not beside it, so each platform names the whole list.
 */
function appFiles(os) {
  appFiles.leftOut ??= nodeModulesLeftOut();
  return [
    'package.json',
    'dist/electron/main.cjs',
    'dist/electron/preload.cjs',
    'dist/renderer/**/*',
    '!dist/renderer/**/*.map',
    ...appFiles.leftOut.map((name) => `!**/node_modules/${name}{,/**/*}`),
    ...(os ? [`!${NATIVE_PREBUILDS}/!(${os}-*){,/**/*}`] : []),
  ];
}

/** @type {import('electron-builder').Configuration} */
const config = {
  appId: 'org.rateline.desktop',
  productName: 'Rateline',
  copyright: 'Copyright © Rateline contributors (MIT licence)',
  directories: { output: 'out', buildResources: 'build' },
  artifactName: '${productName}-${version}-${arch}.${ext}',

  files: appFiles(),
  extraMetadata: { main: 'dist/electron/main.cjs' },

  asar: true,
  // The native module must be a real file for the operating system to load it.
  asarUnpack: [`${NATIVE_PREBUILDS}/**/*`],
  // serialport's N-API prebuilds serve Electron as they are; @electron/rebuild would
  // also ask for a newer Node than we build with.
  npmRebuild: false,
  nodeGypRebuild: false,
  buildDependenciesFromSource: false,

  // Electron's fuses, flipped in the packaged binary: no running as plain Node, no
  // NODE_OPTIONS or --inspect, the app only from app.asar, and the archive's hash
  // checked at start where Electron supports it (macOS and Windows; Linux ignores it).
  // The screens come from rateline://app/, so file:// needs no extra privileges.
  electronFuses: {
    runAsNode: false,
    enableNodeOptionsEnvironmentVariable: false,
    enableNodeCliInspectArguments: false,
    onlyLoadAppFromAsar: true,
    enableEmbeddedAsarIntegrityValidation: true,
    grantFileProtocolExtraPrivileges: false,
  },

  linux: {
    target: ['AppImage', 'deb'],
    files: appFiles('linux'),
    executableName: 'rateline',
    category: 'Science',
    synopsis: 'Absorbance kinetics at the bench',
    maintainer: 'Rateline contributors',
  },
  win: {
    target: ['nsis'],
    files: appFiles('win32'),
    // Signing: WIN_CSC_LINK and WIN_CSC_KEY_PASSWORD (a .pfx), or azureSignOptions here (README.md, "Packaging").
  },
  nsis: {
    oneClick: false,
    perMachine: false,
    allowToChangeInstallationDirectory: true,
  },
  mac: {
    // dmg is built only on macOS. Signing: CSC_LINK and CSC_KEY_PASSWORD, or a Developer ID
    // identity in the keychain; notarisation runs when APPLE_* credentials are in the
    // environment (README.md, "Packaging").
    target: ['dmg'],
    files: appFiles('darwin'),
    category: 'public.app-category.education',
    hardenedRuntime: true,
  },
};

module.exports = config;
