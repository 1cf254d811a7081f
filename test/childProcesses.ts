/**
 * Child processes for the tests that run the real thing (socat, `rateline record`,
 * `rateline emulate`): started into a group that the test file stops as a whole in its
 * afterAll, so that no child outlives its test.
 */
import { spawn, type ChildProcess } from 'node:child_process';

export class ChildGroup {
  private readonly started: ChildProcess[] = [];

  constructor(private readonly cwd: string) {}

  /** Starts `cmd args` with stdout and stderr piped. */
  launch(cmd: string, args: string[]): ChildProcess {
    const p = spawn(cmd, args, { cwd: this.cwd, stdio: ['ignore', 'pipe', 'pipe'] });
    this.started.push(p);
    return p;
  }

  /** SIGTERM to every child still running, newest first, and waits for each to exit. */
  async stopAll(): Promise<void> {
    for (const p of this.started.reverse()) {
      if (p.exitCode === null && p.signalCode === null) {
        p.kill('SIGTERM');
        await exitOf(p);
      }
    }
  }
}

/** The child's exit code (null when a signal ended it). */
export function exitOf(p: ChildProcess): Promise<number | null> {
  return new Promise((resolve) => (p.exitCode !== null || p.signalCode !== null ? resolve(p.exitCode) : p.on('exit', (code) => resolve(code))));
}

/** Resolves once the stream has printed text matching the pattern; rejects after timeout_ms with what it saw. */
export function printed(stream: NodeJS.ReadableStream, pattern: RegExp, what: string, timeout_ms = 20_000): Promise<void> {
  return new Promise((resolve, reject) => {
    let seen = '';
    const timer = setTimeout(() => reject(new Error(`${what} did not happen: ${seen.slice(-500)}`)), timeout_ms);
    stream.on('data', (d: Buffer) => {
      seen += d.toString();
      if (pattern.test(seen)) { clearTimeout(timer); resolve(); }
    });
  });
}

/** A socat pty pair with fixed link names; resolves once socat is copying between them. */
export async function socatPair(group: ChildGroup, devLink: string, hostLink: string): Promise<ChildProcess> {
  const socat = group.launch('socat', ['-d', '-d', `pty,raw,echo=0,link=${devLink}`, `pty,raw,echo=0,link=${hostLink}`]);
  await printed(socat.stderr!, /starting data transfer loop/, 'socat start', 10_000);
  return socat;
}
