/**
 * `rateline serve [--port N] [--data-dir D] [--speed X] [--no-build]`: the screens on the
 * loopback web host, for a browser on this computer. Runs until Ctrl-C or SIGTERM, then
 * closes any run cleanly (its record ends properly).
 */
import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createBenchService, defaultDataDir, DEFAULT_SPEED } from '../../bench/benchWiring';
import { ensureRunsFolder } from '../../bench/runsFolder';
import { ensureRendererBuilt, rendererBuildReason, rendererOutDir } from '../../web/rendererBuild';
import { startWebHost } from '../../webHost';
import { InputError } from '../common/cliErrors';
import { parseCommandArguments } from '../common/arguments';

export const DEFAULT_PORT = 4180;
/**
 * The project folder: the nearest one above this module that holds package.json. The
 * module runs from main/cli/commands/ (tests) or from a chunk of the command's bundle in
 * dist/cli/ (bin/commandBundle.js), so a fixed number of '..' would fit only one of them.
 */
export const PROJECT_ROOT = (() => {
  let dir = dirname(fileURLToPath(import.meta.url));
  while (!existsSync(join(dir, 'package.json')) && dirname(dir) !== dir) dir = dirname(dir);
  return dir;
})();

export interface ServeOptions {
  port: number;
  dataDir: string | null;
  speed: number;
  build: boolean;
}

const USAGE = `usage: rateline serve [--port N] [--data-dir DIR] [--speed X] [--no-build]
  --port N       port on 127.0.0.1 (default ${DEFAULT_PORT}; 0 picks a free one)
  --data-dir DIR runs folder for records (default ~/Rateline/runs, or RATELINE_DATA_DIR)
  --speed X      speed of the simulated instrument, 0.1 to 10000 (default ${DEFAULT_SPEED})
  --no-build     serve dist/renderer/ as it is, without building the screens`;

export function parseServeArgs(argv: string[], command = 'serve'): ServeOptions | 'help' {
  const args = parseCommandArguments(command, argv, { port: 'value', 'data-dir': 'value', speed: 'value', 'no-build': 'flag' });
  if (args.help) return 'help';
  if (args.positionals.length > 0) throw new InputError(`rateline ${command}: unexpected argument "${args.positionals[0]}"; run "rateline ${command} --help" for the options.`);
  return {
    port: args.number('port', (x) => Number.isInteger(x) && x >= 0 && x <= 65535, 'a port number from 0 to 65535') ?? DEFAULT_PORT,
    dataDir: args.value('data-dir') ?? null,
    speed: args.number('speed', (x) => x >= 0.1 && x <= 10_000, 'a speed from 0.1 to 10000') ?? DEFAULT_SPEED,
    build: !args.flag('no-build'),
  };
}

/** Starts the service and the host; resolves when a signal closes them. */
export async function serve(o: ServeOptions, banner: (line: string) => void = (l) => console.log(l)): Promise<number> {
  const dataDir = defaultDataDir(o.dataDir);
  try {
    await ensureRunsFolder(dataDir);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    const why = code === 'EEXIST' || code === 'ENOTDIR' ? 'a file of that name is in the way'
      : code === 'EACCES' || code === 'EPERM' ? 'no permission to create it there'
        : code === 'EROFS' ? 'the disk is read-only'
          : (err as Error).message;
    throw new InputError(`rateline serve: cannot create the runs folder ${dataDir} (${why}); give another with --data-dir.`);
  }
  let staticDir: string | null = rendererOutDir(PROJECT_ROOT);
  if (o.build) {
    try {
      staticDir = await ensureRendererBuilt(PROJECT_ROOT, (l) => banner(l));
    } catch (err) {
      throw new InputError(`rateline serve: the screens could not be built (${String((err as Error).message).split('\n')[0]}); run "npm run build:renderer" to see why.`);
    }
  } else if ((await rendererBuildReason(PROJECT_ROOT)) === 'not built yet') {
    staticDir = null;
  }
  const service = createBenchService({ host: 'web', dataDir, speed: o.speed });
  let host;
  try {
    host = await startWebHost({ service, port: o.port, staticDir });
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'EADDRINUSE') throw new InputError(`rateline serve: port ${o.port} on 127.0.0.1 is in use; give another with --port N (0 picks a free one).`);
    throw new InputError(`rateline serve: cannot listen on 127.0.0.1:${o.port} (${(err as Error).message}).`);
  }
  banner(`Rateline is serving the screens at ${host.url}`);
  banner(`  runs folder: ${dataDir}; default source: the simulated instrument (demo data) at ${o.speed}× speed.`);
  banner('  Only this computer can connect, and only with the token in that address. Ctrl-C stops.');
  return new Promise<number>((resolve) => {
    let closing = false;
    const shut = (): void => {
      if (closing) return;
      closing = true;
      void (async () => {
        await service.dispose().catch(() => undefined);
        await host.close().catch(() => undefined);
        resolve(0);
      })();
    };
    process.once('SIGINT', shut);
    process.once('SIGTERM', shut);
  });
}

export async function run(argv: string[]): Promise<number> {
  const o = parseServeArgs(argv);
  if (o === 'help') {
    console.log(USAGE);
    return 0;
  }
  return serve(o);
}
