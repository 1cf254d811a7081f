/**
 * Why a serial port would not open, said so that the person at the bench can fix it:
 * the ports that do exist, the program holding a busy port, the group that grants access.
 */
import { statSync, readFileSync } from 'node:fs';

export type PortProblem = 'missing' | 'busy' | 'permission' | 'notSerial' | 'other';

export interface PortListing {
  path: string;
  manufacturer?: string | undefined;
  serialNumber?: string | undefined;
}

/** A port could not be opened; the message is one line a user can act on. */
export class SourceOpenError extends Error {
  override readonly name = 'SourceOpenError';
  constructor(readonly problem: PortProblem, message: string) {
    super(message);
  }
}

/** What the operating system's message means. Texts from the native binding on Linux, macOS and Windows, and the mock. */
export function classifyOpenError(err: unknown): PortProblem {
  const e = err as { code?: string; message?: string } | null;
  const text = `${e?.code ?? ''} ${e?.message ?? String(err)}`.toLowerCase();
  if (/eacces|permission denied|access denied|eperm/.test(text)) return 'permission';
  if (/ebusy|cannot lock|is locked|resource busy|temporarily unavailable/.test(text)) return 'busy';
  if (/enoent|no such file|does not exist|not found|file not found|cannot find/.test(text)) return 'missing';
  if (/enotty|inappropriate ioctl|not a typewriter/.test(text)) return 'notSerial';
  return 'other';
}

export function describePorts(ports: readonly PortListing[]): string {
  if (ports.length === 0) return 'no serial ports are present';
  const each = ports.map((p) => {
    const extra = [p.manufacturer, p.serialNumber ? `serial ${p.serialNumber}` : undefined].filter(Boolean).join(', ');
    return extra ? `${p.path} (${extra})` : p.path;
  });
  return `ports present: ${each.join(', ')}`;
}

/** Name of the group that owns a device file (Linux: usually dialout, sometimes uucp), or null. */
export function owningGroup(path: string, groupFile = '/etc/group'): string | null {
  try {
    const gid = statSync(path).gid;
    for (const line of readFileSync(groupFile, 'utf8').split('\n')) {
      const [name, , id] = line.split(':');
      if (name && Number(id) === gid) return name;
    }
    return null;
  } catch {
    return null;
  }
}

export function openFailureMessage(path: string, err: unknown, ports: readonly PortListing[], platform = process.platform, group: string | null = null): SourceOpenError {
  const problem = classifyOpenError(err);
  const listing = describePorts(ports);
  switch (problem) {
    case 'missing':
      return new SourceOpenError(problem, `serial port ${path} not found (${listing}); check the cable, then choose one of these ports.`);
    case 'busy':
      return new SourceOpenError(problem, `serial port ${path} is busy: another program has it open (close that program, or choose another port; ${listing}).`);
    case 'permission': {
      const fix = platform === 'linux'
        ? `join the group that owns it (${group ?? 'usually dialout'}): sudo usermod -aG ${group ?? 'dialout'} $USER, then log out and back in`
        : platform === 'darwin'
          ? 'check that no other user holds it and that your account may use the device'
          : 'check the device permissions or run the program as a user allowed to use the port';
      return new SourceOpenError(problem, `no permission to open serial port ${path}; ${fix}.`);
    }
    case 'notSerial':
      return new SourceOpenError(problem, `${path} is not a serial port (a file or another kind of device); choose the instrument's port (${listing}).`);
    default: {
      const detail = err instanceof Error ? err.message : String(err);
      return new SourceOpenError(problem, `could not open serial port ${path} (${detail.replace(/\s+/g, ' ').slice(0, 160)}); ${listing}.`);
    }
  }
}
