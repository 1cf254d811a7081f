// The screen's build: vite from renderer/ into dist/renderer/, with a relative base
// so the same files load from file:// in Electron and from the loopback web host.
import { defineConfig } from 'vite';
import { fileURLToPath } from 'node:url';

export default defineConfig({
  root: fileURLToPath(new URL('.', import.meta.url)),
  base: './',
  build: {
    outDir: fileURLToPath(new URL('../dist/renderer', import.meta.url)),
    emptyOutDir: true,
    target: 'es2022',
    sourcemap: true,
    // One chunk: the screen is small, and the Electron CSP allows scripts from 'self' only.
    assetsInlineLimit: 0,
  },
});
