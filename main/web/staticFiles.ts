/**
 * The built screens served as files, confined to their folder: the request path is
 * decoded, normalised and checked to stay inside it, so `..` or an encoded slash cannot
 * reach anything else on disk; and the file's real path (every symbolic link followed)
 * must be inside the folder's real path too, so a link placed in the build folder cannot
 * hand out a file from elsewhere.
 */
import { createReadStream } from 'node:fs';
import { realpath, stat } from 'node:fs/promises';
import type { ServerResponse } from 'node:http';
import { extname, resolve, sep } from 'node:path';

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.mjs': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.ico': 'image/x-icon',
  '.woff2': 'font/woff2',
  '.map': 'application/json; charset=utf-8',
  '.txt': 'text/plain; charset=utf-8',
};

/** The file a request path names inside `root`, or null when it would leave the folder. */
export function confinedPath(root: string, pathname: string): string | null {
  let decoded: string;
  try {
    decoded = decodeURIComponent(pathname);
  } catch {
    return null;
  }
  if (decoded.includes('\0') || decoded.includes('\\')) return null;
  const rel = decoded === '/' || decoded === '' ? 'index.html' : decoded.replace(/^\/+/, '');
  const base = resolve(root);
  const full = resolve(base, rel);
  return full === base || full.startsWith(base + sep) ? full : null;
}

export async function serveStatic(
  root: string | null, pathname: string, headOnly: boolean, res: ServerResponse,
  refuse: (res: ServerResponse, status: number, text: string) => void,
): Promise<void> {
  if (!root) return refuse(res, 503, 'the screens are not built; run "npm run build:renderer" and start again.');
  const named = confinedPath(root, pathname);
  if (!named) return refuse(res, 404, 'not found.');
  try {
    const realRoot = await realpath(root);
    const file = await realpath(named);
    if (!file.startsWith(realRoot + sep)) return refuse(res, 404, 'not found.');
    const s = await stat(file);
    if (!s.isFile()) return refuse(res, 404, 'not found.');
    res.writeHead(200, {
      'content-type': TYPES[extname(file).toLowerCase()] ?? 'application/octet-stream',
      'content-length': s.size,
      'cache-control': 'no-store',
    });
    if (headOnly) return void res.end();
    createReadStream(file).on('error', () => res.destroy()).pipe(res);
  } catch {
    refuse(res, 404, 'not found.');
  }
}
