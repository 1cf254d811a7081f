/**
 * The app's own scheme, rateline://app/…, serving the built screens from
 * dist/renderer/ with a strict Content-Security-Policy. A custom scheme rather than
 * file:// so the page has one origin of its own that IPC checks can name, and cannot
 * read other local files.
 */
import { readFile } from 'node:fs/promises';
import { extname } from 'node:path';
import { confinedPath } from '../web/staticFiles';
import { APP_HOST } from './ipc';

/** No network at all: the page talks to the service through the preload only. */
export const SHELL_CSP = [
  "default-src 'none'", "script-src 'self'", "style-src 'self'", "img-src 'self' data: blob:", "font-src 'self'",
  "connect-src 'self'", "base-uri 'none'", "form-action 'none'", "frame-ancestors 'none'", "object-src 'none'",
].join('; ');

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8', '.js': 'text/javascript; charset=utf-8', '.css': 'text/css; charset=utf-8',
  '.json': 'application/json', '.svg': 'image/svg+xml', '.png': 'image/png', '.woff2': 'font/woff2', '.map': 'application/json',
};

export type FileReader = (path: string) => Promise<Uint8Array>;

export function appProtocolHandler(rendererDir: string, read: FileReader = (p) => readFile(p)): (request: Request) => Promise<Response> {
  const headers = (type: string): Record<string, string> => ({
    'content-type': type, 'content-security-policy': SHELL_CSP, 'x-content-type-options': 'nosniff', 'cache-control': 'no-store',
  });
  return async (request) => {
    const url = new URL(request.url);
    const file = url.host === APP_HOST && request.method === 'GET' ? confinedPath(rendererDir, url.pathname) : null;
    if (!file) return new Response('not found', { status: 404, headers: headers('text/plain; charset=utf-8') });
    try {
      const body = await read(file);
      return new Response(body as BodyInit, { status: 200, headers: headers(TYPES[extname(file).toLowerCase()] ?? 'application/octet-stream') });
    } catch {
      return new Response('not found', { status: 404, headers: headers('text/plain; charset=utf-8') });
    }
  };
}
