// Bundles the Electron main process and the preload with esbuild (installed with tsx),
// so Electron loads plain CommonJS: the sandboxed preload cannot load TypeScript or
// modules from disk, and one main bundle starts faster than compiling TS on each launch.
// Used by main/electronEntry.cjs (before Electron loads the app), by `rateline start`,
// and by the build step the package is made from (build/buildApp.ts, `npm run build`):
// the same bundles in development and in a package.
'use strict';
const path = require('node:path');

/** Builds dist/electron/{main,preload}.cjs (or into `outDir`) from the sources; returns their paths. */
function bundleShell(root, outDir = path.join(root, 'dist', 'electron')) {
  const esbuild = require('esbuild');
  const common = {
    bundle: true, platform: 'node', format: 'cjs', target: 'node20', logLevel: 'error',
    sourcemap: 'inline', absWorkingDir: root,
  };
  const main = path.join(outDir, 'main.cjs');
  const preload = path.join(outDir, 'preload.cjs');
  esbuild.buildSync({
    ...common, entryPoints: [path.join(root, 'main', 'electron', 'main.ts')], outfile: main,
    // Native or ESM-only packages stay outside the bundle and load from node_modules.
    external: ['electron', 'serialport', '@serialport/*', 'vite', 'bufferutil', 'utf-8-validate'],
  });
  esbuild.buildSync({
    ...common, entryPoints: [path.join(root, 'main', 'electron', 'preload.ts')], outfile: preload, external: ['electron'],
  });
  return { main, preload };
}

module.exports = { bundleShell };
