/**
 * The real `rateline serve` as a child process for the browser tests: a fresh runs
 * folder, a free port, and the address (token included) read from what it prints.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { join } from 'node:path';

export const ROOT = join(import.meta.dirname, '..', '..');

export interface ServeChild {
  url: string;
  child: ChildProcess;
  output(): string;
  stop(): Promise<number | null>;
}

export async function startServe(args: string[], timeout_ms = 90_000): Promise<ServeChild> {
  const child = spawn(process.execPath, [join(ROOT, 'bin', 'rateline.js'), 'serve', '--port', '0', ...args], {
    cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'], env: { ...process.env, FORCE_COLOR: '0' },
  });
  let out = '';
  child.stdout!.on('data', (d) => { out += String(d); });
  child.stderr!.on('data', (d) => { out += String(d); });
  const url = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`rateline serve printed no address within ${timeout_ms} ms:\n${out}`)), timeout_ms);
    const look = () => {
      const m = /(http:\/\/127\.0\.0\.1:\d+\/\?token=[\w-]+)/.exec(out);
      if (m) { clearTimeout(timer); resolve(m[1]!); }
    };
    child.stdout!.on('data', look);
    child.on('exit', (code) => { clearTimeout(timer); reject(new Error(`rateline serve exited (${code}) before serving:\n${out}`)); });
  });
  return {
    url,
    child,
    output: () => out,
    stop: () => new Promise((resolve) => {
      if (child.exitCode !== null) return resolve(child.exitCode);
      child.once('exit', (code) => resolve(code));
      child.kill('SIGTERM');
      setTimeout(() => { if (child.exitCode === null) child.kill('SIGKILL'); }, 10_000).unref();
    }),
  };
}
