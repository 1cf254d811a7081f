import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { PROJECT_ROOT, type ServeOptions } from './serve';
import { start, type StartDeps } from './start';

const OPTIONS: ServeOptions = { port: 0, dataDir: null, speed: 20, build: true };

function deps(over: Partial<StartDeps>): StartDeps & { calls: string[]; lines: string[] } {
  const calls: string[] = [];
  const lines: string[] = [];
  return {
    calls, lines, root: '/app',
    electronBinary: () => null,
    installRuntime: () => { calls.push('install'); return false; },
    launch: async (b) => { calls.push(`launch:${b}`); return 0; },
    serve: async (o) => { calls.push(`serve:build=${o.build}`); return 0; },
    buildScreens: async () => { calls.push('build'); },
    say: (l) => lines.push(l),
    ...over,
  };
}

describe('rateline start', () => {
  it('launches Electron when the runtime is there', async () => {
    const d = deps({ electronBinary: () => '/app/node_modules/electron/dist/electron' });
    expect(await start(OPTIONS, d)).toBe(0);
    expect(d.calls).toEqual(['build', 'launch:/app/node_modules/electron/dist/electron']);
    expect(d.lines).toEqual([]);
  });

  it('fetches the runtime on first launch, then launches it', async () => {
    let installed = false;
    const d = deps({
      electronBinary: () => (installed ? '/app/electron' : null),
      installRuntime: () => { installed = true; return true; },
    });
    await start(OPTIONS, d);
    expect(d.calls).toEqual(['build', 'launch:/app/electron']);
  });

  it('says so in one line and serves the screens when the runtime cannot be had', async () => {
    const d = deps({});
    await start(OPTIONS, d);
    expect(d.calls).toEqual(['build', 'install', 'serve:build=false']);
    expect(d.lines).toHaveLength(1);
    expect(d.lines[0]).toMatch(/Electron runtime is not installed.*loopback web host/);
  });

  it('falls back to the loopback host as a real process on this machine (no Electron runtime here)', async () => {
    const dataDir = mkdtempSync(join(tmpdir(), 'rateline-start-'));
    // Skip the download so the test behaves the same on a machine with network.
    const child = spawn(process.execPath, [join(PROJECT_ROOT, 'bin', 'rateline.js'), 'start', '--port', '0', '--no-build', '--data-dir', dataDir], {
      cwd: PROJECT_ROOT, env: { ...process.env, ELECTRON_SKIP_BINARY_DOWNLOAD: '1' }, stdio: ['ignore', 'pipe', 'pipe'],
    });
    let out = '';
    child.stdout.on('data', (c: Buffer) => (out += c.toString()));
    child.stderr.on('data', (c: Buffer) => (out += c.toString()));
    const url = await new Promise<string>((resolve, reject) => {
      const t = setTimeout(() => reject(new Error(`no URL printed: ${out}`)), 30_000);
      child.stdout.on('data', () => {
        const m = /http:\/\/127\.0\.0\.1:\d+\/\?token=[\w-]+/.exec(out);
        if (m) { clearTimeout(t); resolve(m[0]); }
      });
    });
    try {
      const lines = out.trim().split('\n');
      expect(lines.filter((l) => /Electron runtime/.test(l))).toHaveLength(1);
      expect(out).not.toMatch(/\bat .*\.js:\d+/); // no stack trace
      const origin = new URL(url).origin;
      expect((await fetch(`${origin}/api/request`, { method: 'POST', body: '{"type":"getState"}' })).status).toBe(403); // no token, no answer
      const state = await fetch(`${origin}/api/request`, { method: 'POST', headers: { 'x-rateline-token': new URL(url).searchParams.get('token')! }, body: '{"type":"getState"}' });
      expect(state.status).toBe(200);
      const body = (await state.json()) as { ok: boolean; value: { dataDir: string; demo: boolean } };
      expect(body.value.dataDir).toBe(dataDir);
      expect(body.value.demo).toBe(true);
    } finally {
      const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
      child.kill('SIGTERM');
      expect(await exited).toBe(0);
      rmSync(dataDir, { recursive: true, force: true });
    }
  });
});
