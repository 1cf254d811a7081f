/**
 * The bridge over Electron IPC, main-process side. The window is never trusted: a
 * request is answered only when it comes from the top frame of our own page
 * (rateline://app/), its size is capped, and the bench service parses it with the
 * contract's zod schema before anything acts on it.
 */
import { CHANNELS, LIMITS, type AnyReply } from '../bridge/contract';
import type { BridgeService } from '../webHost';
import type { ElectronApi, FrameLike } from './electronApi';

export const APP_SCHEME = 'rateline';
export const APP_HOST = 'app';
export const APP_URL = `${APP_SCHEME}://${APP_HOST}/index.html`;

/** The top frame of our own page, and nothing else (no iframe, no other scheme or host). */
export function isAppFrame(frame: FrameLike | null): boolean {
  if (!frame || frame.parent !== null) return false;
  let url: URL;
  try {
    url = new URL(frame.url);
  } catch {
    return false;
  }
  return url.protocol === `${APP_SCHEME}:` && url.host === APP_HOST;
}

/** Size of a payload as JSON, or Infinity when it cannot be written as JSON at all. */
function payloadBytes(payload: unknown): number {
  try {
    const s = JSON.stringify(payload);
    return s === undefined ? 0 : Buffer.byteLength(s);
  } catch {
    return Number.POSITIVE_INFINITY;
  }
}

export function registerBridgeIpc(ipcMain: ElectronApi['ipcMain'], service: BridgeService): void {
  ipcMain.handle(CHANNELS.request, async (event, ...args): Promise<AnyReply> => {
    if (!isAppFrame(event.senderFrame)) return { ok: false, error: 'request refused: it did not come from the Rateline window.' };
    if (args.length !== 1) return { ok: false, error: 'request refused: send one request at a time.' };
    if (payloadBytes(args[0]) > LIMITS.maxRequestBytes) {
      return { ok: false, error: `request refused: larger than ${LIMITS.maxRequestBytes} bytes.` };
    }
    return service.handle(args[0]);
  });
}
