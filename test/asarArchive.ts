/**
 * A reader of Electron's asar archives, our own, so that the packaging test does not
 * read the archive with the library that wrote it. The format (from memory, as the
 * electron/asar README describes it): two Chromium pickles, then the files' bytes. The
 * first pickle is 8 bytes (payload size 4, then the size of the second pickle); the
 * second holds the header, a JSON string (payload size, string length, the string).
 * File data begins after both pickles; each file in the header has `size` and `offset`
 * (a decimal string) into that data, or `unpacked: true` when it lives in
 * `NAME.asar.unpacked/` beside the archive instead.
 */
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';

export interface AsarFile {
  /** Path inside the archive, `/`-separated, no leading slash. */
  path: string;
  size: number;
  unpacked: boolean;
}

interface HeaderNode {
  files?: Record<string, HeaderNode>;
  size?: number;
  offset?: string;
  unpacked?: boolean;
  link?: string;
}

export interface AsarArchive {
  files: AsarFile[];
  /** The bytes of one file, from the archive or from the unpacked folder beside it. */
  read(path: string): Buffer;
  /** Writes every file out under `dir`, as the packaged app would see them. */
  extractTo(dir: string): void;
}

export function openAsar(archivePath: string): AsarArchive {
  const bytes = readFileSync(archivePath);
  if (bytes.length < 16 || bytes.readUInt32LE(0) !== 4) throw new Error(`${archivePath} is not an asar archive (no size pickle at its start).`);
  const headerPickleSize = bytes.readUInt32LE(4);
  const headerLength = bytes.readInt32LE(12);
  const header = JSON.parse(bytes.subarray(16, 16 + headerLength).toString('utf8')) as HeaderNode;
  const dataStart = 8 + headerPickleSize;
  const entries = new Map<string, HeaderNode>();
  const walk = (node: HeaderNode, prefix: string): void => {
    for (const [name, child] of Object.entries(node.files ?? {})) {
      const path = prefix ? `${prefix}/${name}` : name;
      if (child.files) walk(child, path);
      else if (child.link === undefined) entries.set(path, child);
    }
  };
  walk(header, '');
  const read = (path: string): Buffer => {
    const e = entries.get(path);
    if (!e) throw new Error(`${path} is not in ${archivePath}.`);
    if (e.unpacked) return readFileSync(join(`${archivePath}.unpacked`, ...path.split('/')));
    const start = dataStart + Number(e.offset);
    return bytes.subarray(start, start + (e.size ?? 0));
  };
  return {
    files: [...entries].map(([path, e]) => ({ path, size: e.size ?? 0, unpacked: e.unpacked === true })),
    read,
    extractTo(dir) {
      for (const path of entries.keys()) {
        const out = join(dir, ...path.split('/'));
        mkdirSync(dirname(out), { recursive: true });
        writeFileSync(out, read(path));
      }
    },
  };
}
