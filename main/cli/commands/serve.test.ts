import { createServer } from 'node:net';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { InputError } from '../common/cliErrors';
import { parseServeArgs, serve } from './serve';

describe('rateline serve options', () => {
  it('reads port, runs folder, speed and --no-build', () => {
    expect(parseServeArgs(['--port', '0', '--data-dir', '/tmp/r', '--speed', '50', '--no-build'])).toEqual({ port: 0, dataDir: '/tmp/r', speed: 50, build: false });
    expect(parseServeArgs(['--help'])).toBe('help');
  });

  it('refuses bad options in one line that says what to do', () => {
    for (const argv of [['--port', '70000'], ['--port', 'x'], ['--speed', '0'], ['--speed', 'fast'], ['--port'], ['--colour', 'blue']]) {
      let err: unknown = null;
      try { parseServeArgs(argv); } catch (e) { err = e; }
      expect(err, argv.join(' ')).toBeInstanceOf(InputError);
      expect((err as Error).message).toMatch(/^rateline serve: [^\n]+$/);
    }
  });

  it('says in one line when the port is taken', async () => {
    const blocker = createServer();
    await new Promise<void>((r) => blocker.listen(0, '127.0.0.1', () => r()));
    const port = (blocker.address() as { port: number }).port;
    const dir = mkdtempSync(join(tmpdir(), 'rateline-serve-'));
    try {
      await expect(serve({ port, dataDir: dir, speed: 20, build: false }, () => undefined)).rejects.toThrow(
        new RegExp(`^rateline serve: port ${port} on 127\\.0\\.0\\.1 is in use; give another with --port N`),
      );
    } finally {
      blocker.close();
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
