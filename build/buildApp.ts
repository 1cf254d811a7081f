/**
 * The build step a package is made from (`npm run build`; `npm run dist` runs it before
 * electron-builder): the screens with vite into dist/renderer/, then the Electron main
 * process and preload with esbuild into dist/electron/ (main/electron/bundle.cjs, the
 * same bundler `npm start` uses). build/electron-builder.config.cjs packs these files.
 * `outRoot` puts dist/ elsewhere (the packaging test builds into a scratch project).
 */
import { createRequire } from 'node:module';
import { dirname, join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';

export interface AppBuild {
  rendererDir: string;
  main: string;
  preload: string;
}

const PROJECT_ROOT = join(dirname(fileURLToPath(import.meta.url)), '..');

export async function buildApp(root: string = PROJECT_ROOT, outRoot: string = root): Promise<AppBuild> {
  const rendererDir = join(outRoot, 'dist', 'renderer');
  const { build } = await import('vite');
  await build({ configFile: join(root, 'renderer', 'vite.config.ts'), logLevel: 'warn', build: { outDir: rendererDir } });
  const { bundleShell } = createRequire(import.meta.url)(join(root, 'main', 'electron', 'bundle.cjs')) as {
    bundleShell(root: string, outDir?: string): { main: string; preload: string };
  };
  const { main, preload } = bundleShell(root, join(outRoot, 'dist', 'electron'));
  return { rendererDir, main, preload };
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  try {
    const built = await buildApp();
    for (const p of [built.rendererDir, built.main, built.preload]) console.log(`built ${relative(process.cwd(), p)}`);
  } catch (err) {
    console.error(`build: the app could not be built (${String((err as Error).message).split('\n')[0]}).`);
    process.exitCode = 1;
  }
}
